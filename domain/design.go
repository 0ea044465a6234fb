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
		kp := ptr + "/" + escapePointer(key)
		if seen[key] {
			if key == "feed" {
				w.p.Add(kp, "appears twice: a node is fed from exactly one parent")
			} else {
				w.p.Add(kp, "appears twice in one object")
			}
		}
		seen[key] = true
		want, known := fields[key]
		if !known {
			w.p.Add(kp, "is not a field of a %s (field names are listed in DESIGN section 5)", name)
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

func (w *shapeWalker) value(tok json.Token, want shapeKind, ptr string) error {
	if tok == nil {
		return nil // null leaves the field out
	}
	switch want.kind {
	case "object":
		if tok != json.Delim('{') {
			w.p.Add(ptr, "must be an object")
			return w.skip(tok)
		}
		return w.object(want.name, ptr)
	case "array":
		if tok != json.Delim('[') {
			w.p.Add(ptr, "must be an array")
			return w.skip(tok)
		}
		for i := 0; w.dec.More(); i++ {
			el, err := w.dec.Token()
			if err != nil {
				return err
			}
			if err := w.value(el, shapeKind{kind: want.elem, name: want.name}, ptr+"/"+strconv.Itoa(i)); err != nil {
				return err
			}
		}
		_, err := w.dec.Token() // the closing ']'
		return err
	case "string":
		if _, ok := tok.(string); !ok {
			w.p.Add(ptr, "must be a string")
		}
	case "bool":
		if _, ok := tok.(bool); !ok {
			w.p.Add(ptr, "must be true or false")
		}
	case "number", "integer":
		n, ok := tok.(json.Number)
		if !ok {
			w.p.Add(ptr, "must be a number")
			break
		}
		if want.kind == "integer" {
			if _, err := strconv.ParseInt(string(n), 10, 64); err != nil {
				w.p.Add(ptr, "must be a whole number")
			}
		} else if _, err := strconv.ParseFloat(string(n), 64); err != nil {
			w.p.Add(ptr, "is too large a number")
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
	return strings.NewReplacer("~", "~0", "/", "~1").Replace(s)
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
	checkBetween(&p, "/target_runtime_h", d.TargetRuntimeH, 0.001, MaxRuntimeH, "h")
	switch {
	case len(d.Nodes) == 0:
		p.Add("/nodes", "is empty: a design needs at least a source and something it feeds")
		return p.Err()
	case len(d.Nodes) > MaxDesignNodes:
		p.Add("/nodes", "has %d nodes; at most %d are allowed", len(d.Nodes), MaxDesignNodes)
		return p.Err()
	}
	for i, n := range d.Nodes {
		ptr := "/nodes/" + strconv.Itoa(i)
		n.CheckValues(&p, ptr)
		if n.ComponentID == nil {
			n.CheckComplete(&p, ptr)
		}
	}
	d.checkTree(&p)
	return p.Err()
}

// checkTree checks ids, parents, sources and cycles.
func (d Design) checkTree(p *Problems) {
	first := make(map[string]int, len(d.Nodes))
	sources := 0
	for i, n := range d.Nodes {
		ptr := "/nodes/" + strconv.Itoa(i)
		if IsSource(n.Type) {
			sources++
		}
		if n.ID == "" {
			continue
		}
		if j, dup := first[n.ID]; dup {
			if n.Feed != nil && d.Nodes[j].Feed != nil {
				p.Add(ptr+"/id", "repeats the id %q of /nodes/%d: node %q would be fed twice (from %q and from %q)",
					n.ID, j, n.ID, d.Nodes[j].Feed.From, n.Feed.From)
			} else {
				p.Add(ptr+"/id", "repeats the id %q of /nodes/%d; ids must be unique", n.ID, j)
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
		ptr := "/nodes/" + strconv.Itoa(i)
		switch {
		case IsSource(n.Type) && n.Feed != nil:
			p.Add(ptr+"/feed", "must be left out: a %s is a source at the root of the tree, not fed by another node", n.Type)
		case n.Feed == nil && slices.Contains(NodeTypes(), n.Type) && !IsSource(n.Type):
			p.Add(ptr+"/feed", "is required: a %s is fed from a parent node (only a battery or supply stands at a root)", n.Type)
		}
		if n.Feed == nil || IsSource(n.Type) {
			continue
		}
		from := n.Feed.From
		j, ok := first[from]
		switch {
		case from == "":
			p.Add(ptr+"/feed/from", "is required: name the node this one is fed from")
		case from == n.ID:
			p.Add(ptr+"/feed/from", "names the node itself: a node cannot feed itself")
		case !ok:
			p.Add(ptr+"/feed/from", "names %q, which is not a node of this design", from)
		case d.Nodes[j].Type == NodeMotor || d.Nodes[j].Type == NodeLoad:
			p.Add(ptr+"/feed/from", "names %q, a %s; only a battery, supply, regulator or driver feeds other nodes", from, d.Nodes[j].Type)
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
			p.Add("/nodes/"+strconv.Itoa(last)+"/feed/from", "closes a loop (%s): power must flow from a source down a tree",
				strings.Join(names, " → "))
		}
		for _, j := range path {
			state[j] = done
		}
	}
}

// fieldsFor lists the type-specific fields a node of type typ may carry.
func fieldsFor(typ, topology string) []string {
	switch typ {
	case NodeBattery:
		return []string{"chemistry", "series", "parallel", "cell_capacity_mah", "cell_full_v", "cell_nominal_v",
			"cell_cutoff_v", "cell_internal_ohm", "max_discharge_a"}
	case NodeSupply:
		return []string{"output_v", "max_a"}
	case NodeRegulator:
		common := []string{"topology", "output_v", "max_output_a", "quiescent_a", "max_input_v"}
		switch topology {
		case TopologyLinear:
			return append(common, "dropout_v", "theta_ja_c_per_w", "tj_max_c")
		case "":
			return append(common, "dropout_v", "theta_ja_c_per_w", "tj_max_c", "efficiency", "min_input_v")
		}
		return append(common, "efficiency", "min_input_v")
	case NodeDriver:
		return []string{"max_input_v", "continuous_a", "peak_a", "quiescent_a"}
	case NodeMotor:
		return []string{"rated_v", "no_load_a", "stall_a", "running_a", "min_v", "max_v", "duty"}
	case NodeLoad:
		return []string{"min_v", "max_v", "current_a", "peak_a", "duty", "critical"}
	}
	return nil
}

// presentFields lists the type-specific fields n carries.
func (n Node) presentFields() []string {
	var out []string
	add := func(name string, set bool) {
		if set {
			out = append(out, name)
		}
	}
	add("chemistry", n.Chemistry != "")
	add("series", n.Series != nil)
	add("parallel", n.Parallel != nil)
	add("critical", n.Critical)
	add("topology", n.Topology != "")
	for _, f := range n.numberFields() {
		add(f.name, f.v != nil)
	}
	return out
}

type namedValue struct {
	name string
	v    *float64
}

// numberFields pairs each float field with its JSON name, in the order of
// nodeNumberFields.
func (n *Node) numberFields() []namedValue {
	return []namedValue{
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

// CheckValues records every problem with the values n carries: its type,
// fields that do not apply to that type, values out of range, fields that
// contradict each other, and its feed. Missing fields are CheckComplete's.
func (n Node) CheckValues(p *Problems, ptr string) {
	p.CheckText(ptr+"/id", n.ID, MaxShortFieldLen, true)
	if !slices.Contains(NodeTypes(), n.Type) {
		p.Add(ptr+"/type", "must be one of %s", strings.Join(NodeTypes(), ", "))
	} else {
		allowed := fieldsFor(n.Type, n.Topology)
		for _, f := range n.presentFields() {
			if !slices.Contains(allowed, f) {
				p.Add(ptr+"/"+f, "does not apply to %s", describeType(n.Type, n.Topology))
			}
		}
	}
	if n.ComponentID != nil && *n.ComponentID <= 0 {
		p.Add(ptr+"/component_id", "must be a positive component id")
	}
	if n.Topology != "" && !slices.Contains(Topologies(), n.Topology) {
		p.Add(ptr+"/topology", "must be one of %s", strings.Join(Topologies(), ", "))
	}
	p.CheckText(ptr+"/chemistry", n.Chemistry, MaxShortFieldLen, false)
	n.checkRanges(p, ptr)
	n.checkConsistency(p, ptr)
	if n.Feed != nil {
		n.Feed.check(p, ptr+"/feed")
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

// checkBetween records a problem unless v is absent or in [lo, hi]. The
// floors keep divisions in the review finite: a value below them is a slip
// (a 1 µV motor, a 1 pΩ cell), not a part.
func checkBetween(p *Problems, ptr string, v *float64, lo, hi float64, unit string) {
	if v != nil && !(*v >= lo && *v <= hi) {
		p.Add(ptr, "must be at least %g and at most %g %s", lo, hi, unit)
	}
}

// Smallest meaningful positive values.
const (
	minVolts   = 0.001
	minAmps    = 0.001
	minLengthM = 0.001
)

func (n Node) checkRanges(p *Problems, ptr string) {
	for _, f := range []namedValue{
		{"output_v", n.OutputV}, {"rated_v", n.RatedV}, {"max_input_v", n.MaxInputV}, {"min_input_v", n.MinInputV},
		{"max_v", n.MaxV},
	} {
		checkBetween(p, ptr+"/"+f.name, f.v, minVolts, MaxVoltageV, "V (a rail over 1 kV is no gadget)")
	}
	for _, f := range []namedValue{{"min_v", n.MinV}, {"dropout_v", n.DropoutV}} {
		p.CheckOptionalRange(ptr+"/"+f.name, f.v, 0, MaxVoltageV, "V")
	}
	for _, f := range []namedValue{
		{"max_a", n.MaxA}, {"max_output_a", n.MaxOutputA}, {"continuous_a", n.ContinuousA},
		{"stall_a", n.StallA}, {"running_a", n.RunningA}, {"max_discharge_a", n.MaxDischargeA},
	} {
		checkBetween(p, ptr+"/"+f.name, f.v, minAmps, MaxCurrentA, "A (over 1 kA is no gadget)")
	}
	for _, f := range []namedValue{
		{"quiescent_a", n.QuiescentA}, {"no_load_a", n.NoLoadA}, {"current_a", n.CurrentA}, {"peak_a", n.PeakA},
	} {
		p.CheckOptionalRange(ptr+"/"+f.name, f.v, 0, MaxCurrentA, "A")
	}
	if n.Type == NodeDriver {
		checkBetween(p, ptr+"/peak_a", n.PeakA, minAmps, MaxCurrentA, "A")
	}
	for _, f := range []namedValue{
		{"cell_full_v", n.CellFullV}, {"cell_nominal_v", n.CellNominalV}, {"cell_cutoff_v", n.CellCutoffV},
	} {
		checkBetween(p, ptr+"/"+f.name, f.v, minVolts, 20, "V per cell")
	}
	checkBetween(p, ptr+"/cell_internal_ohm", n.CellInternalOhm, 0.00001, 100, "Ω per cell")
	checkBetween(p, ptr+"/cell_capacity_mah", n.CellCapacityMAh, 0.1, MaxCellCapacityAh*1000, "mAh")
	checkBetween(p, ptr+"/duty", n.Duty, 0.001, 1, "(a share of the time)")
	checkBetween(p, ptr+"/efficiency", n.Efficiency, 0.01, 1, "(a share)")
	checkBetween(p, ptr+"/theta_ja_c_per_w", n.ThetaJACPerW, 0.1, 1000, "°C/W")
	checkBetween(p, ptr+"/tj_max_c", n.TjMaxC, 1, MaxTemperatureC, "°C")
	for _, f := range []struct {
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

func (f Feed) check(p *Problems, ptr string) {
	if f.Wire == nil {
		p.Add(ptr+"/wire", "is required: say which wire carries the feed (gauge and length_m)")
	} else {
		w := f.Wire
		if w.Gauge == "" {
			p.Add(ptr+"/wire/gauge", "is required, e.g. \"18AWG\" or \"0.75mm2\"")
		} else if _, err := electric.ParseGauge(w.Gauge); err != nil {
			p.Add(ptr+"/wire/gauge", "%v", err)
		}
		if !(w.LengthM >= minLengthM && w.LengthM <= MaxWireLengthM) {
			p.Add(ptr+"/wire/length_m", "must be at least %g and at most %d m (one way)", minLengthM, MaxWireLengthM)
		}
		checkBetween(p, ptr+"/wire/insulation_c", w.InsulationC, 1, MaxTemperatureC, "°C")
		if w.Bundled != nil && (*w.Bundled < 1 || *w.Bundled > 1000) {
			p.Add(ptr+"/wire/bundled", "must be between 1 and 1000 current-carrying conductors")
		}
	}
	if fu := f.Fuse; fu != nil {
		if !(fu.RatingA >= minAmps && fu.RatingA <= MaxCurrentA) {
			p.Add(ptr+"/fuse/rating_a", "must be at least %g and at most %d A", minAmps, MaxCurrentA)
		}
		if fu.Speed != "" && fu.Speed != FuseFast && fu.Speed != FuseSlow {
			p.Add(ptr+"/fuse/speed", "must be %q or %q", FuseFast, FuseSlow)
		}
		checkBetween(p, ptr+"/fuse/voltage_rating_v", fu.VoltageRatingV, minVolts, MaxVoltageV, "V")
		p.CheckOptionalRange(ptr+"/fuse/distance_from_source_m", fu.DistanceFromSourceM, 0, MaxWireLengthM, "m")
		p.CheckText(ptr+"/fuse/family", fu.Family, MaxShortFieldLen, false)
	}
	if len(f.Connectors) > MaxConnectorsPerRun {
		p.Add(ptr+"/connectors", "lists %d connectors; at most %d are allowed", len(f.Connectors), MaxConnectorsPerRun)
	}
	for k, c := range f.Connectors {
		cp := ptr + "/connectors/" + strconv.Itoa(k)
		p.CheckText(cp+"/family", c.Family, MaxShortFieldLen, false)
		checkBetween(p, cp+"/rating_a", c.RatingA, minAmps, MaxCurrentA, "A")
		checkBetween(p, cp+"/rating_v", c.RatingV, minVolts, MaxVoltageV, "V")
		if c.Family == "" && c.RatingA == nil {
			p.Add(cp+"/rating_a", "is required when the connector names no family")
		}
	}
}
