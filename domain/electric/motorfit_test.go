package electric

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// Three noisy bench points off the known line speed = 12000 − 2000·I at
// 12 V (stall 6 A, R = 2 Ω, kv = 1000 rpm/V); issue 3 asks for 2 %.
func TestFitMotorRecoversKnownLine(t *testing.T) {
	points := []BenchPoint{
		{VoltageV: 12.02, CurrentA: 0.4, SpeedRPM: 11200 + 60},
		{VoltageV: 11.98, CurrentA: 1.5, SpeedRPM: 9000 - 45},
		{VoltageV: 12.00, CurrentA: 3.0, SpeedRPM: 6000 + 20},
	}
	fit, err := FitMotor(points)
	if err != nil {
		t.Fatal(err)
	}
	within(t, "stall", fit.StallA, 6, 0.02)
	within(t, "resistance", fit.ResistanceOhm, 2, 0.02)
	within(t, "kv", fit.KvRPMPerV, 1000, 0.02)
	within(t, "ideal no-load", fit.IdealNoLoadRPM, 12000, 0.02)
	within(t, "voltage", fit.VoltageV, 12, 1e-12)
	if fit.Points != 3 || !(fit.ResidualRPM > 0 && fit.ResidualRPM < 100) {
		t.Errorf("points %d residual %g, want 3 and a small positive residual", fit.Points, fit.ResidualRPM)
	}
}

// Least squares worked by hand: (1 A, 100), (2 A, 60), (3 A, 40) at 10 V
// give slope −30 rpm/A and intercept 126.667 rpm; the residuals 3.333,
// −6.667, 3.333 have an rms of √(200/9) = 4.714 rpm.
func TestFitMotorHandWorked(t *testing.T) {
	fit, err := FitMotor([]BenchPoint{{10, 1, 100}, {10, 2, 60}, {10, 3, 40}})
	if err != nil {
		t.Fatal(err)
	}
	within(t, "ideal no-load", fit.IdealNoLoadRPM, 380.0/3, 1e-12)
	within(t, "stall", fit.StallA, 380.0/90, 1e-12)
	within(t, "residual", fit.ResidualRPM, math.Sqrt(200.0/9), 1e-12)
	within(t, "resistance", fit.ResistanceOhm, 10/(380.0/90), 1e-12)
	within(t, "kv", fit.KvRPMPerV, 38.0/3, 1e-12)
}

// Points taken off the linear model fit back to the model's constants.
func TestFitMotorAgreesWithModel(t *testing.T) {
	m := Motor{RatedV: 6, NoLoadA: 0.12, NoLoadRPM: 9500, StallA: 3.1}
	var pts []BenchPoint
	for _, i := range []float64{0.12, 0.5, 0.9, 1.6} {
		pts = append(pts, BenchPoint{VoltageV: 6, CurrentA: i, SpeedRPM: m.SpeedRPMAt(i)})
	}
	fit, err := FitMotor(pts)
	if err != nil {
		t.Fatal(err)
	}
	within(t, "stall", fit.StallA, m.StallA, 1e-9)
	within(t, "resistance", fit.ResistanceOhm, m.ResistanceOhm(), 1e-9)
	within(t, "kv", fit.KvRPMPerV, m.KvRPMPerV(), 1e-9)
	if fit.ResidualRPM > 1e-6 {
		t.Errorf("residual %g on exact points", fit.ResidualRPM)
	}
}

func TestFitMotorErrors(t *testing.T) {
	cases := []struct {
		name   string
		points []BenchPoint
		want   error
	}{
		{"none", nil, ErrTooFewCurrents},
		{"one point", []BenchPoint{{12, 0.5, 9000}}, ErrTooFewCurrents},
		{"one current twice", []BenchPoint{{12, 0.5, 9000}, {12, 0.5, 8800}}, ErrTooFewCurrents},
		{"within meter resolution", []BenchPoint{{12, 0.5, 9000}, {12, 0.5004, 8000}}, ErrTooFewCurrents},
		{"speed rises", []BenchPoint{{12, 0.5, 9000}, {12, 1.5, 9500}}, ErrSpeedNotFalling},
		{"speed flat", []BenchPoint{{12, 0.5, 9000}, {12, 1.5, 9000}}, ErrSpeedNotFalling},
		{"all stalled", []BenchPoint{{12, 5, 0}, {12, 6, 0}}, ErrSpeedNotFalling},
		{"two voltages", []BenchPoint{{12, 0.5, 9000}, {6, 1.5, 3000}}, ErrMixedVoltages},
		{"negative current", []BenchPoint{{12, -0.5, 9000}, {12, 1.5, 3000}}, ErrBadPoint},
		{"zero voltage", []BenchPoint{{0, 0.5, 9000}, {0, 1.5, 3000}}, ErrBadPoint},
		{"NaN speed", []BenchPoint{{12, 0.5, math.NaN()}, {12, 1.5, 3000}}, ErrBadPoint},
		{"Inf current", []BenchPoint{{12, math.Inf(1), 9000}, {12, 1.5, 3000}}, ErrBadPoint},
	}
	for _, c := range cases {
		_, err := FitMotor(c.points)
		if !errors.Is(err, c.want) {
			t.Errorf("%s: err %v, want %v", c.name, err, c.want)
			continue
		}
		// Every refusal tells the member what to do next.
		msg := err.Error()
		if !strings.Contains(msg, "measure") && !strings.Contains(msg, "check") && !strings.Contains(msg, "correct") {
			t.Errorf("%s: message %q does not say what to measure next", c.name, msg)
		}
	}
}
