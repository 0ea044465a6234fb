package electric

import "testing"

func TestLinearRegulator(t *testing.T) {
	// A 5 V linear regulator fed 12 V delivering 0.5 A with 5 mA quiescent
	// current: (12 − 5)·0.5 + 12·0.005 = 3.56 W (energy balance: what goes
	// in and does not come out is heat; common practice).
	p := LinearDissipationW(12, 5, 0.5, 0.005)
	within(t, "dissipation", p, 3.56, 1e-12)
	// In a TO-220 in free air (θJA about 50 °C/W, from memory of common
	// datasheets) at 25 °C that is 25 + 3.56·50 = 203 °C: far over a 125 °C
	// junction limit.
	within(t, "junction", JunctionTempC(25, p, 50), 203, 1e-12)

	cases := []struct {
		vin, want float64
	}{
		{12, 5}, {7, 5}, {6.5, 4.5}, {5, 3}, {1, 0},
	}
	for _, c := range cases {
		// A 5 V regulator with 2 V dropout follows Vin − 2 V below 7 V.
		within(t, "output from "+formatSizes([]float64{c.vin})+" V", LinearOutputV(c.vin, 5, 2), c.want, 1e-12)
	}
}

func TestSwitchingRegulator(t *testing.T) {
	// 5 V at 2 A from 12 V at 90 % efficiency: input power 10/0.9 W, so
	// 0.926 A in and 1.11 W lost (energy balance; common practice).
	within(t, "input current", SwitchingInputA(12, 5, 2, 0.9), 10/0.9/12, 1e-12)
	within(t, "loss", SwitchingLossW(5, 2, 0.9), 10/0.9-10, 1e-12)
	// Input power equals output plus loss at every input voltage.
	for _, vin := range []float64{3, 7.4, 12, 24} {
		in := vin * SwitchingInputA(vin, 5, 2, 0.85)
		within(t, "power balance", in, 10+SwitchingLossW(5, 2, 0.85), 1e-12)
	}
}
