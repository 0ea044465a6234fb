package electric

import (
	"errors"
	"fmt"
	"math"
)

// Errors of FitMotor. Each is wrapped with a message that says what to
// measure next.
var (
	ErrTooFewCurrents  = errors.New("fewer than two distinct currents")
	ErrSpeedNotFalling = errors.New("speed does not fall with current")
	ErrMixedVoltages   = errors.New("points at more than one voltage")
	ErrBadPoint        = errors.New("bench point out of range")
)

// Bench-reading bounds. Currents closer than CurrentResolutionA count as
// the same reading (a hobby meter's last digit on its ampere range).
const (
	CurrentResolutionA = 0.001
	voltageSpreadShare = 0.05 // readings within ±5 % count as one voltage
	maxBenchV          = 1000
	minBenchV          = 0.01
	maxBenchA          = 1e4
	maxBenchRPM        = 1e6
)

// BenchPoint is one bench reading of a motor: supply voltage, current and
// shaft speed. Readings without a speed cannot be fitted; leave them out.
type BenchPoint struct {
	VoltageV float64 `json:"voltage_v"`
	CurrentA float64 `json:"current_a"`
	SpeedRPM float64 `json:"speed_rpm"`
}

// MotorFit is the straight line of speed against current through bench
// points at one voltage, and what it implies for the linear motor model.
type MotorFit struct {
	VoltageV       float64 `json:"voltage_v"`
	StallA         float64 `json:"stall_a"`
	ResistanceOhm  float64 `json:"resistance_ohm"`
	KvRPMPerV      float64 `json:"kv_rpm_per_v"`
	IdealNoLoadRPM float64 `json:"ideal_no_load_rpm"`
	ResidualRPM    float64 `json:"residual_rpm"`
	Points         int     `json:"points"`
}

// FitMotor fits speed = a + b·current by least squares through points
// taken at one voltage V. The zero-current speed a is the ideal no-load
// speed, the current where speed reaches zero is the stall current, and
// from them R = V / I_stall and kv = a / V. ResidualRPM is the root mean
// square of the speed residuals.
func FitMotor(points []BenchPoint) (MotorFit, error) {
	if len(points) == 0 {
		return MotorFit{}, fmt.Errorf("%w: no bench points with a speed; measure current and speed at two or more loads at one voltage", ErrTooFewCurrents)
	}
	n := float64(len(points))
	var sumV, sumI, sumS float64
	minV, maxV := math.Inf(1), math.Inf(-1)
	minI, maxI := math.Inf(1), math.Inf(-1)
	for i, p := range points {
		if !(p.VoltageV >= minBenchV && p.VoltageV <= maxBenchV) || !(p.CurrentA >= 0 && p.CurrentA <= maxBenchA) || !(p.SpeedRPM >= 0 && p.SpeedRPM <= maxBenchRPM) {
			return MotorFit{}, fmt.Errorf("%w: point %d (%g V, %g A, %g rpm) is outside 0.01-1000 V, 0-10000 A, 0-1e6 rpm; correct or remeasure it", ErrBadPoint, i+1, p.VoltageV, p.CurrentA, p.SpeedRPM)
		}
		sumV += p.VoltageV
		sumI += p.CurrentA
		sumS += p.SpeedRPM
		minV, maxV = min(minV, p.VoltageV), max(maxV, p.VoltageV)
		minI, maxI = min(minI, p.CurrentA), max(maxI, p.CurrentA)
	}
	v, meanI, meanS := sumV/n, sumI/n, sumS/n
	if maxV-minV > 2*voltageSpreadShare*v {
		return MotorFit{}, fmt.Errorf("%w: readings run from %g V to %g V; fit the readings of one supply voltage, or measure at one voltage", ErrMixedVoltages, minV, maxV)
	}
	if maxI-minI < CurrentResolutionA {
		which := fmt.Sprintf("all %d readings are", len(points))
		if len(points) == 1 {
			which = "the only reading is"
		}
		return MotorFit{}, fmt.Errorf("%w: %s at %g A; measure again at a different load, e.g. running free and with the shaft braked by hand", ErrTooFewCurrents, which, meanI)
	}
	var sxx, sxy float64
	for _, p := range points {
		dx := p.CurrentA - meanI
		sxx += dx * dx
		sxy += dx * (p.SpeedRPM - meanS)
	}
	slope := sxy / sxx
	if !(slope < 0) {
		return MotorFit{}, fmt.Errorf("%w: the best line through the readings does not fall as current rises; check the speed readings and add one at a clearly heavier load", ErrSpeedNotFalling)
	}
	intercept := meanS - slope*meanI
	stall := -intercept / slope
	if !(stall >= CurrentResolutionA && stall <= maxBenchA) {
		return MotorFit{}, fmt.Errorf("%w: the line reaches zero speed at %g A, which no motor on a bench draws; check the speed readings and add one at a clearly heavier load", ErrSpeedNotFalling, stall)
	}
	var sq float64
	for _, p := range points {
		d := p.SpeedRPM - (intercept + slope*p.CurrentA)
		sq += d * d
	}
	return MotorFit{
		VoltageV:       v,
		StallA:         stall,
		ResistanceOhm:  v / stall,
		KvRPMPerV:      intercept / v,
		IdealNoLoadRPM: intercept,
		ResidualRPM:    math.Sqrt(sq / n),
		Points:         len(points),
	}, nil
}
