package review

import (
	"encoding/json"
	"math/rand/v2"
	"slices"
	"testing"

	"wattshelf/domain"
)

// settled reports whether the solver found an operating point: no
// switching regulator whose feed collapsed. Where there is none, the
// monotonic properties below have nothing to hold for.
func settled(rep Report) bool {
	return !slices.ContainsFunc(rep.Nodes, func(n NodeResult) bool { return n.Collapsed })
}

func mustReview(t *testing.T, d domain.Design) Report {
	t.Helper()
	rep, err := Review(d, DefaultLimits(), 1, nil)
	if err != nil {
		t.Fatalf("review: %v", err)
	}
	return rep
}

func byID(rep Report) map[string]NodeResult {
	m := make(map[string]NodeResult, len(rep.Nodes))
	for _, n := range rep.Nodes {
		m[n.ID] = n
	}
	return m
}

// Adding a load never lowers the run, peak or average current of any node
// above it: drivers and linear regulators add it, switching regulators
// draw more as the extra drop lowers their input, sources deliver it.
func TestPropertyAddingLoadNeverLowersAncestorCurrent(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	tried := 0
	for round := 0; round < 400; round++ {
		d := randomDesign(rng, 2+rng.IntN(30))
		before := mustReview(t, d)
		var feeders []int
		for i, n := range d.Nodes {
			if n.Type != domain.NodeMotor && n.Type != domain.NodeLoad {
				feeders = append(feeders, i)
			}
		}
		parent := d.Nodes[feeders[rng.IntN(len(feeders))]].ID
		d.Nodes = append(d.Nodes, domain.Node{ID: "extra", Type: domain.NodeLoad,
			Duty: f64(0.1 + 0.9*rng.Float64()),
			Feed: &domain.Feed{From: parent, Wire: &domain.Wire{Gauge: "22AWG", LengthM: 0.5}}, Ratings: domain.Ratings{CurrentA: f64(0.01 + rng.Float64())},
		})
		after := mustReview(t, d)
		if !settled(before) || !settled(after) {
			continue
		}
		tried++
		was, now := byID(before), byID(after)
		for id := parent; id != ""; id = now[id].Parent {
			b, a := was[id], now[id]
			const slack = 1e-6 // the report rounds to a millionth
			if a.RunA < b.RunA-slack || a.PeakA < b.PeakA-slack || a.AvgA < b.AvgA-slack {
				t.Fatalf("round %d: adding a load under %s lowered %s: run %g→%g, peak %g→%g, avg %g→%g",
					round, parent, id, b.RunA, a.RunA, b.PeakA, a.PeakA, b.AvgA, a.AvgA)
			}
		}
	}
	if tried < 300 {
		t.Errorf("only %d of 400 random designs had an operating point", tried)
	}
}

// Lengthening a feed never lowers the drop across it.
func TestPropertyLongerFeedNeverLowersDrop(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	tried := 0
	for round := 0; round < 400; round++ {
		d := randomDesign(rng, 2+rng.IntN(30))
		before := mustReview(t, d)
		i := 1 + rng.IntN(len(d.Nodes)-1)
		w := *d.Nodes[i].Feed.Wire
		w.LengthM = min(w.LengthM*(1+rng.Float64()*3), domain.MaxWireLengthM)
		feed := *d.Nodes[i].Feed
		feed.Wire = &w
		d.Nodes[i].Feed = &feed
		after := mustReview(t, d)
		if !settled(before) || !settled(after) {
			continue
		}
		tried++
		id := d.Nodes[i].ID
		b, a := findFeed(before, id), findFeed(after, id)
		if a.DropV < b.DropV-1e-6 {
			t.Fatalf("round %d: lengthening the feed to %s from %g m to %g m lowered its drop from %g V to %g V",
				round, id, b.LengthM, a.LengthM, b.DropV, a.DropV)
		}
	}
	if tried < 300 {
		t.Errorf("only %d of 400 random designs had an operating point", tried)
	}
}

func findFeed(rep Report, id string) FeedResult {
	for _, f := range rep.Feeds {
		if f.Node == id {
			return f
		}
	}
	return FeedResult{}
}

// Every report has a status, counts that add up, a check of every kind
// its nodes call for, and numbers JSON can carry (encoding/json refuses
// NaN and ±Inf).
func TestPropertyReportIsWhole(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for round := 0; round < 500; round++ {
		d := randomDesign(rng, 1+rng.IntN(60))
		rep := mustReview(t, d)
		assertWhole(t, d, rep)
	}
}

func assertWhole(t *testing.T, d domain.Design, rep Report) {
	t.Helper()
	if !slices.Contains([]Status{Pass, Warn, Fail, OutOfScope}, rep.Status) {
		t.Fatalf("status %q", rep.Status)
	}
	if n := rep.Counts.Pass + rep.Counts.Warn + rep.Counts.Fail + rep.Counts.OutOfScope; n != len(rep.Checks) {
		t.Fatalf("counts %+v for %d checks", rep.Counts, len(rep.Checks))
	}
	if _, err := json.Marshal(rep); err != nil {
		t.Fatalf("report does not marshal (NaN or Inf?): %v", err)
	}
	if len(rep.Nodes) != len(d.Nodes) || len(rep.Cautions) == 0 || rep.EngineVersion == "" {
		t.Fatalf("report incomplete: %d nodes for %d, %d cautions", len(rep.Nodes), len(d.Nodes), len(rep.Cautions))
	}
	have := map[string]int{}
	for _, c := range rep.Checks {
		have[c.Check+"@"+c.Node]++
		if c.Message == "" || rep.Rules[c.Check].Basis == "" {
			t.Fatalf("check without message or basis: %+v", c)
		}
	}
	for _, n := range d.Nodes {
		var want []string
		switch n.Type {
		case domain.NodeMotor, domain.NodeLoad:
			want = append(want, CheckVoltageRange)
		case domain.NodeRegulator:
			want = append(want, CheckRegulatorHeadroom, CheckRegulatorCurrent)
		case domain.NodeDriver:
			want = append(want, CheckDriverVoltage, CheckDriverCurrent)
		default:
			want = append(want, CheckSourceCurrent)
		}
		if n.Feed != nil {
			want = append(want, CheckWireAmpacity, CheckWireDrop)
			if n.Feed.Fuse != nil {
				want = append(want, CheckFuseRating)
			}
		}
		for _, w := range want {
			if have[w+"@"+n.ID] == 0 {
				t.Fatalf("no %s check for %s", w, n.ID)
			}
		}
	}
}
