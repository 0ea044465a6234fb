package review

import (
	"fmt"
	"math/rand/v2"
	"slices"

	"wattshelf/domain"
)

func f64(v float64) *float64 { return &v }
func intp(v int) *int        { return &v }

// randomDesign builds a valid design of n nodes with random but plausible
// values: a source at the root, then drivers, regulators of every
// topology, motors and loads hung from random feeders. Some of them will
// not work (that is the point); all of them pass Validate.
func randomDesign(rng *rand.Rand, n int) domain.Design {
	d := domain.Design{Format: 1, Name: "random", AmbientC: f64(float64(rng.IntN(40) + 10))}
	if rng.IntN(2) == 0 {
		d.TargetRuntimeH = f64(0.5 + rng.Float64()*8)
	}
	chems := []string{"alkaline", "nimh", "liion", "lifepo4", "leadacid"}
	root := domain.Node{ID: "n0"}
	if rng.IntN(3) > 0 {
		root.Type = domain.NodeBattery
		root.Chemistry = chems[rng.IntN(len(chems))]
		root.Series, root.Parallel = intp(1+rng.IntN(12)), intp(1+rng.IntN(3))
		root.CellCapacityMAh = f64(float64(500 + rng.IntN(5000)))
	} else {
		root.Type = domain.NodeSupply
		root.OutputV, root.MaxA = f64(float64(3+rng.IntN(45))), f64(float64(1+rng.IntN(30)))
	}
	d.Nodes = append(d.Nodes, root)
	feeders := []int{0}
	gauges := []string{"28AWG", "26AWG", "24AWG", "22AWG", "20AWG", "18AWG", "16AWG", "14AWG", "0.5mm2", "1.5mm2"}
	for i := 1; i < n; i++ {
		parent := feeders[rng.IntN(len(feeders))]
		nd := domain.Node{ID: fmt.Sprintf("n%d", i)}
		nd.Feed = &domain.Feed{
			From: d.Nodes[parent].ID,
			Wire: &domain.Wire{Gauge: gauges[rng.IntN(len(gauges))], LengthM: 0.05 + rng.Float64()*3},
		}
		if rng.IntN(3) == 0 {
			nd.Feed.Fuse = &domain.Fuse{RatingA: []float64{0.5, 1, 2, 5, 7.5, 10, 20}[rng.IntN(7)],
				Speed: []string{"", "fast", "slow"}[rng.IntN(3)], DistanceFromSourceM: f64(rng.Float64() * 0.5)}
		}
		if rng.IntN(4) == 0 {
			nd.Feed.Connectors = []domain.Connector{{Family: "xt30"}, {RatingA: f64(1 + rng.Float64()*5)}}[:1+rng.IntN(2)]
		}
		switch k := rng.IntN(10); {
		case k < 2:
			nd.Type = domain.NodeDriver
			nd.MaxInputV, nd.ContinuousA = f64(float64(6+rng.IntN(40))), f64(0.5+rng.Float64()*5)
			if rng.IntN(2) == 0 {
				nd.PeakA = f64(*nd.ContinuousA * 2)
			}
			feeders = append(feeders, i)
		case k < 4:
			nd.Type = domain.NodeRegulator
			nd.Topology = domain.Topologies()[rng.IntN(4)]
			nd.OutputV, nd.MaxOutputA = f64(1.8+rng.Float64()*10), f64(0.1+rng.Float64()*3)
			if nd.Topology == domain.TopologyLinear {
				nd.DropoutV, nd.ThetaJACPerW = f64(rng.Float64()*2), f64(20+rng.Float64()*80)
				nd.QuiescentA = f64(rng.Float64() * 0.01)
			} else {
				nd.Efficiency = f64(0.6 + rng.Float64()*0.35)
				if rng.IntN(2) == 0 {
					nd.MinInputV = f64(1 + rng.Float64()*8)
				}
			}
			if rng.IntN(2) == 0 {
				nd.MaxInputV = f64(10 + rng.Float64()*30)
			}
			feeders = append(feeders, i)
		case k < 6:
			nd.Type = domain.NodeMotor
			nd.RatedV = f64(float64(3 + rng.IntN(22)))
			nd.StallA = f64(0.5 + rng.Float64()*8)
			nd.NoLoadA = f64(*nd.StallA * (0.02 + rng.Float64()*0.1))
			nd.Duty = f64(0.05 + rng.Float64()*0.95)
			if rng.IntN(2) == 0 {
				nd.MinV, nd.MaxV = f64(*nd.RatedV*0.4), f64(*nd.RatedV*1.2)
			}
		default:
			nd.Type = domain.NodeLoad
			nd.CurrentA = f64(0.001 + rng.Float64()*2)
			nd.PeakA = f64(*nd.CurrentA * (1 + rng.Float64()*3))
			nd.Critical = rng.IntN(4) == 0
			if rng.IntN(4) > 0 {
				nd.MinV = f64(1 + rng.Float64()*10)
				nd.MaxV = f64(*nd.MinV + 0.5 + rng.Float64()*10)
			}
		}
		d.Nodes = append(d.Nodes, nd)
	}
	return d
}

// benchDesign is a deterministic design of n nodes shaped like a large
// build: a LiFePO4 pack feeding, in groups of ten, a fused buck with three
// loads and a linear regulator (with two loads of its own), and a driver
// with two motors.
func benchDesign(n int) domain.Design {
	d := domain.Design{Format: 1, Name: fmt.Sprintf("bench %d", n), AmbientC: f64(25), TargetRuntimeH: f64(2)}
	d.Nodes = append(d.Nodes, domain.Node{ID: "pack", Type: domain.NodeBattery, Ratings: domain.Ratings{Chemistry: "lifepo4",
		Series: intp(4), Parallel: intp(50), CellCapacityMAh: f64(3000)}})
	add := func(nd domain.Node, from, gauge string, length float64, fused bool) {
		if len(d.Nodes) >= n {
			return
		}
		nd.Feed = &domain.Feed{From: from, Wire: &domain.Wire{Gauge: gauge, LengthM: length}}
		if fused {
			nd.Feed.Fuse = &domain.Fuse{RatingA: 5, Speed: "slow", Family: "blade", DistanceFromSourceM: f64(0.1)}
		}
		d.Nodes = append(d.Nodes, nd)
	}
	for g := 0; len(d.Nodes) < n; g++ {
		id := func(s string) string { return fmt.Sprintf("%s%d", s, g) }
		add(domain.Node{ID: id("buck"), Type: domain.NodeRegulator, Ratings: domain.Ratings{Topology: "buck", OutputV: f64(5), MaxOutputA: f64(3),
			Efficiency: f64(0.88), MinInputV: f64(7)}}, "pack", "20AWG", 0.3, true)
		for k := 0; k < 3; k++ {
			add(domain.Node{ID: id(fmt.Sprintf("sensor%d_", k)), Type: domain.NodeLoad,
				Critical: k == 0, Ratings: domain.Ratings{MinV: f64(4.5), MaxV: f64(5.5),
					CurrentA: f64(0.05), PeakA: f64(0.1)}}, id("buck"), "24AWG", 0.2, false)
		}
		add(domain.Node{ID: id("ldo"), Type: domain.NodeRegulator, Ratings: domain.Ratings{Topology: "linear", OutputV: f64(3.3), MaxOutputA: f64(0.5),
			DropoutV: f64(0.3), ThetaJACPerW: f64(60), QuiescentA: f64(0.002)}}, id("buck"), "24AWG", 0.1, false)
		for k := 0; k < 2; k++ {
			add(domain.Node{ID: id(fmt.Sprintf("chip%d_", k)), Type: domain.NodeLoad, Ratings: domain.Ratings{MinV: f64(3), MaxV: f64(3.6),
				CurrentA: f64(0.02)}}, id("ldo"), "26AWG", 0.1, false)
		}
		add(domain.Node{ID: id("drv"), Type: domain.NodeDriver, Ratings: domain.Ratings{MaxInputV: f64(30), ContinuousA: f64(3), PeakA: f64(8)}},
			"pack", "18AWG", 0.4, true)
		for k := 0; k < 2; k++ {
			add(domain.Node{ID: id(fmt.Sprintf("motor%d_", k)), Type: domain.NodeMotor,
				Duty: f64(0.3), Ratings: domain.Ratings{RatedV: f64(12), NoLoadA: f64(0.1),
					StallA: f64(2.5), MinV: f64(6), MaxV: f64(15)}}, id("drv"), "20AWG", 0.5, false)
		}
	}
	return d
}

// brokenDesign is d (the load harness's design) with a fault in each
// kind of part: a thin, long lamp feed with a fast fuse too big for it,
// an overloaded 3.3 V regulator that runs hot from a full pack, a driver
// rated below its motors, an XT30 pair carrying the drives past its
// rating, and a runtime target the pack cannot meet.
func brokenDesign(d domain.Design) domain.Design {
	d.Nodes = slices.Clone(d.Nodes)
	d.TargetRuntimeH = f64(6)
	for i := range d.Nodes {
		n := &d.Nodes[i]
		switch n.ID {
		case "lamp":
			n.CurrentA = f64(3)
			n.Feed = &domain.Feed{From: "pack", Wire: &domain.Wire{Gauge: "26AWG", LengthM: 2},
				Fuse: &domain.Fuse{RatingA: 20, Speed: "fast", Family: "blade", DistanceFromSourceM: f64(0.4)}}
		case "ldo3v3":
			n.Feed = &domain.Feed{From: "pack", Wire: &domain.Wire{Gauge: "22AWG", LengthM: 0.2},
				Fuse: &domain.Fuse{RatingA: 2, Family: "blade", DistanceFromSourceM: f64(0.1)}}
			n.MaxOutputA, n.ThetaJACPerW = f64(0.05), f64(250)
		case "drive1":
			n.ContinuousA, n.PeakA = f64(1), f64(2)
		case "drive2":
			f := *n.Feed
			f.Connectors = []domain.Connector{{Family: "jst-ph-2mm", RatingA: f64(1)}}
			n.Feed = &f
		}
	}
	return d
}
