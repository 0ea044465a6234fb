package domain

// Ratings are the electrical figures a shelf component and a design node
// share, in SI units with the unit in each name. A node fills whatever it
// leaves out from its stored component; the node's own values win. Every
// field is optional here: a salvaged part is often only partly known, and
// which fields a node of each type needs is CheckComplete's.
//
// This is the one declaration of these fields: their ranges, the node
// types they apply to, their meaning and defaults are the tags below
// (fields.go says how they are read). Topology comes before the fields
// that depend on it.
type Ratings struct {
	// battery
	Chemistry string `json:"chemistry,omitzero" for:"battery" doc:"cell chemistry, one of the limits' chemistries (alkaline, nimh, liion, lifepo4, leadacid in the defaults); gives the cell values below their defaults"`
	Series    *int   `json:"series,omitzero" for:"battery" min:"1" max:"1000" doc:"cells in series"`
	Parallel  *int   `json:"parallel,omitzero" for:"battery" min:"1" max:"1000" doc:"strings of cells in parallel"`

	CellCapacityMAh *float64 `json:"cell_capacity_mah,omitzero" for:"battery" unit:"mAh" min:"0.1" max:"1000000" doc:"capacity of one cell"`
	CellFullV       *float64 `json:"cell_full_v,omitzero" for:"battery" unit:"V" min:"0.001" max:"20" default:"the chemistry's" doc:"voltage of one cell when fully charged"`
	CellNominalV    *float64 `json:"cell_nominal_v,omitzero" for:"battery" unit:"V" min:"0.001" max:"20" default:"the chemistry's" doc:"nominal voltage of one cell"`
	CellCutoffV     *float64 `json:"cell_cutoff_v,omitzero" for:"battery" unit:"V" min:"0.001" max:"20" default:"the chemistry's" doc:"voltage of one cell at which discharge must stop"`
	CellInternalOhm *float64 `json:"cell_internal_ohm,omitzero" for:"battery" unit:"Ω" min:"0.00001" max:"100" default:"the chemistry's" doc:"internal resistance of one cell"`
	MaxDischargeA   *float64 `json:"max_discharge_a,omitzero" for:"battery" unit:"A" min:"0.001" max:"1000" default:"the chemistry's C rate × capacity" doc:"most current the pack may deliver continuously"`

	// battery: its protection circuit, which a lithium pack needs
	ProtectionCellOverV  *float64 `json:"protection_cell_over_v,omitzero" for:"battery" unit:"V" min:"0.5" max:"20" doc:"cell voltage at which the pack's protection circuit stops charging (its per-cell over-voltage cut-off)"`
	ProtectionCellUnderV *float64 `json:"protection_cell_under_v,omitzero" for:"battery" unit:"V" min:"0.5" max:"20" doc:"cell voltage at which the pack's protection circuit stops discharging (its per-cell under-voltage cut-off)"`
	ProtectionTripA      *float64 `json:"protection_trip_a,omitzero" for:"battery" unit:"A" min:"0.001" max:"1000" doc:"current at which the pack's protection circuit cuts the pack off (its over-current trip)"`
	ProtectionPerString  bool     `json:"protection_per_string,omitzero" for:"battery" default:"false" doc:"true when each parallel string of cells has its own protection (a fuse or protection circuit per string)"`

	// supply
	MaxA *float64 `json:"max_a,omitzero" for:"supply" unit:"A" min:"0.001" max:"1000" doc:"most current the supply delivers"`

	// supply and regulator
	OutputV *float64 `json:"output_v,omitzero" for:"supply regulator" unit:"V" min:"0.001" max:"1000" doc:"output voltage"`
	// Energy a motor pushes back into its rail: a supply or converter that
	// can sink it, or a clamp that takes it.
	SinksCurrent bool     `json:"sinks_current,omitzero" for:"supply regulator/buck|boost|buck_boost" default:"false" doc:"true when the part can take current back into its output (a bench supply that sinks, a synchronous converter run in forced PWM); a motor slowing down pushes current back"`
	ClampV       *float64 `json:"clamp_v,omitzero" for:"supply regulator driver" unit:"V" min:"0.001" max:"1000" doc:"voltage at which a clamp on the part's output (a driver: its supply side) takes the energy a motor pushes back: a TVS diode, a zener or a braking resistor"`

	// regulator and driver
	Topology     string   `json:"topology,omitzero" for:"regulator" enum:"linear buck boost buck_boost" doc:"how the regulator works: linear, or a switching buck, boost or buck_boost"`
	MaxOutputA   *float64 `json:"max_output_a,omitzero" for:"regulator" unit:"A" min:"0.001" max:"1000" doc:"most output current the regulator is rated for"`
	QuiescentA   *float64 `json:"quiescent_a,omitzero" for:"regulator driver" unit:"A" min:"0" max:"1000" default:"0" doc:"current the part draws for itself"`
	DropoutV     *float64 `json:"dropout_v,omitzero" for:"regulator/linear" unit:"V" min:"0" max:"1000" doc:"least input-to-output difference at which a linear regulator still holds its output"`
	ThetaJACPerW *float64 `json:"theta_ja_c_per_w,omitzero" for:"regulator" unit:"°C/W" min:"0.1" max:"1000" doc:"thermal resistance from junction to ambient air; a switching regulator that gives it gets its junction temperature checked, one that does not its heat against a board with no heat sink"`
	TjMaxC       *float64 `json:"tj_max_c,omitzero" for:"regulator" unit:"°C" min:"1" max:"300" default:"125" doc:"highest junction temperature allowed"`
	Efficiency   *float64 `json:"efficiency,omitzero" for:"regulator/buck|boost|buck_boost" min:"0.01" max:"1" default:"the limits' switching efficiency" doc:"share of input power a switching regulator delivers"`
	MinInputV    *float64 `json:"min_input_v,omitzero" for:"regulator/buck|boost|buck_boost" unit:"V" min:"0.001" max:"1000" default:"a buck: its output_v" doc:"lowest input a switching regulator works from"`
	MaxInputV    *float64 `json:"max_input_v,omitzero" for:"regulator driver" unit:"V" min:"0.001" max:"1000" doc:"highest input voltage the part is rated for"`
	ContinuousA  *float64 `json:"continuous_a,omitzero" for:"driver" unit:"A" min:"0.001" max:"1000" doc:"output current the driver carries continuously"`

	// regulator, driver and load: what a reversed supply would do to it
	ReverseProtectionDropV *float64 `json:"reverse_protection_drop_v,omitzero" for:"regulator driver load" unit:"V" min:"0" max:"10" doc:"the part has reverse-polarity protection at its input (a series diode or FET), losing this much voltage; its input window counts the loss"`
	PolarityFree           bool     `json:"polarity_free,omitzero" for:"load" default:"false" doc:"true for a load that works either way round (a filament lamp, a heater, an input behind a bridge rectifier)"`
	// supply, regulator and driver
	CurrentLimitA *float64 `json:"current_limit_a,omitzero" for:"supply regulator driver" unit:"A" min:"0.001" max:"1000" doc:"the current the part holds its output to, as its datasheet states: a supply's or regulator's into a short, a driver's into a stalled motor"`

	// driver (a rating) and load (a draw)
	PeakA *float64 `json:"peak_a,omitzero" for:"driver load" unit:"A" min:"0" max:"1000" default:"a load: its current_a" doc:"a driver: the surge current it is rated for; a load: the most it draws in a surge"`

	// motor, at rated_v
	RatedV   *float64 `json:"rated_v,omitzero" for:"motor" unit:"V" min:"0.001" max:"1000" doc:"voltage the motor's currents were measured or rated at"`
	NoLoadA  *float64 `json:"no_load_a,omitzero" for:"motor" unit:"A" min:"0" max:"1000" doc:"current with nothing on the shaft"`
	StallA   *float64 `json:"stall_a,omitzero" for:"motor" unit:"A" min:"0.001" max:"1000" doc:"current with the shaft held still, what it draws at start"`
	RunningA *float64 `json:"running_a,omitzero" for:"motor" unit:"A" min:"0.001" max:"1000" default:"√(no_load_a · stall_a), the maximum-efficiency current" doc:"current while working"`

	// motor and load
	MinV     *float64 `json:"min_v,omitzero" for:"motor load" unit:"V" min:"0" max:"1000" doc:"lowest input voltage the part works at"`
	MaxV     *float64 `json:"max_v,omitzero" for:"motor load" unit:"V" min:"0.001" max:"1000" doc:"highest input voltage the part takes"`
	CurrentA *float64 `json:"current_a,omitzero" for:"load" unit:"A" min:"0" max:"1000" doc:"current the load draws while running"`
}
