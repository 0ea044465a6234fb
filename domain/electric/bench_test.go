package electric

import "testing"

// Benchmarks of what the review calls for every node or feed of a design.

func BenchmarkParseGauge(b *testing.B) {
	for b.Loop() {
		if _, err := ParseGauge("18AWG"); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkAmpacity(b *testing.B) {
	tbl := DefaultConductorTable()
	g := mustGauge(b, "4/0AWG") // a late row: the worst case of the lookup
	for b.Loop() {
		if _, err := tbl.Ampacity(g, 105, 3); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkVoltageDrop(b *testing.B) {
	g := mustGauge(b, "22AWG")
	for b.Loop() {
		VoltageDropV(g, 0.2, 25, 1.2)
	}
}

func BenchmarkPackUsableShareAndRuntime(b *testing.B) {
	p := Pack{Chem: chem(b, "liion"), Series: 3, Parallel: 2, CellCapacityAh: 2.5}
	for b.Loop() {
		p.RuntimeH(1.3, p.UsableShare(10.4))
	}
}

func BenchmarkPeukertRuntime(b *testing.B) {
	p := Pack{Chem: chem(b, "leadacid"), Series: 6, Parallel: 1, CellCapacityAh: 7}
	for b.Loop() {
		p.RuntimeH(1.3, p.UsableShare(11))
	}
}

func BenchmarkLinearRegulatorThermal(b *testing.B) {
	for b.Loop() {
		JunctionTempC(25, LinearDissipationW(14, 5, 0.3, 0.005), 50)
	}
}

func BenchmarkSwitchingInput(b *testing.B) {
	for b.Loop() {
		SwitchingInputA(10, 5, 2, 0.85)
	}
}

func BenchmarkNextStandardRating(b *testing.B) {
	ratings := DefaultFuseFamilies()[2].RatingsA
	for b.Loop() {
		NextStandardRating(ratings, 2.7)
	}
}

func BenchmarkMotorNode(b *testing.B) {
	m := Motor{RatedV: 12, NoLoadA: 0.4, NoLoadRPM: 6000, StallA: 5}
	for b.Loop() {
		m.StallAAt(14)
		m.MaxEfficiencyA()
	}
}

func BenchmarkFitMotor(b *testing.B) {
	pts := []BenchPoint{{12, 0.4, 11260}, {12, 1.5, 8955}, {12, 3, 6020}, {12, 2.2, 7700}, {12, 0.9, 10100}}
	for b.Loop() {
		if _, err := FitMotor(pts); err != nil {
			b.Fatal(err)
		}
	}
}
