package review

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// The runtime entry carries the pack as resolved and every load's brownout
// voltage, worked by hand (conventions at the top of checks_test.go).
func TestRuntimeCarriesPackAndBrownouts(t *testing.T) {
	// Each load draws 1 A over a 0.01 Ω feed, so it sees the pack voltage
	// less 0.01 V: it browns out when the pack falls to min_v + 0.01 V.
	onPack := func(id string, minV string) string {
		return `{"id": "` + id + `", "type": "load", "current_a": 1, "min_v": ` + minV + `, ` + feedJS("pack", "1mm2", 0.29, "") + `}`
	}
	rep := reviewDoc(t, doc("", nimh(10, ""),
		onPack("lamp", "10.5"),   // 10.51 V, between cutoff 10 V and full 14 V
		onPack("fan", "9.98"),    // 9.99 V, below the cutoff: never
		onPack("heater", "14.5"), // 14.51 V, above a full pack: always
		// A linear regulator holding 5 V cannot give 5.5 V at any pack voltage.
		`{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 2, "theta_ja_c_per_w": 50, `+
			feedJS("pack", "1mm2", 0.29, "")+`}`,
		`{"id": "chip", "type": "load", "current_a": 0.1, "min_v": 5.5, `+feedJS("reg", "1mm2", 0.29, "")+`}`,
		`{"id": "clock", "type": "load", "current_a": 0.1, `+feedJS("reg", "1mm2", 0.29, "")+`}`, // no min_v: not listed
	))
	if len(rep.Runtime) != 1 {
		t.Fatalf("runtime %+v, want one battery", rep.Runtime)
	}
	rt := rep.Runtime[0]

	// NiMH 10S × 1P of 2000 mAh: 2 Ah; 10 × 1.4 = 14 V full, 10 × 1.2 =
	// 12 V nominal, 10 × 1.0 = 10 V cutoff (NiMH defaults: IEC 61951-2 for
	// the nominal, common practice for the rest).
	pk := rt.Pack
	if pk.Chemistry != "nimh" || pk.Series != 10 || pk.Parallel != 1 || !near(pk.CapacityAh, 2) ||
		!near(pk.FullV, 14) || !near(pk.NominalV, 12) || !near(pk.CutoffV, 10) || !near(pk.FullSOC, 1) {
		t.Errorf("pack facts %+v, want nimh 10S1P 2 Ah, 14/12/10 V, full at SOC 1", pk)
	}
	// The stored NiMH curve (from memory) has 12 points from (0, 1.00 V)
	// to (1, 1.40 V); (0.05, 1.08 V) is 10.8 V for ten cells.
	if len(pk.Curve) != 12 || !near(pk.Curve[0].PackV, 10) || !near(pk.Curve[1].SOC, 0.05) ||
		!near(pk.Curve[1].PackV, 10.8) || !near(pk.Curve[11].SOC, 1) || !near(pk.Curve[11].PackV, 14) {
		t.Errorf("pack curve %+v", pk.Curve)
	}

	// Highest voltage first. lamp: 10.51 V is 1.051 V a cell, between
	// (0, 1.00 V) and (0.05, 1.08 V): SOC 0.05 × 0.051/0.08 = 0.031875.
	want := []struct {
		node, outcome string
		packV, soc    float64 // NaN: absent
	}{
		{"chip", BrownoutAlways, math.NaN(), math.NaN()},
		{"heater", BrownoutAlways, 14.51, math.NaN()},
		{"lamp", BrownoutPartway, 10.51, 0.031875},
		{"fan", BrownoutNever, 9.99, math.NaN()},
	}
	if len(rt.Brownouts) != len(want) {
		t.Fatalf("brownouts %+v, want %d", rt.Brownouts, len(want))
	}
	for k, w := range want {
		b := rt.Brownouts[k]
		if b.Node != w.node || b.Outcome != w.outcome || !optNear(b.PackV, w.packV) || !optNear(b.SOC, w.soc) {
			t.Errorf("brownout %d: %s %s pack_v %v soc %v; want %s %s %g %g",
				k, b.Node, b.Outcome, deref(b.PackV), deref(b.SOC), w.node, w.outcome, w.packV, w.soc)
		}
	}
	// The runtime ends at lamp's brownout: 1 − 0.031875 of the charge.
	if !strings.HasPrefix(rt.LimitedBy, "brownout of lamp at 10.5 V") || !near(rt.UsableShare, 1-0.031875) {
		t.Errorf("limited by %q, usable %g", rt.LimitedBy, rt.UsableShare)
	}
}

// A cell_full_v below the top of the curve starts the usable charge lower.
func TestRuntimePackWithOverriddenFullVoltage(t *testing.T) {
	// 1.3 V a cell on the NiMH curve, between (0.9, 1.28 V) and
	// (1, 1.40 V): SOC 0.9 + 0.1 × 0.02/0.12 = 0.916667.
	rep := reviewDoc(t, doc("", nimh(10, `, "cell_full_v": 1.3`),
		`{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("pack", "1mm2", 0.29, "")+`}`))
	pk := rep.Runtime[0].Pack
	if !near(pk.FullV, 13) || math.Abs(pk.FullSOC-(0.9+0.1*0.02/0.12)) > 1e-6 {
		t.Errorf("full %g V at SOC %g, want 13 V at 0.916667", pk.FullV, pk.FullSOC)
	}
	if len(rep.Runtime[0].Brownouts) != 0 {
		t.Errorf("a load without min_v is listed: %+v", rep.Runtime[0].Brownouts)
	}
	// No brownout: usable from SOC 0.916667 down to the cutoff at SOC 0.
	if !near(rep.Runtime[0].UsableShare, pk.FullSOC) {
		t.Errorf("usable %g, want %g", rep.Runtime[0].UsableShare, pk.FullSOC)
	}
}

// On random designs the brownout list and the runtime tell the same story:
// the first load to brown out partway limits the runtime, at its SOC.
func TestPropertyBrownoutsAgreeWithRuntime(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	limited := 0
	for round := 0; round < 400; round++ {
		rep := mustReview(t, randomDesign(rng, 2+rng.IntN(40)))
		for _, rt := range rep.Runtime {
			var first *Brownout
			for k := range rt.Brownouts {
				b := &rt.Brownouts[k]
				if k > 0 && rt.Brownouts[k-1].PackV != nil && b.PackV != nil && *b.PackV > *rt.Brownouts[k-1].PackV {
					t.Fatalf("brownouts out of order: %+v", rt.Brownouts)
				}
				switch b.Outcome {
				case BrownoutPartway:
					if b.PackV == nil || b.SOC == nil || *b.PackV <= rt.Pack.CutoffV || *b.PackV > rt.Pack.FullV {
						t.Fatalf("partway brownout outside the pack's range: %+v in %+v", b, rt.Pack)
					}
					if first == nil {
						first = b
					}
				case BrownoutNever:
					if b.PackV == nil || *b.PackV > rt.Pack.CutoffV {
						t.Fatalf("never browns out, yet needs %v V above cutoff %g", deref(b.PackV), rt.Pack.CutoffV)
					}
				case BrownoutAlways:
					if b.PackV != nil && *b.PackV <= rt.Pack.FullV {
						t.Fatalf("always browns out, yet needs only %g V of a %g V pack", *b.PackV, rt.Pack.FullV)
					}
				default:
					t.Fatalf("outcome %q", b.Outcome)
				}
			}
			if first == nil {
				if !strings.HasPrefix(rt.LimitedBy, "cell cutoff") {
					t.Fatalf("no partway brownout, but limited by %q", rt.LimitedBy)
				}
				continue
			}
			limited++
			if !strings.HasPrefix(rt.LimitedBy, "brownout of "+first.Node+" at ") {
				t.Fatalf("first partway brownout is %s, but limited by %q", first.Node, rt.LimitedBy)
			}
			if math.Abs(rt.UsableShare-(rt.Pack.FullSOC-*first.SOC)) > 2e-6 {
				t.Fatalf("usable %g, but full SOC %g − brownout SOC %g", rt.UsableShare, rt.Pack.FullSOC, *first.SOC)
			}
		}
	}
	if limited == 0 {
		t.Fatal("no random design was limited by a brownout, so nothing was compared")
	}
}

func optNear(p *float64, want float64) bool {
	if math.IsNaN(want) {
		return p == nil
	}
	return p != nil && near(*p, want)
}

func deref(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}
