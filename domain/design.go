package domain

import (
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain/electric"
)

// DesignFormat is the only design document format this build reads.
const DesignFormat = 1

// Bounds on a design document. Past them a value is a typing slip, not a
// build: nobody runs half a kilometre of hookup wire to a gadget.
const (
	MaxDesignNodes       = 5000
	MaxWireLengthM       = 100
	MaxPackCells         = 1000
	MaxConnectorsPerFeed = 50
	MaxAmbientC          = 100
)

// Node types of a design.
const (
	NodeBattery   = "battery"
	NodeSupply    = "supply"
	NodeRegulator = "regulator"
	NodeDriver    = "driver"
	NodeMotor     = "motor"
	NodeLoad      = "load"
)

// Regulator topologies.
const (
	TopologyLinear    = "linear"
	TopologyBuck      = "buck"
	TopologyBoost     = "boost"
	TopologyBuckBoost = "buck_boost"
)

// Fuse speeds. A fuse that names none counts as slow.
const (
	FuseFast = "fast"
	FuseSlow = "slow"
)

// NodeTypes returns the node types a design may use.
func NodeTypes() []string {
	return []string{NodeBattery, NodeSupply, NodeRegulator, NodeDriver, NodeMotor, NodeLoad}
}

// Topologies returns the regulator topologies a design may use.
func Topologies() []string {
	return []string{TopologyLinear, TopologyBuck, TopologyBoost, TopologyBuckBoost}
}

// IsSource reports whether nodes of type typ sit at the root of a tree.
func IsSource(typ string) bool { return typ == NodeBattery || typ == NodeSupply }

// Design is a design document, format 1: a tree of power with sources at
// the roots. Field names and units are a published contract; the tags
// declare each field for validation, the JSON Schema and the format
// reference (fields.go).
type Design struct {
	Format         int      `json:"format" doc:"the design format; 1 is the only one"`
	Name           string   `json:"name,omitzero" maxlen:"120" doc:"what the build is called"`
	Description    string   `json:"description,omitzero" maxlen:"4000" doc:"anything a reader should know"`
	AmbientC       *float64 `json:"ambient_c,omitzero" unit:"°C" min:"-60" max:"100" default:"25" doc:"air temperature around the build"`
	TargetRuntimeH *float64 `json:"target_runtime_h,omitzero" unit:"h" min:"0.001" max:"10000" doc:"how long each battery should last; a shorter runtime warns"`
	Nodes          []Node   `json:"nodes" max:"5000" doc:"the parts of the build: sources at the roots, every other node fed from one parent"`
}

// Node is one part of a design. Which fields apply depends on Type; a
// field left out may be filled from the stored component ComponentID names.
type Node struct {
	ID          string `json:"id" doc:"a name for the node, unique in the design"`
	Type        string `json:"type" enum:"battery supply regulator driver motor load" doc:"what the node is"`
	ComponentID *int64 `json:"component_id,omitzero" min:"1" doc:"a component on the shelf whose ratings fill what the node leaves out"`
	Mains       bool   `json:"mains,omitzero" doc:"true when the node includes a mains-powered part; such a design is out of scope"`
	Feed        *Feed  `json:"feed,omitzero" doc:"how the node is fed from its parent; every node but a battery or supply has one"`
	Ratings
	Duty     *float64 `json:"duty,omitzero" for:"motor load" min:"0.001" max:"1" default:"1" doc:"share of the time the part runs, for runtime"`
	Critical bool     `json:"critical,omitzero" for:"load" default:"false" doc:"true for a load that must not brown out (a controller): its feed gets the tighter voltage-drop limit"`
}

// Feed is how a node is fed from its parent: the wire pair, an optional
// fuse and any connectors along the way.
type Feed struct {
	From       string      `json:"from" doc:"the id of the parent node"`
	Wire       *Wire       `json:"wire" doc:"the conductor pair"`
	Fuse       *Fuse       `json:"fuse,omitzero" doc:"the fuse on this feed, if any"`
	Connectors []Connector `json:"connectors,omitzero" max:"50" doc:"connector pairs along the feed"`
}

// Wire is the conductor pair of a feed. LengthM is one way; the return
// conductor has the same length and size.
type Wire struct {
	Gauge       string   `json:"gauge" doc:"conductor size: NNAWG from 30AWG to 4/0 (e.g. \"18AWG\", \"2/0AWG\"), or metric area N.NNmm2 (e.g. \"0.75mm2\")"`
	LengthM     float64  `json:"length_m" unit:"m" min:"0.001" max:"100" doc:"length one way; the return conductor is the same length and size"`
	InsulationC *float64 `json:"insulation_c,omitzero" unit:"°C" min:"1" max:"300" default:"105" doc:"temperature rating of the insulation; picks the ampacity column"`
	Bundled     *int     `json:"bundled,omitzero" min:"1" max:"1000" default:"1" doc:"current-carrying conductors run together, for the bundling factor"`
	Enclosed    bool     `json:"enclosed,omitzero" default:"false" doc:"true when the wire runs inside a closed box, where it sheds less heat: its ampacity is derated by the limits' enclosed factor"`
}

// Fuse protects a feed. Family names a stored fuse series; without one the
// rating is checked against every stored series.
type Fuse struct {
	RatingA             float64  `json:"rating_a" unit:"A" min:"0.001" max:"1000" doc:"the fuse's current rating"`
	Speed               string   `json:"speed,omitzero" enum:"fast slow" default:"slow" doc:"fast or slow (time-delay)"`
	VoltageRatingV      *float64 `json:"voltage_rating_v,omitzero" unit:"V" min:"0.001" max:"1000" default:"its family's DC rating" doc:"the fuse's DC voltage rating, as its datasheet gives it; an AC rating does not count (a glass fuse marked 250 V is rated for AC)"`
	BreakingCapacityA   *float64 `json:"breaking_capacity_a,omitzero" unit:"A" min:"1" max:"100000" default:"its family's" doc:"the most current the fuse can interrupt at its DC voltage rating, as its datasheet gives it"`
	DistanceFromSourceM *float64 `json:"distance_from_source_m,omitzero" unit:"m" min:"0" max:"100" doc:"wire length from the source's terminal to the fuse"`
	Sheathed            bool     `json:"sheathed,omitzero" default:"false" doc:"true when the wire up to the fuse runs in a sheath or conduit"`
	Family              string   `json:"family,omitzero" doc:"the stored fuse series (blade, mini-blade, glass-5x20, ceramic-5x20 in the defaults) whose standard ratings and fault figures apply"`
}

// Connector is a connector pair along a feed. A rating left out comes from
// the stored connector family.
type Connector struct {
	Family  string   `json:"family,omitzero" doc:"a stored connector family; its ratings fill what is left out"`
	RatingA *float64 `json:"rating_a,omitzero" unit:"A" min:"0.001" max:"1000" doc:"current rating"`
	RatingV *float64 `json:"rating_v,omitzero" unit:"V" min:"0.001" max:"1000" doc:"voltage rating"`
	// A stored family says whether it fixes polarity; only a connector of
	// no family says it here.
	FixesPolarity *bool `json:"fixes_polarity,omitzero" default:"false" doc:"a connector that names no family: true when it cannot be mated the wrong way round (a keyed housing wired to a standard); a family's stored entry says it for a connector that names one"`
}

// ComponentIDs returns the stored components the design refers to, each
// once, in ascending order.
func (d Design) ComponentIDs() []int64 {
	var ids []int64
	for _, n := range d.Nodes {
		if n.ComponentID != nil {
			ids = append(ids, *n.ComponentID)
		}
	}
	slices.Sort(ids)
	return slices.Compact(ids)
}

// Validate reports every problem with the document at once, each with a
// JSON pointer: the format, the shape of the tree, and every value that is
// negative, zero where it cannot be, or absurd. A node without a
// component_id must carry every field its type needs; one with a
// component_id is checked for completeness when the review fills it.
func (d Design) Validate() error {
	var p Problems
	if d.Format != DesignFormat {
		p.Add("/format", "must be %d (the only design format this service reads)", DesignFormat)
	}
	if len(d.Nodes) == 0 {
		p.Add("/nodes", "is empty: a design needs at least a source and something it feeds")
	}
	checkDeclared(&p, "", "", &d, "", "")
	p.CheckVisible("/name", d.Name)
	if p.Len() > 0 && (len(d.Nodes) == 0 || len(d.Nodes) > MaxDesignNodes) {
		return p.Err()
	}
	for i := range d.Nodes {
		n := &d.Nodes[i]
		ptr := nodePtr(i)
		n.CheckValues(&p, ptr)
		if n.ComponentID == nil {
			n.CheckComplete(&p, ptr)
		}
	}
	d.checkTree(&p)
	return p.Err()
}

func nodePtr(i int) string { return "/nodes/" + strconv.Itoa(i) }

// checkTree checks ids, parents, sources and cycles.
func (d Design) checkTree(p *Problems) {
	first := make(map[string]int, len(d.Nodes))
	sources := 0
	for i, n := range d.Nodes {
		if IsSource(n.Type) {
			sources++
		}
		if n.ID == "" {
			continue
		}
		if j, dup := first[n.ID]; dup {
			if n.Feed != nil && d.Nodes[j].Feed != nil {
				p.Add(nodePtr(i)+"/id", "repeats the id %q of /nodes/%d: node %q would be fed twice (from %q and from %q)",
					n.ID, j, n.ID, d.Nodes[j].Feed.From, n.Feed.From)
			} else {
				p.Add(nodePtr(i)+"/id", "repeats the id %q of /nodes/%d; ids must be unique", n.ID, j)
			}
			continue
		}
		first[n.ID] = i
	}
	if sources == 0 {
		p.Add("/nodes", "has no battery or supply: every tree needs a source at its root")
	}

	parent := make([]int, len(d.Nodes)) // -1: a root or a broken link
	for i, n := range d.Nodes {
		parent[i] = -1
		switch {
		case IsSource(n.Type) && n.Feed != nil:
			p.Add(nodePtr(i)+"/feed", "must be left out: a %s is a source at the root of the tree, not fed by another node", n.Type)
		case n.Feed == nil && slices.Contains(NodeTypes(), n.Type) && !IsSource(n.Type):
			p.Add(nodePtr(i)+"/feed", "is required: a %s is fed from a parent node (only a battery or supply stands at a root)", n.Type)
		}
		if n.Feed == nil || IsSource(n.Type) {
			continue
		}
		from := n.Feed.From
		j, ok := first[from]
		switch {
		case from == "":
			p.Add(nodePtr(i)+"/feed/from", "is required: name the node this one is fed from")
		case from == n.ID:
			p.Add(nodePtr(i)+"/feed/from", "names the node itself: a node cannot feed itself")
		case !ok:
			p.Add(nodePtr(i)+"/feed/from", "names %q, which is not a node of this design", from)
		case d.Nodes[j].Type == NodeMotor || d.Nodes[j].Type == NodeLoad:
			p.Add(nodePtr(i)+"/feed/from", "names %q, a %s; only a battery, supply, regulator or driver feeds other nodes", from, d.Nodes[j].Type)
		default:
			parent[i] = j
		}
	}
	d.checkCycles(p, parent)
}

// checkCycles follows parent links; a walk that comes back to a node it is
// still on has found a loop, reported once at the node that closes it.
func (d Design) checkCycles(p *Problems, parent []int) {
	const (
		unseen = iota
		onPath
		done
	)
	state := make([]uint8, len(parent))
	var path []int
	for start := range parent {
		path = path[:0]
		i := start
		for i >= 0 && state[i] == unseen {
			state[i] = onPath
			path = append(path, i)
			i = parent[i]
		}
		if i >= 0 && state[i] == onPath {
			k := slices.Index(path, i)
			names := make([]string, 0, len(path)-k+1)
			for _, j := range path[k:] {
				names = append(names, d.Nodes[j].ID)
			}
			names = append(names, d.Nodes[i].ID)
			slices.Reverse(names) // read in the direction power would flow
			last := path[len(path)-1]
			p.Add(nodePtr(last)+"/feed/from", "closes a loop (%s): power must flow from a source down a tree",
				strings.Join(names, " → "))
		}
		for _, j := range path {
			state[j] = done
		}
	}
}

// CheckValues records every problem with the values n carries: its type,
// fields that do not apply to that type, values out of range, fields that
// contradict each other, and its feed. Missing fields are CheckComplete's.
func (n *Node) CheckValues(p *Problems, ptr string) {
	if strings.TrimSpace(n.ID) == "" {
		p.Add(ptr+"/id", "is required")
	} else if _, bad := invisible(n.ID); bad {
		p.CheckVisible(ptr+"/id", n.ID)
	}
	checkDeclared(p, ptr, "", n, n.Type, n.Topology)
	if n.Series != nil && n.Parallel != nil && *n.Series >= 1 && *n.Parallel >= 1 &&
		*n.Series**n.Parallel > MaxPackCells {
		p.Add(ptr+"/parallel", "makes a pack of %d × %d = %d cells; at most %d are allowed",
			*n.Series, *n.Parallel, *n.Series**n.Parallel, MaxPackCells)
	}
	n.checkConsistency(p, ptr)
	if n.Feed != nil {
		n.Feed.check(p, ptr)
	}
}

func describeType(typ, topology string) string {
	if typ == NodeRegulator && topology != "" {
		if topology == TopologyLinear {
			return "a linear regulator"
		}
		return "a switching (" + topology + ") regulator"
	}
	return "a " + typ
}

// checkConsistency records fields that contradict each other, when both
// are present.
func (n Node) checkConsistency(p *Problems, ptr string) {
	below := func(lo, hi *float64, loName, hiName, why string) {
		if lo != nil && hi != nil && *lo > *hi {
			p.Add(ptr+"/"+loName, "is %g, above %s %g%s", *lo, hiName, *hi, why)
		}
	}
	below(n.MinV, n.MaxV, "min_v", "max_v", "")
	below(n.MinInputV, n.MaxInputV, "min_input_v", "max_input_v", "")
	below(n.CellCutoffV, n.CellNominalV, "cell_cutoff_v", "cell_nominal_v", "")
	below(n.CellNominalV, n.CellFullV, "cell_nominal_v", "cell_full_v", "")
	below(n.CellCutoffV, n.CellFullV, "cell_cutoff_v", "cell_full_v", "")
	below(n.ProtectionCellUnderV, n.ProtectionCellOverV, "protection_cell_under_v", "protection_cell_over_v", "")
	if n.NoLoadA != nil && n.StallA != nil && *n.NoLoadA >= *n.StallA {
		p.Add(ptr+"/no_load_a", "is %g A, not below stall_a %g A", *n.NoLoadA, *n.StallA)
	}
	below(n.RunningA, n.StallA, "running_a", "stall_a", ": a motor cannot run above its stall current")
	if n.Type == NodeLoad {
		below(n.CurrentA, n.PeakA, "current_a", "peak_a", ": the peak includes the running current")
	}
	if n.Type == NodeDriver {
		below(n.ContinuousA, n.PeakA, "continuous_a", "peak_a", "")
	}
}

// CheckComplete records every field n's type needs that n does not carry.
// Fields with a default (quiescent_a, duty, running_a, a load's peak_a, a
// switching efficiency, a battery's cell values and discharge limit) are
// not required.
func (n Node) CheckComplete(p *Problems, ptr string) {
	need := func(name string, set bool, why string) {
		if !set {
			p.Add(ptr+"/"+name, "is required for %s%s", describeType(n.Type, n.Topology), why)
		}
	}
	switch n.Type {
	case NodeBattery:
		need("chemistry", n.Chemistry != "", "")
		need("series", n.Series != nil, "")
		need("parallel", n.Parallel != nil, "")
		need("cell_capacity_mah", n.CellCapacityMAh != nil, "")
	case NodeSupply:
		need("output_v", n.OutputV != nil, "")
		need("max_a", n.MaxA != nil, "")
	case NodeRegulator:
		need("topology", n.Topology != "", "")
		need("output_v", n.OutputV != nil, "")
		need("max_output_a", n.MaxOutputA != nil, "")
		if n.Topology == TopologyLinear {
			need("dropout_v", n.DropoutV != nil, "")
			need("theta_ja_c_per_w", n.ThetaJACPerW != nil, " (its junction temperature is checked)")
		}
	case NodeDriver:
		need("max_input_v", n.MaxInputV != nil, "")
		need("continuous_a", n.ContinuousA != nil, "")
	case NodeMotor:
		need("rated_v", n.RatedV != nil, "")
		need("stall_a", n.StallA != nil, " (its surge current)")
		if n.RunningA == nil {
			need("no_load_a", n.NoLoadA != nil, " when running_a is not given (running_a defaults to √(no_load_a·stall_a))")
		}
	case NodeLoad:
		need("current_a", n.CurrentA != nil, "")
	}
}

// check records the problems of the feed of the node at ptr.
func (f *Feed) check(p *Problems, ptr string) {
	// The pointers below are only written out for a problem: every node
	// but a source has a feed, and most have no problem.
	checkDeclared(p, ptr, "/feed", f, "", "")
	if w := f.Wire; w == nil {
		p.Add(ptr+"/feed/wire", "is required: say which wire carries the feed (gauge and length_m)")
	} else {
		checkDeclared(p, ptr, "/feed/wire", w, "", "")
		if w.Gauge == "" {
			p.Add(ptr+"/feed/wire/gauge", "is required, e.g. \"18AWG\" or \"0.75mm2\"")
		} else if err := electric.CheckGauge(w.Gauge); err != nil {
			p.Add(ptr+"/feed/wire/gauge", "%v", err)
		}
	}
	if f.Fuse != nil {
		checkDeclared(p, ptr, "/feed/fuse", f.Fuse, "", "")
	}
	for k := range f.Connectors {
		c := &f.Connectors[k]
		cp := ptr + "/feed/connectors/" + strconv.Itoa(k)
		checkDeclared(p, cp, "", c, "", "")
		if c.Family == "" && c.RatingA == nil {
			p.Add(cp+"/rating_a", "is required when the connector names no family")
		}
		if c.Family != "" && c.FixesPolarity != nil {
			p.Add(cp+"/fixes_polarity", "is for a connector that names no family: the stored family %q says whether it fixes polarity", c.Family)
		}
	}
}
