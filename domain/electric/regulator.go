package electric

// LinearDissipationW is the heat in a linear regulator: the drop across
// it times the output current, plus its quiescent draw at the input.
func LinearDissipationW(vin, vout, iout, iq float64) float64 {
	return (vin-vout)*iout + vin*iq
}

// JunctionTempC is the die temperature of a part shedding powerW through a
// junction-to-ambient thermal resistance of thetaJA °C/W.
func JunctionTempC(ambientC, powerW, thetaJA float64) float64 {
	return ambientC + powerW*thetaJA
}

// LinearOutputV is what a linear regulator set to outputV delivers from an
// input of vin: it regulates while vin is at least outputV + dropoutV and
// follows vin − dropoutV below that (never below zero).
func LinearOutputV(vin, outputV, dropoutV float64) float64 {
	return max(min(outputV, vin-dropoutV), 0)
}

// SwitchingInputA is the input current of a switching regulator at
// efficiency η (0–1): Vout·Iout / (η·Vin).
func SwitchingInputA(vin, vout, iout, efficiency float64) float64 {
	return vout * iout / (efficiency * vin)
}

// SwitchingLossW is the heat in a switching regulator: input power minus
// output power, Vout·Iout·(1/η − 1).
func SwitchingLossW(vout, iout, efficiency float64) float64 {
	return vout * iout * (1/efficiency - 1)
}
