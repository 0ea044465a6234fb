package review

import (
	"github.com/go-json-experiment/json/jsontext"

	"wattshelf/domain"
)

// Remedy is one change to a design that clears a finding: proven by
// reviewing the design with it applied, where that review cleared the
// finding and made no new fail.
type Remedy struct {
	// Change says what to change, with its numbers ("use 16AWG wire for
	// the feed to drill: 22 A derated ampacity, 1.9 % drop").
	Change string `json:"change"`
	// Patch is the change as RFC 6902 operations on the design document.
	Patch []PatchOp `json:"patch"`
	// Part is what a part the change calls for must be, when it calls
	// for one; Shelf lists the shelf's parts that are, best fit first
	// (filled by the service, which reads the shelf).
	Part  *PartNeed    `json:"part,omitzero"`
	Shelf []ShelfMatch `json:"shelf,omitzero"`
}

// PatchOp is one RFC 6902 operation.
type PatchOp struct {
	Op    string         `json:"op"`
	Path  string         `json:"path"`
	Value jsontext.Value `json:"value,omitzero"`
}

// ShelfMatch is a shelf part that satisfies a remedy's PartNeed.
type ShelfMatch struct {
	ID       int64  `json:"id"`
	Name     string `json:"name"`
	Bin      string `json:"bin"`
	Quantity int    `json:"quantity"`
}

// Proposal is a review with a remedy for each finding that has one, and
// the design with the lightest remedy of each applied, reviewed again.
// A finding's first remedy is the one the proposed design applies.
// Proposed is nil when it would change nothing: no finding, none with a
// remedy, or a design out of scope.
type Proposal struct {
	Report   Report         `json:"report"`
	Proposed *domain.Design `json:"proposed,omitzero"`
	// ProposedStatus is the proposed design's overall status.
	ProposedStatus Status `json:"proposed_status,omitzero"`
}

// PartNeed is what a shelf part must be to serve a remedy: its kind (a
// component kind) and the least or most of some of its ratings, by their
// JSON names ("max_output_a", "rating_a"; a wire's size as "area_mm2").
type PartNeed struct {
	Kind     string             `json:"kind"`
	Topology string             `json:"topology,omitzero"`
	AtLeast  map[string]float64 `json:"at_least,omitzero"`
	AtMost   map[string]float64 `json:"at_most,omitzero"`
}
