package review

import (
	"math/rand/v2"
	"testing"

	jsonpatch "github.com/evanphx/json-patch/v5"
	"github.com/go-json-experiment/json"

	"wattshelf/domain"
)

// Propose on generated designs: the proposed design validates, its review
// is never worse than the original's (no pass becomes warn or fail, no warn
// becomes fail; a check the original lacks counts as passed there), it
// clears every finding that came with a remedy, and proposed_status is its
// status. Every remedy's patch applies to the original document (RFC 6902)
// and gives a valid design.
func TestPropertyProposalNeverWorse(t *testing.T) {
	rules, err := Prepare(DefaultLimits(), 1)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(11, 12))
	designs, remedied, offered := 0, 0, 0
	for round := 0; round < 300; round++ {
		d := randomDesign(rng, 2+rng.IntN(40))
		if round%2 == 1 {
			d = withHazards(rng, d)
		}
		prop, err := rules.Propose(mustValidate(t, d), nil)
		if err != nil {
			t.Fatalf("round %d: %v", round, err)
		}
		designs++
		original, err := json.Marshal(d, domain.StrictJSON())
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range prop.Report.Checks {
			if (c.Status == Warn || c.Status == Fail) && len(c.Remedies) == 0 && c.NoRemedy == "" {
				t.Fatalf("round %d: %s of %s has neither a remedy nor a reason", round, c.Check, c.Node)
			}
			for _, r := range c.Remedies {
				offered++
				applyPatch(t, original, r)
			}
		}
		if prop.Proposed == nil {
			continue
		}
		remedied++
		if err := prop.Proposed.Validate(); err != nil {
			t.Fatalf("round %d: the proposed design does not validate: %v", round, err)
		}
		after, err := rules.Review(mustValidate(t, *prop.Proposed), nil)
		if err != nil {
			t.Fatalf("round %d: review of the proposed design: %v", round, err)
		}
		if after.Status != prop.ProposedStatus {
			t.Errorf("round %d: proposed_status %s, its review says %s", round, prop.ProposedStatus, after.Status)
		}
		was := map[checkKey]Check{}
		for _, c := range prop.Report.Checks {
			was[keyOf(c)] = c
		}
		now := map[checkKey]Check{}
		for _, c := range after.Checks {
			now[keyOf(c)] = c
			before, ok := was[keyOf(c)]
			if !ok {
				before.Status = Pass
			}
			if c.Status.Severity() > before.Status.Severity() {
				t.Errorf("round %d: %s of %s went from %s to %s: %s", round, c.Check, c.Node, before.Status, c.Status, c.Message)
			}
		}
		for _, c := range prop.Report.Checks {
			if len(c.Remedies) == 0 {
				continue
			}
			if a, ok := now[keyOf(c)]; ok && a.Status != Pass {
				t.Errorf("round %d: %s of %s had a remedy (%s) but the proposal leaves it %s: %s", round, c.Check, c.Node,
					c.Remedies[0].Change, a.Status, a.Message)
			}
		}
	}
	t.Logf("%d designs, %d with a proposal, %d remedies offered", designs, remedied, offered)
	if remedied < designs/2 {
		t.Errorf("only %d of %d designs got a proposal", remedied, designs)
	}
}

// applyPatch applies a remedy's patch to a design document and decodes
// and validates the result.
func applyPatch(t *testing.T, original []byte, r Remedy) domain.Design {
	t.Helper()
	ops, err := json.Marshal(r.Patch)
	if err != nil {
		t.Fatal(err)
	}
	patch, err := jsonpatch.DecodePatch(ops)
	if err != nil {
		t.Fatalf("%s: the patch is not RFC 6902: %v\n%s", r.Change, err, ops)
	}
	out, err := patch.Apply(original)
	if err != nil {
		t.Fatalf("%s: the patch does not apply: %v\n%s", r.Change, err, ops)
	}
	d, err := domain.DecodeDesign(out)
	if err == nil {
		err = d.Validate()
	}
	if err != nil {
		t.Fatalf("%s: the patched design is not valid: %v\n%s", r.Change, err, ops)
	}
	return d
}

// withHazards gives a generated design what the fault and part-hazard
// checks look at, so their remedies are proven too: warmer air and wires
// in boxes or with cooler insulation, cartridge fuses, lithium packs that
// state a protection circuit, drivers that limit their current, clamps
// and sinking supplies, loads that work either way round.
func withHazards(rng *rand.Rand, d domain.Design) domain.Design {
	d.AmbientC = f64(float64(20 + rng.IntN(60)))
	for i := range d.Nodes {
		n := &d.Nodes[i]
		if n.Type == domain.NodeBattery && (n.Chemistry == "liion" || n.Chemistry == "lifepo4") && rng.IntN(2) == 0 {
			n.ProtectionCellOverV, n.ProtectionCellUnderV = f64(4.25), f64(2.6)
			n.ProtectionTripA = f64(float64(1 + rng.IntN(40)))
		}
		if n.Type == domain.NodeSupply && rng.IntN(3) == 0 {
			n.SinksCurrent = true
		}
		if n.Type == domain.NodeDriver && rng.IntN(2) == 0 {
			n.CurrentLimitA = f64(*n.ContinuousA * (0.5 + rng.Float64()))
		}
		if n.Type == domain.NodeLoad && rng.IntN(3) == 0 {
			n.PolarityFree = true
		}
		if n.Feed == nil {
			continue
		}
		f := *n.Feed
		w := *f.Wire
		w.InsulationC = f64([]float64{60, 75, 90, 105}[rng.IntN(4)])
		w.Enclosed = rng.IntN(3) == 0
		f.Wire = &w
		if f.Fuse != nil && rng.IntN(3) == 0 {
			fu := *f.Fuse
			fu.Family, fu.RatingA = "glass-5x20", []float64{0.5, 1, 2, 5, 10}[rng.IntN(5)]
			f.Fuse = &fu
		}
		n.Feed = &f
	}
	return d
}
