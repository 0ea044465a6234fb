package api

import (
	"fmt"
	"math"
	"net/http"
	"slices"
	"strconv"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// voltageWindowShare groups bench readings taken at "one voltage": a
// supply set to 12 V reads a little lower under load. ±4 % keeps every
// group inside the ±5 % spread electric.FitMotor accepts.
const voltageWindowShare = 0.04

// MotorFitView is the fitted line beside the ratings the component stores,
// so a member can see whether the bench agrees with the label.
type MotorFitView struct {
	ComponentID int64 `json:"component_id"`
	electric.MotorFit
	Stored   StoredMotorRatings `json:"stored"`
	Voltages []VoltageReadings  `json:"voltages"`
}

// StoredMotorRatings are the motor fields of the stored component.
type StoredMotorRatings struct {
	RatedV    *float64 `json:"rated_v,omitempty"`
	NoLoadA   *float64 `json:"no_load_a,omitempty"`
	NoLoadRPM *float64 `json:"no_load_rpm,omitempty"`
	StallA    *float64 `json:"stall_a,omitempty"`
	RunningA  *float64 `json:"running_a,omitempty"`
}

// VoltageReadings says how many readings with a speed were taken near one
// voltage, so a client can ask for a fit at another.
type VoltageReadings struct {
	VoltageV float64 `json:"voltage_v"`
	Points   int     `json:"points"`
}

// fitDigits is how many significant digits a fitted figure keeps: bench
// meters read three or four, so more would be noise (and a mean such as
// 5.000000000000001 V would show its floating-point tail).
const fitDigits = 4

// significant rounds x to n significant decimal digits.
func significant(x float64, n int) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', n, 64), 64)
	if err != nil { // FormatFloat always writes a number ParseFloat reads
		return x
	}
	return r
}

// atPlaceOf rounds x to the last decimal place that like keeps with n
// significant digits.
func atPlaceOf(x, like float64, n int) float64 {
	if like == 0 || math.IsInf(like, 0) || math.IsNaN(like) {
		return x
	}
	step := math.Pow(10, math.Floor(math.Log10(math.Abs(like)))-float64(n-1))
	return math.Round(x/step) * step
}

func (s *server) motorFit(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	var want float64
	if v := c.QueryParam("voltage_v"); v != "" {
		want, err = strconv.ParseFloat(v, 64)
		if err != nil || !(want > 0 && want <= domain.MaxVoltageV) {
			return queryProblem("/voltage_v", "must be a voltage above 0 and at most %d", domain.MaxVoltageV)
		}
	}
	ctx := c.Request().Context()
	comp, err := s.store.Component(ctx, id)
	if err != nil {
		return err
	}
	measured, err := s.store.Measurements(ctx, id)
	if err != nil {
		return err
	}
	var points []electric.BenchPoint
	for _, m := range measured {
		if m.SpeedRPM != nil {
			points = append(points, electric.BenchPoint{VoltageV: m.VoltageV, CurrentA: m.CurrentA, SpeedRPM: *m.SpeedRPM})
		}
	}
	groups := groupByVoltage(points)
	var chosen []electric.BenchPoint
	if want > 0 {
		for _, p := range points {
			if math.Abs(p.VoltageV-want) <= voltageWindowShare*want {
				chosen = append(chosen, p)
			}
		}
		if len(chosen) == 0 {
			return newProblem("motor-fit-needs-readings", "component %d has no readings with a speed within %g %% of %g V; "+
				"measure current and speed at two or more loads at that voltage, or ask for one of %s",
				id, voltageWindowShare*100, want, describeVoltages(groups))
		}
	} else if len(groups) > 0 {
		best := groups[0]
		for _, g := range groups[1:] {
			if len(g) >= len(best) { // ties go to the higher voltage
				best = g
			}
		}
		chosen = best
	}
	fit, err := electric.FitMotor(chosen)
	if err != nil {
		return newProblem("motor-fit-needs-readings", "component %d: %v", id, err)
	}
	// The residual is in the speed's unit and keeps the speed's last
	// decimal place, so a perfect fit's 1e-13 rpm reads 0.
	fit.ResidualRPM = significant(atPlaceOf(fit.ResidualRPM, fit.IdealNoLoadRPM, fitDigits), fitDigits)
	for _, x := range []*float64{&fit.VoltageV, &fit.StallA, &fit.ResistanceOhm, &fit.KvRPMPerV, &fit.IdealNoLoadRPM} {
		*x = significant(*x, fitDigits)
	}
	return c.JSON(http.StatusOK, MotorFitView{
		ComponentID: id,
		MotorFit:    fit,
		Stored: StoredMotorRatings{
			RatedV: comp.RatedV, NoLoadA: comp.NoLoadA, NoLoadRPM: comp.NoLoadRPM,
			StallA: comp.StallA, RunningA: comp.RunningA,
		},
		Voltages: summarizeVoltages(groups),
	})
}

// groupByVoltage sorts readings by voltage and starts a new group where a
// reading is more than twice the window above the group's lowest.
func groupByVoltage(points []electric.BenchPoint) [][]electric.BenchPoint {
	sorted := slices.Clone(points)
	slices.SortStableFunc(sorted, func(a, b electric.BenchPoint) int {
		switch {
		case a.VoltageV < b.VoltageV:
			return -1
		case a.VoltageV > b.VoltageV:
			return 1
		}
		return 0
	})
	var groups [][]electric.BenchPoint
	for _, p := range sorted {
		if n := len(groups); n > 0 && p.VoltageV <= groups[n-1][0].VoltageV*(1+2*voltageWindowShare) {
			groups[n-1] = append(groups[n-1], p)
			continue
		}
		groups = append(groups, []electric.BenchPoint{p})
	}
	return groups
}

func summarizeVoltages(groups [][]electric.BenchPoint) []VoltageReadings {
	out := make([]VoltageReadings, 0, len(groups))
	for _, g := range groups {
		var sum float64
		for _, p := range g {
			sum += p.VoltageV
		}
		out = append(out, VoltageReadings{VoltageV: math.Round(sum/float64(len(g))*1000) / 1000, Points: len(g)})
	}
	return out
}

func describeVoltages(groups [][]electric.BenchPoint) string {
	if len(groups) == 0 {
		return "none yet (no readings with a speed)"
	}
	s := ""
	for i, v := range summarizeVoltages(groups) {
		if i > 0 {
			s += ", "
		}
		s += fmt.Sprintf("%g V (%s)", v.VoltageV, domain.CountOf(v.Points, "reading", "readings"))
	}
	return s
}
