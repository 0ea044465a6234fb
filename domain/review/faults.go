package review

// faultNeeds are what the fault checks (prospective short-circuit current,
// locked rotor, ampacity at temperature) need from a limits set.
func faultNeeds() []limitsNeed { return nil }
