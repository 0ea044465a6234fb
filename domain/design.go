package domain

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"wattshelf/domain/electric"
)

// DesignFormat is the only design document format this build reads.
const DesignFormat = 1

// Bounds on a design document. Past them a value is a typing slip, not a
// build: nobody runs half a kilometre of hookup wire to a gadget.
const (
	MaxDesignNodes      = 5000
	MaxWireLengthM      = 100
	MaxPackCells        = 1000
	MaxConnectorsPerRun = 50
	MaxAmbientC         = 100
	MaxRuntimeH         = 10000
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
// the roots. Field names and units are a published contract.
type Design struct {
	Format         int      `json:"format"`
	Name           string   `json:"name"`
	Description    string   `json:"description,omitempty"`
	AmbientC       *float64 `json:"ambient_c,omitempty"`
	TargetRuntimeH *float64 `json:"target_runtime_h,omitempty"`
	Nodes          []Node   `json:"nodes"`
}

// Node is one part of a design. Which fields apply depends on Type; a
// field left out may be filled from the stored component ComponentID names.
type Node struct {
	ID          string `json:"id"`
	Type        string `json:"type"`
	ComponentID *int64 `json:"component_id,omitempty"`
	Mains       bool   `json:"mains,omitempty"`
	Feed        *Feed  `json:"feed,omitempty"`

	// battery
	Chemistry       string   `json:"chemistry,omitempty"`
	Series          *int     `json:"series,omitempty"`
	Parallel        *int     `json:"parallel,omitempty"`
	CellCapacityMAh *float64 `json:"cell_capacity_mah,omitempty"`
	CellFullV       *float64 `json:"cell_full_v,omitempty"`
	CellNominalV    *float64 `json:"cell_nominal_v,omitempty"`
	CellCutoffV     *float64 `json:"cell_cutoff_v,omitempty"`
	CellInternalOhm *float64 `json:"cell_internal_ohm,omitempty"`
	MaxDischargeA   *float64 `json:"max_discharge_a,omitempty"`

	// supply (and regulator output_v)
	OutputV *float64 `json:"output_v,omitempty"`
	MaxA    *float64 `json:"max_a,omitempty"`

	// regulator
	Topology     string   `json:"topology,omitempty"`
	MaxOutputA   *float64 `json:"max_output_a,omitempty"`
	QuiescentA   *float64 `json:"quiescent_a,omitempty"`
	DropoutV     *float64 `json:"dropout_v,omitempty"`
	ThetaJACPerW *float64 `json:"theta_ja_c_per_w,omitempty"`
	TjMaxC       *float64 `json:"tj_max_c,omitempty"`
	Efficiency   *float64 `json:"efficiency,omitempty"`
	MinInputV    *float64 `json:"min_input_v,omitempty"`
	MaxInputV    *float64 `json:"max_input_v,omitempty"`

	// driver (and load peak_a)
	ContinuousA *float64 `json:"continuous_a,omitempty"`
	PeakA       *float64 `json:"peak_a,omitempty"`

	// motor
	RatedV   *float64 `json:"rated_v,omitempty"`
	NoLoadA  *float64 `json:"no_load_a,omitempty"`
	StallA   *float64 `json:"stall_a,omitempty"`
	RunningA *float64 `json:"running_a,omitempty"`

	// motor and load
	MinV     *float64 `json:"min_v,omitempty"`
	MaxV     *float64 `json:"max_v,omitempty"`
	Duty     *float64 `json:"duty,omitempty"`
	CurrentA *float64 `json:"current_a,omitempty"`
	Critical bool     `json:"critical,omitempty"`
}

// Feed is how a node is fed from its parent: the wire pair, an optional
// fuse and any connectors along the way.
type Feed struct {
	From       string      `json:"from"`
	Wire       *Wire       `json:"wire"`
	Fuse       *Fuse       `json:"fuse,omitempty"`
	Connectors []Connector `json:"connectors,omitempty"`
}

// Wire is the conductor pair of a feed. LengthM is one way; the return
// conductor has the same length and size.
type Wire struct {
	Gauge       string   `json:"gauge"`
	LengthM     float64  `json:"length_m"`
	InsulationC *float64 `json:"insulation_c,omitempty"`
	Bundled     *int     `json:"bundled,omitempty"`
}

// Fuse protects a feed. Family names a stored fuse series; without one the
// rating is checked against every stored series.
type Fuse struct {
	RatingA             float64  `json:"rating_a"`
	Speed               string   `json:"speed,omitempty"`
	VoltageRatingV      *float64 `json:"voltage_rating_v,omitempty"`
	DistanceFromSourceM *float64 `json:"distance_from_source_m,omitempty"`
	Sheathed            bool     `json:"sheathed,omitempty"`
	Family              string   `json:"family,omitempty"`
}

// Connector is a connector pair along a feed. A rating left out comes from
// the stored connector family.
type Connector struct {
	Family  string   `json:"family,omitempty"`
	RatingA *float64 `json:"rating_a,omitempty"`
	RatingV *float64 `json:"rating_v,omitempty"`
}

// DecodeDesign reads a design document strictly. Input that is not
// well-formed JSON (a syntax error, a truncated body, trailing data, an
// empty body) gives a *DecodeError. Well-formed JSON that does not fit the
// document's shape (an unknown field, a key given twice, a value of the
// wrong JSON type or out of float range) gives a *ValidationError listing
// every such problem with its JSON pointer. Call Validate on the result.
func DecodeDesign(data []byte) (Design, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return Design{}, &DecodeError{Reason: "the body is empty; send a design document"}
	}
	if d, ok := decodeDesignFast(data); ok {
		return d, nil
	}
	return decodeDesignStrict(data)
}

// decodeDesignStrict is DecodeDesign's slow, thorough path: a walk over
// the tokens that notes every shape problem with its pointer, then
// encoding/json for the values. Documents with a problem take it, and so
// does anything the fast path leaves to it.
func decodeDesignStrict(data []byte) (Design, error) {
	w := shapeWalker{dec: json.NewDecoder(bytes.NewReader(data)), fields: map[string]map[string]shapeKind{}}
	w.dec.UseNumber()
	if err := w.root(); err != nil {
		return Design{}, syntaxProblem(data, err)
	}
	end := w.dec.InputOffset()
	if _, err := w.dec.Token(); err != io.EOF {
		off := end + int64(len(data[end:])-len(bytes.TrimLeft(data[end:], " \t\r\n")))
		return Design{}, &DecodeError{Offset: off, Reason: "trailing data after the design document" + lineCol(data, off)}
	}
	if err := w.p.Err(); err != nil {
		return Design{}, err
	}
	var d Design
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&d); err != nil {
		// The walk above accepts only what Decode accepts; reaching this is a
		// mismatch between the two, still reported as a bad body.
		return Design{}, &DecodeError{Reason: err.Error()}
	}
	return d, nil
}

func syntaxProblem(data []byte, err error) error {
	var se *json.SyntaxError
	switch {
	case errors.As(err, &se):
		return &DecodeError{Offset: se.Offset, Reason: se.Error() + lineCol(data, se.Offset)}
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		off := int64(len(data))
		return &DecodeError{Offset: off, Reason: "the document ends too early" + lineCol(data, off)}
	}
	return &DecodeError{Reason: err.Error()}
}

// lineCol says where offset falls, for people reading a file in an editor.
func lineCol(data []byte, offset int64) string {
	offset = min(max(offset, 0), int64(len(data)))
	before := data[:offset]
	line := bytes.Count(before, []byte{'\n'}) + 1
	col := int64(len(before)) - int64(bytes.LastIndexByte(before, '\n'))
	return fmt.Sprintf(" (line %d, column %d)", line, col)
}

// shapeKind is what the walker expects of a JSON value.
type shapeKind struct {
	kind string // object, array, string, number, integer, bool
	name string // object: which struct; array: element object name or kind
	elem string // array: element kind
}

// shapeWalker checks a document's shape token by token before it is
// decoded, so every unknown field, repeated key and wrong type is reported
// at once with its pointer; encoding/json stops at the first.
type shapeWalker struct {
	dec    *json.Decoder
	p      Problems
	fields map[string]map[string]shapeKind
}

// objectFields maps each object of the document to its fields. It mirrors
// the struct tags above; TestDesignShapeMatchesStructs keeps them in step.
func objectFields(name string) map[string]shapeKind {
	num, integer, str, boolean := shapeKind{kind: "number"}, shapeKind{kind: "integer"}, shapeKind{kind: "string"}, shapeKind{kind: "bool"}
	switch name {
	case "design":
		return map[string]shapeKind{
			"format": integer, "name": str, "description": str, "ambient_c": num, "target_runtime_h": num,
			"nodes": {kind: "array", elem: "object", name: "node"},
		}
	case "node":
		m := map[string]shapeKind{
			"id": str, "type": str, "component_id": integer, "mains": boolean,
			"feed": {kind: "object", name: "feed"}, "chemistry": str, "topology": str,
			"series": integer, "parallel": integer, "critical": boolean,
		}
		for _, f := range nodeNumberFields() {
			m[f] = num
		}
		return m
	case "feed":
		return map[string]shapeKind{
			"from": str, "wire": {kind: "object", name: "wire"}, "fuse": {kind: "object", name: "fuse"},
			"connectors": {kind: "array", elem: "object", name: "connector"},
		}
	case "wire":
		return map[string]shapeKind{"gauge": str, "length_m": num, "insulation_c": num, "bundled": integer}
	case "fuse":
		return map[string]shapeKind{
			"rating_a": num, "speed": str, "voltage_rating_v": num, "distance_from_source_m": num,
			"sheathed": boolean, "family": str,
		}
	case "connector":
		return map[string]shapeKind{"family": str, "rating_a": num, "rating_v": num}
	}
	return nil
}

// nodeNumberFields are the node fields that hold a float.
func nodeNumberFields() []string {
	return []string{
		"cell_capacity_mah", "cell_full_v", "cell_nominal_v", "cell_cutoff_v", "cell_internal_ohm",
		"max_discharge_a", "output_v", "max_a", "max_output_a", "quiescent_a", "dropout_v",
		"theta_ja_c_per_w", "tj_max_c", "efficiency", "min_input_v", "max_input_v", "continuous_a",
		"peak_a", "rated_v", "no_load_a", "stall_a", "running_a", "min_v", "max_v", "duty", "current_a",
	}
}

func (w *shapeWalker) root() error {
	tok, err := w.dec.Token()
	if err != nil {
		return err
	}
	if tok != json.Delim('{') {
		w.p.Add("", "must be a JSON object (a design document)")
		return w.skip(tok)
	}
	return w.object("design", "")
}

func (w *shapeWalker) fieldsOf(name string) map[string]shapeKind {
	f, ok := w.fields[name]
	if !ok {
		f = objectFields(name)
		w.fields[name] = f
	}
	return f
}

// object walks the members of an object whose '{' has been read.
func (w *shapeWalker) object(name, ptr string) error {
	fields := w.fieldsOf(name)
	seen := make(map[string]bool, 8)
	for w.dec.More() {
		tok, err := w.dec.Token()
		if err != nil {
			return err
		}
		key, _ := tok.(string)
		// The pointer is built only when it is needed: for a problem or a
		// nested value. Most keys hold a well-typed number.
		kp := func() string { return ptr + "/" + escapePointer(key) }
		if seen[key] {
			if key == "feed" {
				w.p.Add(kp(), "appears twice: a node is fed from exactly one parent")
			} else {
				w.p.Add(kp(), "appears twice in one object")
			}
		}
		seen[key] = true
		want, known := fields[key]
		if !known {
			w.p.Add(kp(), "is not a field of a %s (field names are listed in DESIGN section 5)", name)
		}
		tok, err = w.dec.Token()
		if err != nil {
			return err
		}
		if !known {
			if err := w.skip(tok); err != nil {
				return err
			}
			continue
		}
		if err := w.value(tok, want, kp); err != nil {
			return err
		}
	}
	_, err := w.dec.Token() // the closing '}'
	return err
}

// value checks one value against want; pointer gives its JSON pointer.
func (w *shapeWalker) value(tok json.Token, want shapeKind, pointer func() string) error {
	if tok == nil {
		return nil // null leaves the field out
	}
	switch want.kind {
	case "object":
		if tok != json.Delim('{') {
			w.p.Add(pointer(), "must be an object")
			return w.skip(tok)
		}
		return w.object(want.name, pointer())
	case "array":
		if tok != json.Delim('[') {
			w.p.Add(pointer(), "must be an array")
			return w.skip(tok)
		}
		ptr := pointer()
		for i := 0; w.dec.More(); i++ {
			el, err := w.dec.Token()
			if err != nil {
				return err
			}
			if err := w.value(el, shapeKind{kind: want.elem, name: want.name}, func() string { return ptr + "/" + strconv.Itoa(i) }); err != nil {
				return err
			}
		}
		_, err := w.dec.Token() // the closing ']'
		return err
	case "string":
		if _, ok := tok.(string); !ok {
			w.p.Add(pointer(), "must be a string")
		}
	case "bool":
		if _, ok := tok.(bool); !ok {
			w.p.Add(pointer(), "must be true or false")
		}
	case "number", "integer":
		n, ok := tok.(json.Number)
		if !ok {
			w.p.Add(pointer(), "must be a number")
			break
		}
		if want.kind == "integer" {
			if _, err := strconv.ParseInt(string(n), 10, 64); err != nil {
				w.p.Add(pointer(), "must be a whole number")
			}
		} else if _, err := strconv.ParseFloat(string(n), 64); err != nil {
			w.p.Add(pointer(), "is too large a number")
		}
	}
	return w.skip(tok)
}

// skip consumes the rest of a value whose first token is tok.
func (w *shapeWalker) skip(tok json.Token) error {
	if tok != json.Delim('{') && tok != json.Delim('[') {
		return nil
	}
	for depth := 1; depth > 0; {
		t, err := w.dec.Token()
		if err != nil {
			return err
		}
		switch t {
		case json.Delim('{'), json.Delim('['):
			depth++
		case json.Delim('}'), json.Delim(']'):
			depth--
		}
	}
	return nil
}

// escapePointer escapes one JSON pointer reference token (RFC 6901).
func escapePointer(s string) string {
	// Called for every key of every document, so no Replacer per call:
	// building one cost a third of a 30-node review's time.
	if !strings.ContainsAny(s, "~/") {
		return s
	}
	return strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
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
	p.CheckText("/name", d.Name, MaxNameLen, false)
	p.CheckText("/description", d.Description, MaxTextLen, false)
	p.CheckOptionalRange("/ambient_c", d.AmbientC, MinTemperatureC, MaxAmbientC, "°C")
	checkBetween(&p, "", "target_runtime_h", d.TargetRuntimeH, 0.001, MaxRuntimeH, "h")
	switch {
	case len(d.Nodes) == 0:
		p.Add("/nodes", "is empty: a design needs at least a source and something it feeds")
		return p.Err()
	case len(d.Nodes) > MaxDesignNodes:
		p.Add("/nodes", "has %d nodes; at most %d are allowed", len(d.Nodes), MaxDesignNodes)
		return p.Err()
	}
	for i := range d.Nodes {
		n := &d.Nodes[i]
		// A node is checked first without its pointer, which costs an
		// allocation, and again with it only when it has a problem.
		var quiet Problems
		n.checkNode(&quiet, "")
		if quiet.Len() > 0 {
			n.checkNode(&p, nodePtr(i))
		}
	}
	d.checkTree(&p)
	return p.Err()
}

// checkNode is what Validate checks of one node.
func (n *Node) checkNode(p *Problems, ptr string) {
	n.CheckValues(p, ptr)
	if n.ComponentID == nil {
		n.CheckComplete(p, ptr)
	}
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

// applies tells whether a node of type typ (and, for a regulator,
// topology) may carry field. A regulator of unknown topology may carry any
// regulator field; its topology is reported instead.
func applies(typ, topology, field string) bool {
	switch typ {
	case NodeBattery:
		switch field {
		case "chemistry", "series", "parallel", "cell_capacity_mah", "cell_full_v", "cell_nominal_v",
			"cell_cutoff_v", "cell_internal_ohm", "max_discharge_a":
			return true
		}
	case NodeSupply:
		return field == "output_v" || field == "max_a"
	case NodeRegulator:
		switch field {
		case "topology", "output_v", "max_output_a", "quiescent_a", "max_input_v":
			return true
		case "dropout_v", "theta_ja_c_per_w", "tj_max_c":
			return topology != TopologyBuck && topology != TopologyBoost && topology != TopologyBuckBoost
		case "efficiency", "min_input_v":
			return topology != TopologyLinear
		}
	case NodeDriver:
		switch field {
		case "max_input_v", "continuous_a", "peak_a", "quiescent_a":
			return true
		}
	case NodeMotor:
		switch field {
		case "rated_v", "no_load_a", "stall_a", "running_a", "min_v", "max_v", "duty":
			return true
		}
	case NodeLoad:
		switch field {
		case "min_v", "max_v", "current_a", "peak_a", "duty", "critical":
			return true
		}
	}
	return false
}

type namedValue struct {
	name string
	v    *float64
}

// numberFields pairs each float field with its JSON name, in the order of
// nodeNumberFields. An array, so walking it allocates nothing.
func (n *Node) numberFields() [26]namedValue {
	return [26]namedValue{
		{"cell_capacity_mah", n.CellCapacityMAh}, {"cell_full_v", n.CellFullV}, {"cell_nominal_v", n.CellNominalV},
		{"cell_cutoff_v", n.CellCutoffV}, {"cell_internal_ohm", n.CellInternalOhm}, {"max_discharge_a", n.MaxDischargeA},
		{"output_v", n.OutputV}, {"max_a", n.MaxA}, {"max_output_a", n.MaxOutputA}, {"quiescent_a", n.QuiescentA},
		{"dropout_v", n.DropoutV}, {"theta_ja_c_per_w", n.ThetaJACPerW}, {"tj_max_c", n.TjMaxC},
		{"efficiency", n.Efficiency}, {"min_input_v", n.MinInputV}, {"max_input_v", n.MaxInputV},
		{"continuous_a", n.ContinuousA}, {"peak_a", n.PeakA}, {"rated_v", n.RatedV}, {"no_load_a", n.NoLoadA},
		{"stall_a", n.StallA}, {"running_a", n.RunningA}, {"min_v", n.MinV}, {"max_v", n.MaxV},
		{"duty", n.Duty}, {"current_a", n.CurrentA},
	}
}

// Smallest meaningful positive values. The floors keep divisions in the
// review finite: a value below them is a slip (a 1 µV motor), not a part.
const (
	minVolts   = 0.001
	minAmps    = 0.001
	minLengthM = 0.001
)

// numberRange is the accepted range of a float field of a node of type typ.
func numberRange(field, typ string) (lo, hi float64, unit string) {
	switch field {
	case "output_v", "rated_v", "max_input_v", "min_input_v", "max_v":
		return minVolts, MaxVoltageV, "V (a rail over 1 kV is no gadget)"
	case "min_v", "dropout_v":
		return 0, MaxVoltageV, "V"
	case "max_a", "max_output_a", "continuous_a", "stall_a", "running_a", "max_discharge_a":
		return minAmps, MaxCurrentA, "A (over 1 kA is no gadget)"
	case "peak_a":
		if typ == NodeDriver { // a rating, not a draw
			return minAmps, MaxCurrentA, "A (over 1 kA is no gadget)"
		}
		return 0, MaxCurrentA, "A"
	case "quiescent_a", "no_load_a", "current_a":
		return 0, MaxCurrentA, "A"
	case "cell_full_v", "cell_nominal_v", "cell_cutoff_v":
		return minVolts, 20, "V per cell"
	case "cell_internal_ohm":
		return 0.00001, 100, "Ω per cell"
	case "cell_capacity_mah":
		return 0.1, MaxCellCapacityAh * 1000, "mAh"
	case "duty":
		return 0.001, 1, "(a share of the time)"
	case "efficiency":
		return 0.01, 1, "(a share)"
	case "theta_ja_c_per_w":
		return 0.1, 1000, "°C/W"
	case "tj_max_c":
		return 1, MaxTemperatureC, "°C"
	}
	return 0, 0, ""
}

// checkBetween records a problem unless v is absent or in [lo, hi]. It
// builds the pointer only for a problem: validation runs on every node of
// every review.
func checkBetween(p *Problems, ptr, field string, v *float64, lo, hi float64, unit string) {
	if v != nil && !(*v >= lo && *v <= hi) {
		p.Add(ptr+"/"+field, "must be at least %g and at most %g %s", lo, hi, unit)
	}
}

// checkText records a problem when s is longer than max characters or,
// when required, blank.
func checkText(p *Problems, ptr, field, s string, max int, required bool) {
	switch {
	case required && strings.TrimSpace(s) == "":
		p.Add(ptr+"/"+field, "is required")
	case len(s) > max && utf8.RuneCountInString(s) > max:
		p.Add(ptr+"/"+field, "is %d characters long; at most %d are allowed", utf8.RuneCountInString(s), max)
	}
}

// CheckValues records every problem with the values n carries: its type,
// fields that do not apply to that type, values out of range, fields that
// contradict each other, and its feed. Missing fields are CheckComplete's.
func (n Node) CheckValues(p *Problems, ptr string) {
	checkText(p, ptr, "id", n.ID, MaxShortFieldLen, true)
	known := slices.Contains(NodeTypes(), n.Type)
	if !known {
		p.Add(ptr+"/type", "must be one of %s", strings.Join(NodeTypes(), ", "))
	}
	misplaced := func(field string, set bool) {
		if set && known && !applies(n.Type, n.Topology, field) {
			p.Add(ptr+"/"+field, "does not apply to %s", describeType(n.Type, n.Topology))
		}
	}
	misplaced("chemistry", n.Chemistry != "")
	misplaced("series", n.Series != nil)
	misplaced("parallel", n.Parallel != nil)
	misplaced("critical", n.Critical)
	misplaced("topology", n.Topology != "")
	for _, f := range n.numberFields() {
		if f.v == nil {
			continue
		}
		misplaced(f.name, true)
		lo, hi, unit := numberRange(f.name, n.Type)
		checkBetween(p, ptr, f.name, f.v, lo, hi, unit)
	}
	if n.ComponentID != nil && *n.ComponentID <= 0 {
		p.Add(ptr+"/component_id", "must be a positive component id")
	}
	if n.Topology != "" && !slices.Contains(Topologies(), n.Topology) {
		p.Add(ptr+"/topology", "must be one of %s", strings.Join(Topologies(), ", "))
	}
	checkText(p, ptr, "chemistry", n.Chemistry, MaxShortFieldLen, false)
	for _, f := range [2]struct {
		name string
		v    *int
	}{{"series", n.Series}, {"parallel", n.Parallel}} {
		if f.v != nil && (*f.v < 1 || *f.v > MaxPackCells) {
			p.Add(ptr+"/"+f.name, "must be between 1 and %d", MaxPackCells)
		}
	}
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
func (f Feed) check(p *Problems, ptr string) {
	if f.Wire == nil {
		p.Add(ptr+"/feed/wire", "is required: say which wire carries the feed (gauge and length_m)")
	} else {
		w := f.Wire
		if w.Gauge == "" {
			p.Add(ptr+"/feed/wire/gauge", "is required, e.g. \"18AWG\" or \"0.75mm2\"")
		} else if err := electric.CheckGauge(w.Gauge); err != nil {
			p.Add(ptr+"/feed/wire/gauge", "%v", err)
		}
		if !(w.LengthM >= minLengthM && w.LengthM <= MaxWireLengthM) {
			p.Add(ptr+"/feed/wire/length_m", "must be at least %g and at most %d m (one way)", minLengthM, MaxWireLengthM)
		}
		checkBetween(p, ptr, "feed/wire/insulation_c", w.InsulationC, 1, MaxTemperatureC, "°C")
		if w.Bundled != nil && (*w.Bundled < 1 || *w.Bundled > 1000) {
			p.Add(ptr+"/feed/wire/bundled", "must be between 1 and 1000 current-carrying conductors")
		}
	}
	if fu := f.Fuse; fu != nil {
		if !(fu.RatingA >= minAmps && fu.RatingA <= MaxCurrentA) {
			p.Add(ptr+"/feed/fuse/rating_a", "must be at least %g and at most %d A", minAmps, MaxCurrentA)
		}
		if fu.Speed != "" && fu.Speed != FuseFast && fu.Speed != FuseSlow {
			p.Add(ptr+"/feed/fuse/speed", "must be %q or %q", FuseFast, FuseSlow)
		}
		checkBetween(p, ptr, "feed/fuse/voltage_rating_v", fu.VoltageRatingV, minVolts, MaxVoltageV, "V")
		checkBetween(p, ptr, "feed/fuse/distance_from_source_m", fu.DistanceFromSourceM, 0, MaxWireLengthM, "m")
		checkText(p, ptr, "feed/fuse/family", fu.Family, MaxShortFieldLen, false)
	}
	if len(f.Connectors) > MaxConnectorsPerRun {
		p.Add(ptr+"/feed/connectors", "lists %d connectors; at most %d are allowed", len(f.Connectors), MaxConnectorsPerRun)
	}
	for k, c := range f.Connectors {
		cp := func(field string) string { return "feed/connectors/" + strconv.Itoa(k) + "/" + field }
		checkText(p, ptr, cp("family"), c.Family, MaxShortFieldLen, false)
		checkBetween(p, ptr, cp("rating_a"), c.RatingA, minAmps, MaxCurrentA, "A")
		checkBetween(p, ptr, cp("rating_v"), c.RatingV, minVolts, MaxVoltageV, "V")
		if c.Family == "" && c.RatingA == nil {
			p.Add(ptr+"/"+cp("rating_a"), "is required when the connector names no family")
		}
	}
}
