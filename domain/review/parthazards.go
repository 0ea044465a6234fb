package review

// partHazardNeeds are what the part hazard checks (switching-regulator heat,
// lithium protection, reverse polarity, energy back into a rail) need from
// a limits set.
func partHazardNeeds() []limitsNeed { return nil }
