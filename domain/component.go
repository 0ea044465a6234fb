package domain

import (
	"reflect"
	"slices"
	"strings"
	"time"
	"unsafe"

	"wattshelf/domain/electric"
)

// ComponentKinds returns the kinds of part the shelf holds.
func ComponentKinds() []string {
	return []string{
		"motor", "battery", "regulator", "driver", "microcontroller", "camera", "audio",
		"sensor", "light", "switch", "connector", "wire", "fuse", "other",
	}
}

// Conditions returns the states a part on the shelf may be in.
func Conditions() []string { return []string{"untested", "working", "faulty"} }

// SpecSources returns where a part's figures may come from.
func SpecSources() []string { return []string{"datasheet", "measured", "estimated"} }

// Electrical holds a part's ratings: those a design node shares
// (Ratings) and those only the shelf keeps.
type Electrical struct {
	Ratings
	NominalV  *float64 `json:"nominal_v,omitzero" unit:"V" min:"0" max:"1000" doc:"nominal voltage"`
	NoLoadRPM *float64 `json:"no_load_rpm,omitzero" unit:"rpm" min:"0" max:"200000" doc:"a motor's speed with nothing on the shaft, at rated_v"`
	RatingA   *float64 `json:"rating_a,omitzero" unit:"A" min:"0" max:"1000" doc:"a connector's, fuse's or wire's current rating"`
	RatingV   *float64 `json:"rating_v,omitzero" unit:"V" min:"0" max:"1000" doc:"a connector's voltage rating, or a fuse's DC voltage rating (an AC marking, such as a glass fuse's 250 V, does not count)"`
	// A remedy's fuse must break the short it guards against; a shelf
	// fuse that does not say what it breaks cannot be offered for one.
	BreakingCapacityA *float64 `json:"breaking_capacity_a,omitzero" unit:"A" min:"1" max:"100000" doc:"a fuse's breaking capacity at its DC voltage rating, as its datasheet gives it: the most current it can interrupt"`
	Gauge             string   `json:"gauge,omitzero" doc:"a wire's size"`
}

// FillNode completes n from the part's ratings: every field n leaves out
// that applies to its type. The node's own values win.
func (e Electrical) FillNode(n Node) Node {
	fillFrom(reflect.ValueOf(&n.Ratings).Elem(), reflect.ValueOf(e.Ratings), n.Type)
	return n
}

// ComponentInput is what a client sends to create or replace a component.
type ComponentInput struct {
	Name        string `json:"name"`
	Kind        string `json:"kind"`
	Description string `json:"description"`
	Origin      string `json:"origin"`
	MainsOrigin bool   `json:"mains_origin"`
	Bin         string `json:"bin"`
	Quantity    int    `json:"quantity"`
	Condition   string `json:"condition"`
	SpecSource  string `json:"spec_source"`
	Notes       string `json:"notes"` // internal: kept off the public shelf
	Electrical
}

// Component is a part on the shelf as stored.
type Component struct {
	ID int64 `json:"id"`
	ComponentInput
	Owner     string    `json:"owner"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
	Version   int64     `json:"version"`
}

// Defaults fills what a client may leave out.
func (c *ComponentInput) Defaults() {
	c.Name, c.Bin = strings.TrimSpace(c.Name), strings.TrimSpace(c.Bin)
	if c.Condition == "" {
		c.Condition = "untested"
	}
	if c.SpecSource == "" {
		c.SpecSource = "estimated"
	}
}

// Validate reports every problem with c at once.
func (c ComponentInput) Validate() error {
	var p Problems
	p.CheckText("/name", c.Name, MaxNameLen, true)
	if kinds := ComponentKinds(); !slices.Contains(kinds, c.Kind) {
		p.Add("/kind", "must be one of %v", kinds)
	}
	p.CheckText("/description", c.Description, MaxTextLen, false)
	p.CheckText("/origin", c.Origin, MaxNameLen*2, false)
	p.CheckText("/bin", c.Bin, MaxShortFieldLen, false)
	p.CheckVisible("/name", c.Name)
	p.CheckVisible("/bin", c.Bin)
	p.CheckText("/notes", c.Notes, MaxTextLen, false)
	if c.Quantity < 0 || c.Quantity > MaxQuantity {
		p.Add("/quantity", "must be between 0 and %d", MaxQuantity)
	}
	if conditions := Conditions(); !slices.Contains(conditions, c.Condition) {
		p.Add("/condition", "must be one of %v", conditions)
	}
	if sources := SpecSources(); !slices.Contains(sources, c.SpecSource) {
		p.Add("/spec_source", "must be one of %v", sources)
	}
	c.Electrical.validate(&p)
	return p.Err()
}

func (e Electrical) validate(p *Problems) {
	checkDeclared(p, "", "", &e, "", "")
	if e.MinV != nil && e.MaxV != nil && *e.MinV > *e.MaxV {
		p.Add("/min_v", "is above max_v")
	}
	// An upside-down input window would make fits_v match nothing.
	if e.MinInputV != nil && e.MaxInputV != nil && *e.MinInputV > *e.MaxInputV {
		p.Add("/min_input_v", "is above max_input_v")
	}
}

// Measurement is one bench reading of a component.
type Measurement struct {
	ID          int64     `json:"id"`
	ComponentID int64     `json:"component_id"`
	VoltageV    float64   `json:"voltage_v"`
	CurrentA    float64   `json:"current_a"`
	SpeedRPM    *float64  `json:"speed_rpm,omitempty"`
	Note        string    `json:"note,omitempty"`
	RecordedBy  string    `json:"recorded_by"`
	RecordedAt  time.Time `json:"recorded_at"`
}

// MeasurementInput is what a client sends to record a reading.
type MeasurementInput struct {
	VoltageV float64  `json:"voltage_v"`
	CurrentA float64  `json:"current_a"`
	SpeedRPM *float64 `json:"speed_rpm,omitempty"`
	Note     string   `json:"note"`
}

// Validate reports every problem with m at once.
func (m MeasurementInput) Validate() error {
	var p Problems
	p.CheckRange("/voltage_v", m.VoltageV, 0, MaxVoltageV, "V")
	p.CheckRange("/current_a", m.CurrentA, 0, MaxCurrentA, "A")
	p.CheckOptionalRange("/speed_rpm", m.SpeedRPM, 0, MaxSpeedRPM, "rpm")
	p.CheckText("/note", m.Note, MaxTextLen, false)
	return p.Err()
}

// ShelfItem is the public view of a component: no owner, no notes.
type ShelfItem struct {
	ID          int64  `json:"id"`
	Name        string `json:"name"`
	Kind        string `json:"kind"`
	Description string `json:"description"`
	Origin      string `json:"origin"`
	MainsOrigin bool   `json:"mains_origin"`
	Bin         string `json:"bin"`
	Quantity    int    `json:"quantity"`
	Condition   string `json:"condition"`
	SpecSource  string `json:"spec_source"`
	Electrical
	UpdatedAt time.Time `json:"updated_at"`
}

// Public returns the shelf view of c.
func (c Component) Public() ShelfItem {
	return ShelfItem{
		ID: c.ID, Name: c.Name, Kind: c.Kind, Description: c.Description, Origin: c.Origin,
		MainsOrigin: c.MainsOrigin, Bin: c.Bin, Quantity: c.Quantity, Condition: c.Condition,
		SpecSource: c.SpecSource, Electrical: c.Electrical, UpdatedAt: c.UpdatedAt,
	}
}

// RatingAreaMM2 is the name Rating gives a wire's conductor area, which
// a part records as its gauge.
const RatingAreaMM2 = "area_mm2"

// Rating returns the numeric rating of e named by its JSON name
// ("max_output_a", "rating_a"), or a wire's conductor area as
// RatingAreaMM2, and whether the part gives it.
func (e Electrical) Rating(name string) (float64, bool) {
	if name == RatingAreaMM2 {
		g, err := electric.ParseGauge(e.Gauge)
		return g.AreaMM2, err == nil
	}
	base := unsafe.Pointer(&e)
	for _, f := range FieldsOf(reflect.TypeFor[Electrical]()) {
		if f.Name != name || (f.Kind != "number" && f.Kind != "integer") {
			continue
		}
		if !f.at.given(base) {
			return 0, false
		}
		return f.at.number(base), true
	}
	return 0, false
}
