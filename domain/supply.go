package domain

// RatedVoltageTolerance is how far from its rated (or nominal) voltage a
// part known only by that voltage is taken to run: ±10 %, the usual
// allowance for DC motors and small DC devices (common practice).
const RatedVoltageTolerance = 0.10

// SupplyWindow is the range of supply voltages a part runs on, as the
// shelf's fits_v filter reads it: its own min_v/max_v, else a regulator's
// or driver's input window; an end left out comes from the rated (else
// nominal) voltage and RatedVoltageTolerance; a low end still unknown is
// 0 V, as a lower voltage underpowers a part but does not harm it. A part
// whose high end stays unknown has no window: a connector's, fuse's or
// wire's rating_v is what it can insulate, not a supply it runs on.
// domain/store's fits_v query holds the same rule in SQL.
func (e Electrical) SupplyWindow() (low, high float64, ok bool) {
	first := func(vs ...*float64) *float64 {
		for _, v := range vs {
			if v != nil {
				return v
			}
		}
		return nil
	}
	lo, hi, ref := first(e.MinV, e.MinInputV), first(e.MaxV, e.MaxInputV), first(e.RatedV, e.NominalV)
	switch {
	case hi != nil:
		high = *hi
	case ref != nil:
		high = *ref * (1 + RatedVoltageTolerance)
	default:
		return 0, 0, false
	}
	switch {
	case lo != nil:
		low = *lo
	case ref != nil:
		low = *ref * (1 - RatedVoltageTolerance)
	}
	return low, high, true
}
