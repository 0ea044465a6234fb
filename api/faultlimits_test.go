package api

import (
	"encoding/json"
	"net/http"
	"slices"
	"testing"
)

// Staff putting back a limits set written before the fault checks get a
// 422 naming every value those checks need, under /limits.
func TestPutLimitsWithoutTheFaultFigures(t *testing.T) {
	h := newDesignHarness(t, Config{})
	if _, err := h.store.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	var cur struct {
		Limits map[string]any `json:"limits"`
	}
	h.expect(h.call(http.MethodGet, "/v1/limits", "rowan", nil), http.StatusOK, &cur)
	delete(cur.Limits, "faults")
	for _, f := range cur.Limits["fuses"].(map[string]any)["families"].([]any) {
		for _, k := range []string{"dc_voltage_v", "breaking_capacity_a", "breaking_capacity_multiple", "breaking_capacity_ac", "fault_source", "clearing"} {
			delete(f.(map[string]any), k)
		}
	}
	body, err := json.Marshal(map[string]any{"limits": cur.Limits, "note": "an old copy"})
	if err != nil {
		t.Fatal(err)
	}
	rec := h.call(http.MethodPut, "/v1/limits", "rowan", body, "If-Match", `"1"`)
	var p Problem
	h.expect(rec, http.StatusUnprocessableEntity, &p)
	var got []string
	for _, e := range p.Errors {
		got = append(got, e.Pointer)
	}
	// Four families; glass-5x20 and ceramic-5x20 have no DC rating to
	// leave out (0 is theirs), but without a fault_source 0 reads as absent.
	var want []string
	for _, i := range []string{"0", "1", "2", "3"} {
		f := "/limits/fuses/families/" + i
		want = append(want, f+"/breaking_capacity_a", f+"/dc_voltage_v", f+"/fault_source", f+"/clearing")
	}
	want = append(want, "/limits/faults/unstated_limit_multiple", "/limits/faults/table_ambient_c", "/limits/faults/enclosed_factor")
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("problem pointers:\n got %v\nwant %v", got, want)
	}
}
