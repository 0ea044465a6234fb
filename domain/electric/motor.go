package electric

import (
	"errors"
	"fmt"
	"math"
)

// Motor is a brushed DC motor described by its rated voltage, its
// no-load current and speed, and its stall current at that voltage. The
// methods use the linear model: a winding resistance R = V/I_stall in
// series with a back-EMF proportional to speed, and a friction torque that
// costs the no-load current.
type Motor struct {
	RatedV    float64
	NoLoadA   float64
	NoLoadRPM float64
	StallA    float64
}

// Validate checks that the numbers describe a motor the model can use.
func (m Motor) Validate() error {
	var errs []error
	if !(m.RatedV > 0 && m.RatedV <= 1000) {
		errs = append(errs, fmt.Errorf("motor: rated voltage %g V is not in (0, 1000]", m.RatedV))
	}
	if !(m.NoLoadA >= 0 && m.NoLoadA < m.StallA && m.StallA <= 1e4) {
		errs = append(errs, fmt.Errorf("motor: want 0 <= no-load current < stall current <= 10 kA, have %g A and %g A", m.NoLoadA, m.StallA))
	}
	if !(m.NoLoadRPM > 0 && m.NoLoadRPM <= 1e6) {
		errs = append(errs, fmt.Errorf("motor: no-load speed %g rpm is not in (0, 1e6]", m.NoLoadRPM))
	}
	return errors.Join(errs...)
}

// ResistanceOhm is the winding resistance, rated voltage over stall current.
func (m Motor) ResistanceOhm() float64 { return m.RatedV / m.StallA }

// backEMFNoLoadV is the back-EMF when running free at rated voltage.
func (m Motor) backEMFNoLoadV() float64 { return m.RatedV - m.NoLoadA*m.ResistanceOhm() }

// KeVPerRadS is the back-EMF constant in V·s/rad.
func (m Motor) KeVPerRadS() float64 { return m.backEMFNoLoadV() / RPMToRadS(m.NoLoadRPM) }

// KtNmPerA is the torque constant; in SI units it equals Ke.
func (m Motor) KtNmPerA() float64 { return m.KeVPerRadS() }

// KvRPMPerV is the speed constant: rpm per volt of back-EMF.
func (m Motor) KvRPMPerV() float64 { return m.NoLoadRPM / m.backEMFNoLoadV() }

// SpeedRPMAt is the speed at which the motor draws currentA at rated
// voltage: it falls linearly from Kv·V at zero current to 0 at stall.
func (m Motor) SpeedRPMAt(currentA float64) float64 {
	return max(m.KvRPMPerV()*(m.RatedV-currentA*m.ResistanceOhm()), 0)
}

// TorqueNmAt is the shaft torque at currentA: Kt × (I − I_no-load).
func (m Motor) TorqueNmAt(currentA float64) float64 {
	return max(m.KtNmPerA()*(currentA-m.NoLoadA), 0)
}

// StallTorqueNm is the shaft torque with the rotor held.
func (m Motor) StallTorqueNm() float64 { return m.TorqueNmAt(m.StallA) }

// MaxEfficiencyA is the current of peak efficiency, √(I_no-load · I_stall).
func (m Motor) MaxEfficiencyA() float64 { return math.Sqrt(m.NoLoadA * m.StallA) }

// OutputPowerW is the mechanical power at currentA (0 outside the range
// from no-load to stall).
func (m Motor) OutputPowerW(currentA float64) float64 {
	return m.TorqueNmAt(currentA) * RPMToRadS(m.SpeedRPMAt(currentA))
}

// EfficiencyAt is output power over electrical input at currentA.
func (m Motor) EfficiencyAt(currentA float64) float64 {
	if !(currentA > 0) {
		return 0
	}
	return m.OutputPowerW(currentA) / (m.RatedV * currentA)
}

// StallAAt is the stall current at supply voltage v: v / R.
func (m Motor) StallAAt(v float64) float64 { return v / m.ResistanceOhm() }

// AtVoltage is the same motor rated at v: same constants and friction, so
// the same no-load current, a stall current scaled with v and the no-load
// speed the back-EMF allows.
func (m Motor) AtVoltage(v float64) Motor {
	r := m.ResistanceOhm()
	return Motor{
		RatedV:    v,
		NoLoadA:   m.NoLoadA,
		NoLoadRPM: m.KvRPMPerV() * (v - m.NoLoadA*r),
		StallA:    v / r,
	}
}

// PWMAverageV is the average voltage of a PWM output at duty (clamped to
// 0–1) from supplyV.
func PWMAverageV(supplyV, duty float64) float64 {
	return supplyV * min(max(duty, 0), 1)
}

// StandardGravity is the conventional value of g (CGPM 1901), which
// defines the gram-force.
const StandardGravity = 9.80665 // m/s²

// Exact lengths of the avoirdupois ounce and the inch (1959 agreement).
const (
	ounceKg = 0.028349523125
	inchM   = 0.0254
)

// GfCmToMNm converts gram-force centimetres to millinewton metres.
func GfCmToMNm(gfcm float64) float64 { return gfcm * StandardGravity * 1e-2 }

// MNmToGfCm converts millinewton metres to gram-force centimetres.
func MNmToGfCm(mnm float64) float64 { return mnm / (StandardGravity * 1e-2) }

// OzInToMNm converts ounce-force inches to millinewton metres.
func OzInToMNm(ozin float64) float64 { return ozin * ounceKg * StandardGravity * inchM * 1e3 }

// MNmToOzIn converts millinewton metres to ounce-force inches.
func MNmToOzIn(mnm float64) float64 { return mnm / (ounceKg * StandardGravity * inchM * 1e3) }

// RPMToRadS converts revolutions per minute to radians per second.
func RPMToRadS(rpm float64) float64 { return rpm * 2 * math.Pi / 60 }

// RadSToRPM converts radians per second to revolutions per minute.
func RadSToRPM(radS float64) float64 { return radS * 60 / (2 * math.Pi) }
