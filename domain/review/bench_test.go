package review

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/go-json-experiment/json"

	"wattshelf/domain"
)

// BenchmarkReview reviews designs of 10 to 5,000 nodes (the document
// limit) with prepared rules, as the service does: the engine alone, on a
// document validated once before (BenchmarkDecodeDesign in ./domain
// measures decoding and validating). The budget is at most 4 µs per node
// on one core, growing no faster than n·log n: compare ns/op across the
// sizes.
//
//	go test ./domain/review -run '^$' -bench 'BenchmarkReview$' -benchmem -cpu 1
func BenchmarkReview(b *testing.B) {
	rules, err := Prepare(DefaultLimits(), 1)
	if err != nil {
		b.Fatal(err)
	}
	for _, n := range []int{10, 30, 100, 1000, 5000} {
		d, err := benchDesign(n).Validated()
		if err != nil {
			b.Fatalf("%d nodes: %v", n, err)
		}
		if _, err := rules.Review(d, nil); err != nil {
			b.Fatalf("%d nodes: %v", n, err)
		}
		b.Run(fmt.Sprintf("nodes=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := rules.Review(d, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkPrepare is what every review paid before the rules were kept
// per limits version: validating the seeded limits and building the bases.
func BenchmarkPrepare(b *testing.B) {
	limits := DefaultLimits()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Prepare(limits, 1); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkReportJSON encodes a 30-node report with AppendJSON into a
// reused buffer, and with encoding/json for comparison.
func BenchmarkReportJSON(b *testing.B) {
	rep, err := Review(benchDesign(30), DefaultLimits(), 1, nil)
	if err != nil {
		b.Fatal(err)
	}
	b.Run("json", func(b *testing.B) {
		b.ReportAllocs()
		var out []byte
		for b.Loop() {
			if out, err = json.Marshal(rep, domain.StrictJSON()); err != nil {
				b.Fatal(err)
			}
		}
		b.SetBytes(int64(len(out)))
	})
}

// BenchmarkPropose proposes remedies for the 30-node design the load
// harness sends (testdata/load-30.json, which passes), for a copy of it
// with faults put in (brokenDesign), and for 5,000-node designs: the bench
// design and a generated one with thousands of findings. The budgets are
// at most five times a review of the same design (BenchmarkReview/nodes=30
// and the "review" runs here) and under 500 ms for 5,000 nodes.
//
//	go test ./domain/review -run '^$' -bench 'Propose|Review/nodes=30$' -benchmem -cpu 1 -count 5
func BenchmarkPropose(b *testing.B) {
	rules, err := Prepare(DefaultLimits(), 1)
	if err != nil {
		b.Fatal(err)
	}
	load := readDesign(b, "testdata/load-30.json")
	for _, c := range []struct {
		name string
		doc  domain.Design
	}{
		{"load30", load},
		{"broken30", brokenDesign(load)},
		{"bench5000", benchDesign(5000)},
		{"random5000", randomDesign(rand.New(rand.NewPCG(21, 22)), 5000)},
	} {
		valid := mustValidate(b, c.doc)
		b.Run(c.name+"/review", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := rules.Review(valid, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(c.name+"/propose", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := rules.Propose(valid, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
