package domain

// RatedVoltageTolerance is how far from its rated (or nominal) voltage a
// part known only by that voltage is taken to run: ±10 %, the usual
// allowance for DC motors and small DC devices (common practice).
const RatedVoltageTolerance = 0.10
