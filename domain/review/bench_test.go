package review

import (
	"fmt"
	"testing"
)

// BenchmarkReview reviews designs of 10 to 5,000 nodes (the document
// limit). The target is under 50 ms for 5,000 nodes on one core, growing
// no faster than n·log n: compare ns/op across the sizes.
//
//	go test ./domain/review -run '^$' -bench Review -benchmem -cpu 1
func BenchmarkReview(b *testing.B) {
	limits := DefaultLimits()
	for _, n := range []int{10, 100, 1000, 5000} {
		d := benchDesign(n)
		if _, err := Review(d, limits, 1, nil); err != nil {
			b.Fatalf("%d nodes: %v", n, err)
		}
		b.Run(fmt.Sprintf("nodes=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Review(d, limits, 1, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
