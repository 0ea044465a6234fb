package review

import (
	"fmt"
	"math/rand/v2"
	"reflect"
	"sync"
	"testing"
)

// TestRulesReuseTheirWorkspace reviews random designs of every size, some
// broken, one after another and from several goroutines at once with one
// Rules, which hands each review the workspace of an earlier one: every
// report must be the one fresh rules give.
func TestRulesReuseTheirWorkspace(t *testing.T) {
	shared, err := Prepare(DefaultLimits(), 1)
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	for g := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			rng := rand.New(rand.NewPCG(uint64(g), 21))
			for round := range 150 {
				d := randomDesign(rng, 1+rng.IntN(80))
				if round%7 == 3 {
					d.Nodes[len(d.Nodes)-1].Chemistry = "unobtainium" // a problem build finds
				}
				got, gotErr := shared.Review(d, nil)
				want, wantErr := Review(d, DefaultLimits(), 1, nil)
				if fmt.Sprint(gotErr) != fmt.Sprint(wantErr) {
					t.Errorf("goroutine %d round %d: %v, fresh rules %v", g, round, gotErr, wantErr)
					return
				}
				if !reflect.DeepEqual(got, want) {
					t.Errorf("goroutine %d round %d: the report differs from the one fresh rules give", g, round)
					return
				}
			}
		}()
	}
	wg.Wait()
}
