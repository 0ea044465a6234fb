package domain

import (
	"slices"
	"time"
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

// Electrical holds a part's ratings in SI units, the unit in each name.
// Every field is optional: a salvaged part is often only partly known, and
// a design node fills only what it leaves out from here.
type Electrical struct {
	MinV     *float64 `json:"min_v,omitempty"`
	MaxV     *float64 `json:"max_v,omitempty"`
	NominalV *float64 `json:"nominal_v,omitempty"`
	CurrentA *float64 `json:"current_a,omitempty"`
	PeakA    *float64 `json:"peak_a,omitempty"`

	// Brushed DC motors, at RatedV.
	RatedV    *float64 `json:"rated_v,omitempty"`
	NoLoadA   *float64 `json:"no_load_a,omitempty"`
	NoLoadRPM *float64 `json:"no_load_rpm,omitempty"`
	StallA    *float64 `json:"stall_a,omitempty"`
	RunningA  *float64 `json:"running_a,omitempty"`

	// Regulators and drivers.
	Topology        string   `json:"topology,omitempty"`
	OutputV         *float64 `json:"output_v,omitempty"`
	MaxOutputA      *float64 `json:"max_output_a,omitempty"`
	MinInputV       *float64 `json:"min_input_v,omitempty"`
	MaxInputV       *float64 `json:"max_input_v,omitempty"`
	DropoutV        *float64 `json:"dropout_v,omitempty"`
	QuiescentA      *float64 `json:"quiescent_a,omitempty"`
	Efficiency      *float64 `json:"efficiency,omitempty"`
	ThetaJACPerW    *float64 `json:"theta_ja_c_per_w,omitempty"`
	TjMaxC          *float64 `json:"tj_max_c,omitempty"`
	ContinuousA     *float64 `json:"continuous_a,omitempty"`
	MaxDischargeA   *float64 `json:"max_discharge_a,omitempty"`
	Chemistry       string   `json:"chemistry,omitempty"`
	Series          *int     `json:"series,omitempty"`
	Parallel        *int     `json:"parallel,omitempty"`
	CellCapacityMAh *float64 `json:"cell_capacity_mah,omitempty"`

	// Connectors, fuses and wire.
	RatingA *float64 `json:"rating_a,omitempty"`
	RatingV *float64 `json:"rating_v,omitempty"`
	Gauge   string   `json:"gauge,omitempty"`
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
	volts := map[string]*float64{
		"/min_v": e.MinV, "/max_v": e.MaxV, "/nominal_v": e.NominalV, "/rated_v": e.RatedV,
		"/output_v": e.OutputV, "/min_input_v": e.MinInputV, "/max_input_v": e.MaxInputV,
		"/dropout_v": e.DropoutV, "/rating_v": e.RatingV,
	}
	amps := map[string]*float64{
		"/current_a": e.CurrentA, "/peak_a": e.PeakA, "/no_load_a": e.NoLoadA, "/stall_a": e.StallA,
		"/running_a": e.RunningA, "/max_output_a": e.MaxOutputA, "/quiescent_a": e.QuiescentA,
		"/continuous_a": e.ContinuousA, "/max_discharge_a": e.MaxDischargeA, "/rating_a": e.RatingA,
	}
	for _, ptr := range sortedKeys(volts) {
		p.CheckOptionalRange(ptr, volts[ptr], 0, MaxVoltageV, "V")
	}
	for _, ptr := range sortedKeys(amps) {
		p.CheckOptionalRange(ptr, amps[ptr], 0, MaxCurrentA, "A")
	}
	p.CheckOptionalRange("/no_load_rpm", e.NoLoadRPM, 0, MaxSpeedRPM, "rpm")
	p.CheckOptionalRange("/efficiency", e.Efficiency, 0.01, 1, "")
	p.CheckOptionalRange("/theta_ja_c_per_w", e.ThetaJACPerW, 0, 1000, "°C/W")
	p.CheckOptionalRange("/tj_max_c", e.TjMaxC, 0, MaxTemperatureC, "°C")
	p.CheckOptionalRange("/cell_capacity_mah", e.CellCapacityMAh, 0, MaxCellCapacityAh*1000, "mAh")
	if e.Series != nil && (*e.Series < 1 || *e.Series > 1000) {
		p.Add("/series", "must be between 1 and 1000")
	}
	if e.Parallel != nil && (*e.Parallel < 1 || *e.Parallel > 1000) {
		p.Add("/parallel", "must be between 1 and 1000")
	}
	if e.MinV != nil && e.MaxV != nil && *e.MinV > *e.MaxV {
		p.Add("/min_v", "is above max_v")
	}
	// An upside-down input window would make fits_v match nothing.
	if e.MinInputV != nil && e.MaxInputV != nil && *e.MinInputV > *e.MaxInputV {
		p.Add("/min_input_v", "is above max_input_v")
	}
	p.CheckText("/topology", e.Topology, MaxShortFieldLen, false)
	p.CheckText("/chemistry", e.Chemistry, MaxShortFieldLen, false)
	p.CheckText("/gauge", e.Gauge, MaxShortFieldLen, false)
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
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
