package review

import (
	"fmt"
	"maps"
	"slices"

	"github.com/go-json-experiment/json"
)

// EngineVersion changes whenever the same design and limits could give a
// different report, so stored reviews can be told apart.
const EngineVersion = "3"

// ReportFormat is the format of the reports this build writes. Format 1
// reports (every check carrying its basis, no rules) stay readable as
// stored: see ReadStored.
const ReportFormat = 2

// Status is the outcome of one check or of a whole review.
type Status string

// Check and report outcomes. A check of the design's scope is OutOfScope
// when the design includes mains or a source above the in-scope voltage;
// the report then never says pass.
const (
	Pass       Status = "pass"
	Warn       Status = "warn"
	Fail       Status = "fail"
	OutOfScope Status = "out_of_scope"
)

// Severity orders statuses from harmless to worst: pass, warn, fail,
// out_of_scope (a design the review cannot speak for is never taken as
// passed). The engine, the report pages and the CLI all order by it; an
// unknown status is -1.
func (s Status) Severity() int {
	switch s {
	case Pass:
		return 0
	case Warn:
		return 1
	case Fail:
		return 2
	case OutOfScope:
		return 3
	}
	return -1
}

// Check names.
const (
	CheckVoltageRange      = "voltage.range"
	CheckRegulatorHeadroom = "regulator.headroom"
	CheckRegulatorCurrent  = "regulator.current"
	CheckRegulatorThermal  = "regulator.thermal"
	CheckDriverVoltage     = "driver.voltage"
	CheckDriverCurrent     = "driver.current"
	CheckSourceCurrent     = "source.current"
	CheckSourceRuntime     = "source.runtime"
	CheckWireAmpacity      = "wire.ampacity"
	CheckWireDrop          = "wire.drop"
	CheckFuseMissing       = "fuse.missing"
	CheckFuseRating        = "fuse.rating"
	CheckFusePlacement     = "fuse.placement"
	CheckConnectorRating   = "connector.rating"
	CheckScopeMains        = "scope.mains"
	CheckRegulatorHeat     = "regulator.heat"
	CheckBatteryProtection = "battery.protection"
	CheckConnectorPolarity = "connector.polarity"
	CheckRailBackfeed      = "rail.backfeed"
	CheckFuseInterrupt     = "fuse.interrupt"
	CheckMotorStall        = "motor.stall"
	CheckWireTemperature   = "wire.temperature"
)

// Report is the outcome of a review.
type Report struct {
	Format        int             `json:"format"`
	Status        Status          `json:"status"`
	LimitsVersion int             `json:"limits_version"`
	EngineVersion string          `json:"engine_version"`
	Counts        Counts          `json:"counts"`
	Rules         map[string]Rule `json:"rules"`
	Checks        []Check         `json:"checks"`
	Nodes         []NodeResult    `json:"nodes"`
	Feeds         []FeedResult    `json:"feeds"`
	Runtime       []RuntimeResult `json:"runtime"`
	Cautions      []string        `json:"cautions"`
	// NotRun lists the checks the review's limits version predates: they
	// were not run, so the report cannot speak for them.
	NotRun []string `json:"not_run,omitzero"`
}

// Counts tallies the checks by status.
type Counts struct {
	Pass       int `json:"pass"`
	Warn       int `json:"warn"`
	Fail       int `json:"fail"`
	OutOfScope int `json:"out_of_scope"`
}

// Check is one finding. Node names the node a feed supplies for a check on
// a feed, the source for a check on a source, and is empty for a check of
// the whole design. Pointer locates a connector in the document, where the
// node alone does not say which of its feed's connectors was checked.
//
// Limit is the hard limit and WarnAt the warning threshold, where the
// check has them; Value or Limit is null when the design did not give
// what it would be worked out from, and the message says what is missing.
type Check struct {
	Check   string   `json:"check"`
	Node    string   `json:"node"`
	Pointer string   `json:"pointer,omitzero"`
	Status  Status   `json:"status"`
	Value   *float64 `json:"value"`
	Limit   *float64 `json:"limit"`
	WarnAt  *float64 `json:"warn_at,omitzero"`
	Unit    string   `json:"unit"`
	Message string   `json:"message"`
	// Remedies are the changes that clear a warn or fail finding, lightest
	// first; NoRemedy says why none is offered. Both are filled only when
	// a proposal was asked for (Rules.Propose).
	Remedies []Remedy `json:"remedies,omitzero"`
	NoRemedy string   `json:"no_remedy,omitzero"`
}

// Rule is what a check applies and where it comes from, written once per
// report for every check it holds.
type Rule struct {
	Basis  string `json:"basis"`
	Source string `json:"source"`
}

// NodeResult is a node's operating point. Voltages are at its input (a
// source's at its terminals); currents are what it draws from its feed (a
// source's, what it delivers). Regulators add their output range and heat.
type NodeResult struct {
	ID           string   `json:"id"`
	Type         string   `json:"type"`
	Parent       string   `json:"parent,omitzero"`
	VLow         float64  `json:"v_low"`
	VNominal     float64  `json:"v_nominal"`
	VHigh        float64  `json:"v_high"`
	RunA         float64  `json:"run_a"`
	PeakA        float64  `json:"peak_a"`
	AvgA         float64  `json:"avg_a"`
	OutVLow      *float64 `json:"out_v_low,omitempty"`
	OutVNominal  *float64 `json:"out_v_nominal,omitempty"`
	OutVHigh     *float64 `json:"out_v_high,omitempty"`
	DissipationW *float64 `json:"dissipation_w,omitempty"`
	JunctionC    *float64 `json:"junction_c,omitempty"`
	// Collapsed marks a switching regulator whose feed cannot carry the
	// power it needs: there is no operating point, and its currents are the
	// most the feed could deliver.
	Collapsed bool `json:"collapsed,omitzero"`
}

// FeedResult is the wire run to a node: its loop resistance, the current
// it carries and the drop across it.
type FeedResult struct {
	Node          string   `json:"node"`
	From          string   `json:"from"`
	Gauge         string   `json:"gauge"`
	LengthM       float64  `json:"length_m"`
	ResistanceOhm float64  `json:"resistance_ohm"`
	RunA          float64  `json:"run_a"`
	PeakA         float64  `json:"peak_a"`
	DropV         float64  `json:"drop_v"`
	DropPct       float64  `json:"drop_pct"`
	AmpacityA     float64  `json:"ampacity_a"`
	FuseA         *float64 `json:"fuse_a,omitempty"`
}

// RuntimeResult is how long a battery lasts. Hours is absent when the
// battery delivers no average current. Pack and Brownouts carry what a
// discharge plot needs, so no reader has to work it out again from the
// document.
type RuntimeResult struct {
	Source      string     `json:"source"`
	Hours       *float64   `json:"hours"`
	UsableShare float64    `json:"usable_share"`
	LimitedBy   string     `json:"limited_by"`
	Pack        PackFacts  `json:"pack"`
	Brownouts   []Brownout `json:"brownouts"`
}

// PackFacts is a battery as the review resolved it: the design's cell
// values over the stored chemistry's, times the pack's shape.
type PackFacts struct {
	Chemistry  string  `json:"chemistry"`
	Series     int     `json:"series"`
	Parallel   int     `json:"parallel"`
	CapacityAh float64 `json:"capacity_ah"`
	FullV      float64 `json:"full_v"`
	NominalV   float64 `json:"nominal_v"`
	CutoffV    float64 `json:"cutoff_v"`
	// FullSOC is the state of charge the curve gives at FullV: 1 unless
	// the design's cell_full_v sits below the top of the stored curve.
	// The usable charge is counted from here down.
	FullSOC float64 `json:"full_soc"`
	// Curve is the chemistry's discharge curve times the series count,
	// from empty to full.
	Curve []PackPoint `json:"curve"`
}

// PackPoint is one point of a pack's discharge curve: its voltage when
// SOC (state of charge, the share of capacity left) remains.
type PackPoint struct {
	SOC   float64 `json:"soc"`
	PackV float64 `json:"pack_v"`
}

// Brownout outcomes: where, as its battery drains from full to cutoff, a
// motor or load stops getting its min_v.
const (
	BrownoutPartway = "partway" // at PackV, with SOC of the charge left
	BrownoutNever   = "never"   // it keeps its min_v down to the cutoff
	BrownoutAlways  = "always"  // not even a full pack gives it its min_v
)

// Brownout is the pack voltage below which a motor or load fed from the
// battery gets less than its min_v, read back through the feed drops and
// regulators of the operating point. PackV is absent when no pack voltage
// would do (a regulator on the way never turns on, or holds its output
// below min_v); SOC is given for a brownout partway only. Motors and loads
// without a min_v above 0 ask nothing of the pack and are not listed.
type Brownout struct {
	Node    string   `json:"node"`
	Outcome string   `json:"outcome"`
	PackV   *float64 `json:"pack_v,omitempty"`
	SOC     *float64 `json:"soc,omitempty"`
}

// Cautions are carried by every report, whatever it found.
func Cautions() []string {
	return []string{
		"Mains is out of scope. Leave the mains side of a salvaged appliance out of your build: power it from a " +
			"battery or a ready-made, certified low-voltage adapter, and have a qualified person deal with anything " +
			"that touches mains.",
		"Lithium packs (Li-ion, LiFePO4) need a protection circuit against over-charge, over-discharge and " +
			"over-current, and a charger made for their chemistry; charge them supervised, on a surface that " +
			"cannot burn.",
		"This review checks the numbers in the design against the stored limits. It is no substitute for " +
			"inspection by a qualified person, for local codes, or for the space's own rules.",
	}
}

// ReadStored reads a stored report of either format. A format 1 report
// (before rules were written once) is read into today's shape: each
// check's basis becomes its rule, and its one threshold its limit.
func ReadStored(data []byte) (Report, error) {
	var head struct {
		Format int `json:"format"`
	}
	if err := json.Unmarshal(data, &head); err != nil {
		return Report{}, fmt.Errorf("read stored report: %w", err)
	}
	var rep Report
	if head.Format >= ReportFormat {
		err := json.Unmarshal(data, &rep)
		return rep, err
	}
	var old struct {
		Report
		Checks []struct {
			Check   string  `json:"check"`
			Node    string  `json:"node"`
			Pointer string  `json:"pointer"`
			Status  Status  `json:"status"`
			Value   float64 `json:"value"`
			Limit   float64 `json:"limit"`
			Unit    string  `json:"unit"`
			Message string  `json:"message"`
			Basis   string  `json:"basis"`
		} `json:"checks"`
	}
	if err := json.Unmarshal(data, &old); err != nil {
		return Report{}, fmt.Errorf("read stored format 1 report: %w", err)
	}
	rep = old.Report
	rep.Format = 1
	rep.Rules = map[string]Rule{}
	for _, c := range old.Checks {
		rep.Checks = append(rep.Checks, Check{Check: c.Check, Node: c.Node, Pointer: c.Pointer, Status: c.Status,
			Value: &c.Value, Limit: &c.Limit, Unit: c.Unit, Message: c.Message})
		if _, ok := rep.Rules[c.Check]; !ok && c.Basis != "" {
			rep.Rules[c.Check] = Rule{Basis: c.Basis}
		}
	}
	return rep, nil
}

// CheckNames lists every check this engine runs, sorted: the names its
// rules are written for.
func CheckNames() []string {
	return slices.Sorted(maps.Keys(newRules(DefaultLimits())))
}
