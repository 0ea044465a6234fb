package domain

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"testing"
)

// benchDocument is a valid design document of n nodes shaped like a large
// build, written out as a person's editor would: a LiFePO4 pack feeding,
// in groups of ten, a fused buck with three loads and a linear regulator
// with two loads of its own, and a driver with two motors behind a
// connector.
func benchDocument(tb testing.TB, n int) []byte {
	tb.Helper()
	d := Design{Format: 1, Name: fmt.Sprintf("bench %d", n), AmbientC: ptrTo(25.0), TargetRuntimeH: ptrTo(2.0)}
	d.Nodes = append(d.Nodes, Node{ID: "pack", Type: NodeBattery, Ratings: Ratings{Chemistry: "lifepo4",
		Series: ptrTo(4), Parallel: ptrTo(50), CellCapacityMAh: ptrTo(3000.0)}})
	add := func(nd Node, from, gauge string, length float64, fused bool) {
		if len(d.Nodes) >= n {
			return
		}
		nd.Feed = &Feed{From: from, Wire: &Wire{Gauge: gauge, LengthM: length}}
		if fused {
			nd.Feed.Fuse = &Fuse{RatingA: 5, Speed: FuseSlow, Family: "blade", DistanceFromSourceM: ptrTo(0.1)}
		}
		d.Nodes = append(d.Nodes, nd)
	}
	for g := 0; len(d.Nodes) < n; g++ {
		id := func(s string) string { return fmt.Sprintf("%s%d", s, g) }
		add(Node{ID: id("buck"), Type: NodeRegulator, Ratings: Ratings{Topology: TopologyBuck, OutputV: ptrTo(5.0), MaxOutputA: ptrTo(3.0),
			Efficiency: ptrTo(0.88), MinInputV: ptrTo(7.0)}}, "pack", "20AWG", 0.3, true)
		for k := 0; k < 3; k++ {
			add(Node{ID: id(fmt.Sprintf("sensor%d_", k)), Type: NodeLoad,
				Critical: k == 0, Ratings: Ratings{MinV: ptrTo(4.5), MaxV: ptrTo(5.5),
					CurrentA: ptrTo(0.05), PeakA: ptrTo(0.1)}}, id("buck"), "24AWG", 0.2, false)
		}
		add(Node{ID: id("ldo"), Type: NodeRegulator, Ratings: Ratings{Topology: TopologyLinear, OutputV: ptrTo(3.3), MaxOutputA: ptrTo(0.5),
			DropoutV: ptrTo(0.3), ThetaJACPerW: ptrTo(60.0), QuiescentA: ptrTo(0.002)}}, id("buck"), "24AWG", 0.1, false)
		for k := 0; k < 2; k++ {
			add(Node{ID: id(fmt.Sprintf("chip%d_", k)), Type: NodeLoad, Ratings: Ratings{MinV: ptrTo(3.0), MaxV: ptrTo(3.6),
				CurrentA: ptrTo(0.02)}}, id("ldo"), "26AWG", 0.1, false)
		}
		add(Node{ID: id("drv"), Type: NodeDriver, Ratings: Ratings{MaxInputV: ptrTo(30.0), ContinuousA: ptrTo(3.0), PeakA: ptrTo(8.0)}},
			"pack", "18AWG", 0.4, true)
		for k := 0; k < 2; k++ {
			add(Node{ID: id(fmt.Sprintf("motor%d_", k)), Type: NodeMotor,
				Duty: ptrTo(0.3), Ratings: Ratings{RatedV: ptrTo(12.0), NoLoadA: ptrTo(0.1),
					StallA: ptrTo(2.5), MinV: ptrTo(6.0), MaxV: ptrTo(15.0)}}, id("drv"), "20AWG", 0.5, false)
			if last := &d.Nodes[len(d.Nodes)-1]; last.Type == NodeMotor {
				last.Feed.Connectors = []Connector{{Family: "xt30", RatingA: ptrTo(15.0)}}
			}
		}
	}
	data, err := json.MarshalIndent(d, "", "  ")
	if err != nil {
		tb.Fatal(err)
	}
	return data
}

// BenchmarkDecodeDesign decodes and validates valid documents of 10 to
// 5,000 nodes (the document limit, about 1.7 MB here). The target is under
// 50 ms for any body up to the 2 MiB cap: compare ns/op across the sizes.
//
//	go test ./domain -run '^$' -bench DecodeDesign -benchmem -cpu 1
func BenchmarkDecodeDesign(b *testing.B) {
	for _, n := range []int{10, 100, 1000, 5000} {
		data := benchDocument(b, n)
		d, err := DecodeDesign(data)
		if err != nil || len(d.Nodes) != n {
			b.Fatalf("%d nodes: decoded %d, %v", n, len(d.Nodes), err)
		}
		if err := d.Validate(); err != nil {
			b.Fatalf("%d nodes: %v", n, err)
		}
		b.Run(fmt.Sprintf("nodes=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				d, err := DecodeDesign(data)
				if err == nil {
					err = d.Validate()
				}
				if err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkDecodeDesignWithAProblem measures what a refused document
// costs: 5,000 nodes, one unknown key in the last node, the worst place
// for it. The target is under 50 ms.
func BenchmarkDecodeDesignWithAProblem(b *testing.B) {
	data := benchDocument(b, MaxDesignNodes)
	at := bytes.LastIndex(data, []byte(`"id":`))
	data = slices.Concat(data[:at], []byte(`"colour": "red", `), data[at:])
	b.ReportAllocs()
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := DecodeDesign(data); err == nil {
			b.Fatal("a document with an unknown key was accepted")
		}
	}
}
