package electric

import (
	"math"
	"testing"
)

// A worked example, done by hand with the textbook linear model of a
// permanent-magnet DC motor (from memory): 12 V, 1 A and 3000 rpm running
// free, 24 A stalled.
//
//	R      = 12 / 24                    = 0.5 Ω
//	E0     = 12 − 1·0.5                 = 11.5 V at 3000 rpm = 314.159 rad/s
//	Ke=Kt  = 11.5 / 314.159             = 0.036606 V·s/rad
//	kv     = 3000 / 11.5                = 260.87 rpm/V
//	T_s    = Kt·(24 − 1)                = 0.84193 N·m
//	I_ηmax = √(1·24)                    = 4.8990 A
//	η_max  = (1 − √(1/24))²             = 0.63342
//	P_max  = T_s · ω0 / 4               = 66.125 W at (1 + 24)/2 = 12.5 A
func TestMotorWorkedExample(t *testing.T) {
	m := Motor{RatedV: 12, NoLoadA: 1, NoLoadRPM: 3000, StallA: 24}
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	const tol = 1e-4
	within(t, "R", m.ResistanceOhm(), 0.5, tol)
	within(t, "Ke", m.KeVPerRadS(), 0.036606, tol)
	within(t, "Kt", m.KtNmPerA(), 0.036606, tol)
	within(t, "kv", m.KvRPMPerV(), 260.87, tol)
	within(t, "stall torque", m.StallTorqueNm(), 0.84193, tol)
	within(t, "max-efficiency current", m.MaxEfficiencyA(), 4.8990, tol)
	within(t, "max efficiency", m.EfficiencyAt(m.MaxEfficiencyA()), 0.63342, tol)
	within(t, "max power", m.OutputPowerW(12.5), 66.125, tol)
	within(t, "speed at 12.5 A", m.SpeedRPMAt(12.5), 1500, tol)
	within(t, "speed at no-load current", m.SpeedRPMAt(1), 3000, 1e-12)
	if p := m.OutputPowerW(0.5); p != 0 {
		t.Errorf("power below the no-load current = %g, want 0", p)
	}
	if e := m.EfficiencyAt(0); e != 0 {
		t.Errorf("efficiency at no current = %g, want 0", e)
	}
	if p := m.OutputPowerW(30); p != 0 {
		t.Errorf("power past stall = %g, want 0", p)
	}
	// DESIGN section 6: the surge at the highest supply voltage is
	// stall_a × V / rated_v.
	within(t, "stall at 14 V", m.StallAAt(14), 28, 1e-12)
}

// Identities of the linear model (common practice), over several motors.
func TestMotorIdentities(t *testing.T) {
	motors := []Motor{
		{RatedV: 12, NoLoadA: 1, NoLoadRPM: 3000, StallA: 24},
		{RatedV: 3, NoLoadA: 0.15, NoLoadRPM: 12000, StallA: 2.2},
		{RatedV: 24, NoLoadA: 0.4, NoLoadRPM: 4200, StallA: 9},
		{RatedV: 6, NoLoadA: 0.05, NoLoadRPM: 18000, StallA: 5},
	}
	for _, m := range motors {
		// Efficiency peaks at √(I0·Is): scan the whole range.
		bestI, bestEff := 0.0, 0.0
		const steps = 200000
		for k := 1; k < steps; k++ {
			i := m.StallA * float64(k) / steps
			if e := m.EfficiencyAt(i); e > bestEff {
				bestI, bestEff = i, e
			}
		}
		within(t, "efficiency peak current", bestI, m.MaxEfficiencyA(), 0.002)
		// ... and equals (1 − √(I0/Is))².
		within(t, "peak efficiency", bestEff, math.Pow(1-math.Sqrt(m.NoLoadA/m.StallA), 2), 1e-6)

		// Output power peaks at half the stall torque.
		bestI, bestP := 0.0, 0.0
		for k := 1; k < steps; k++ {
			i := m.StallA * float64(k) / steps
			if p := m.OutputPowerW(i); p > bestP {
				bestI, bestP = i, p
			}
		}
		within(t, "torque at peak power", m.TorqueNmAt(bestI), m.StallTorqueNm()/2, 0.001)

		// Speed falls linearly with current: equal steps in current give
		// equal steps in speed.
		d1 := m.SpeedRPMAt(0.2*m.StallA) - m.SpeedRPMAt(0.3*m.StallA)
		d2 := m.SpeedRPMAt(0.6*m.StallA) - m.SpeedRPMAt(0.7*m.StallA)
		within(t, "linear speed fall", d2, d1, 1e-9)
		if s := m.SpeedRPMAt(m.StallA); math.Abs(s) > 1e-9 {
			t.Errorf("speed at stall current = %g, want 0", s)
		}

		// In SI units Kt equals Ke, and kv is 1/Ke in rpm per volt.
		within(t, "Kt = Ke", m.KtNmPerA(), m.KeVPerRadS(), 1e-12)
		within(t, "kv·Ke", m.KvRPMPerV()*m.KeVPerRadS(), 60/(2*math.Pi), 1e-12)

		// The same motor at another voltage keeps its constants.
		h := m.AtVoltage(m.RatedV / 2)
		within(t, "R at half voltage", h.ResistanceOhm(), m.ResistanceOhm(), 1e-12)
		within(t, "kv at half voltage", h.KvRPMPerV(), m.KvRPMPerV(), 1e-12)
		within(t, "stall at half voltage", h.StallA, m.StallAAt(m.RatedV/2), 1e-12)
		if h.Validate() != nil {
			t.Errorf("%+v at half voltage is not a valid motor: %v", m, h.Validate())
		}
	}
	if (Motor{RatedV: 12, NoLoadA: 3, NoLoadRPM: 3000, StallA: 2}).Validate() == nil {
		t.Error("a motor whose no-load current exceeds its stall current passed Validate")
	}
}

func TestPWMAverage(t *testing.T) {
	cases := []struct{ supply, duty, want float64 }{
		{12, 0.6, 7.2}, {12, 1, 12}, {12, 0, 0}, {12, 1.5, 12}, {12, -0.2, 0},
	}
	for _, c := range cases {
		within(t, "PWM average", PWMAverageV(c.supply, c.duty), c.want, 1e-12)
	}
}

func TestTorqueAndSpeedUnits(t *testing.T) {
	// Standard gravity 9.80665 m/s² (CGPM 1901) defines the gram-force:
	// 1 gf·cm = 9.80665e-3 N × 1e-2 m = 0.0980665 mN·m.
	within(t, "1 gf·cm", GfCmToMNm(1), 0.0980665, 1e-12)
	// 1 ozf·in = 7.061552e-3 N·m (NIST SP 811 Appendix B, from memory).
	within(t, "1 oz·in", OzInToMNm(1), 7.061552, 1e-6)
	// 1 kgf·cm = 1000 gf·cm = 98.0665 mN·m.
	within(t, "1 kgf·cm", GfCmToMNm(1000), 98.0665, 1e-12)
	within(t, "mN·m to gf·cm and back", GfCmToMNm(MNmToGfCm(12.3)), 12.3, 1e-12)
	within(t, "mN·m to oz·in and back", OzInToMNm(MNmToOzIn(12.3)), 12.3, 1e-12)
	// One revolution per second is 60 rpm and 2π rad/s (definition).
	within(t, "60 rpm", RPMToRadS(60), 2*math.Pi, 1e-12)
	within(t, "2π rad/s", RadSToRPM(2*math.Pi), 60, 1e-12)
}
