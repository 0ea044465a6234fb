package review

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

type kind uint8

const (
	kindBattery kind = iota
	kindSupply
	kindRegulator
	kindDriver
	kindMotor
	kindLoad
)

type topology uint8

const (
	topoLinear topology = iota
	topoBuck
	topoBoost
	topoBuckBoost
)

// node is a design node resolved for the engine: component fields filled
// in, defaults applied, units in SI, and room for its operating point.
type node struct {
	id        string
	ptr       string // its JSON pointer, "/nodes/N"
	wirePtr   string // ptr + "/feed/wire" when it has a feed; ptr and the feed's pointer are prefixes of it
	typ       string
	kind      kind
	parent    int // -1 at a root
	root      int // the source at the top of its tree
	mains     bool
	mainsPart bool // its component came out of a mains-powered appliance

	// battery; only a battery has a pack, and a node without one is
	// smaller by it
	pack          *electric.Pack
	maxDischargeA float64
	protection    *protection // a battery's protection circuit, as far as the design states it

	// supply, regulator
	outputV float64
	maxA    float64

	// regulator, driver
	topo        topology
	maxOutA     float64
	quiescentA  float64
	dropoutV    float64
	thetaJA     float64
	tjMaxC      float64
	efficiency  float64
	minInputV   float64 // 0: not given
	maxInputV   float64 // 0: not given
	continuousA float64
	peakRatingA float64 // driver; 0: not given

	// energy a motor pushes back, and a reversed supply
	sinks        bool    // supply, switching regulator: takes current back
	clampV       float64 // supply, regulator, driver; 0: no clamp stated
	revDropV     float64 // regulator, driver, load: its reverse-polarity protection's drop
	revProtected bool    // it states reverse-polarity protection
	polarityFree bool    // a load that works either way round
	// supply, regulator, driver: the current its output is held to; 0: not given
	currentLimitA float64

	// motor, load
	ratedV, stallA, runningA float64
	minV, maxV               float64
	hasMinV, hasMaxV         bool
	currentA, peakA, duty    float64
	critical                 bool

	feed *feed

	// operating point
	vLow, vNom, vHigh       float64 // at the input (a source: its terminals)
	outLow, outNom, outHigh float64 // what it passes to its children
	run, peak, avg          float64 // drawn from its feed (a source: delivered)
	outRun, outPeak, outAvg float64 // sum drawn by its children
	collapsed               bool    // a switching regulator whose feed cannot carry its power
	hasMotor                bool    // a motor at or below this node

	path pathMap // its input voltage as a function of its battery's voltage
}

type feed struct {
	from        string
	gauge       electric.Gauge
	lengthM     float64
	insulationC float64
	bundled     int
	enclosed    bool
	resistance  float64 // both conductors at the design's ambient
	ampacity    float64 // derated for the ambient and an enclosure when wire.temperature runs
	tableAmp    float64 // the conductor table's, at its own ambient
	derating    float64 // ampacity / tableAmp
	fuse        *fuse
	connectors  []connector
}

type fuse struct {
	ratingA   float64
	fast      bool
	voltageV  float64 // its DC rating, stated or its family's; 0: unknown
	breakingA float64 // its stated breaking capacity; 0: its family's, if any
	distanceM float64
	hasDist   bool
	sheathed  bool
	family    *electric.FuseFamily
}

type connector struct {
	family           string
	ratingA, ratingV float64 // ratingV 0: unknown
	fixesPolarity    bool    // the family's stored answer, or the connector's own without a family
}

// feedPtr is the JSON pointer of the node's feed.
func (n *node) feedPtr() string { return n.wirePtr[:len(n.wirePtr)-len("/wire")] }

func (n *node) isSource() bool { return n.kind == kindBattery || n.kind == kindSupply }

func (n *node) switching() bool { return n.kind == kindRegulator && n.topo != topoLinear }

// minWorkingInputV is the lowest input at which a switching regulator can
// hold its output: its stated minimum, else for a buck its output voltage;
// 0 when nothing bounds it.
func (n *node) minWorkingInputV() float64 {
	if n.minInputV > 0 {
		return n.minInputV
	}
	if n.topo == topoBuck {
		return n.outputV
	}
	return 0
}

func parseTopology(s string) topology {
	switch s {
	case domain.TopologyBuck:
		return topoBuck
	case domain.TopologyBoost:
		return topoBoost
	case domain.TopologyBuckBoost:
		return topoBuckBoost
	}
	return topoLinear
}

func or(v *float64, def float64) float64 {
	if v == nil {
		return def
	}
	return *v
}

// build resolves a validated design into engine nodes. Problems that only
// show once components and limits are known (an unknown component, a field
// neither the node nor its component gives, a chemistry or fuse family the
// limits do not store, a wire the conductor table cannot rate) come back as
// a *domain.ValidationError.
//
// heat, when not nil, derates each wire's ampacity for the ambient and an
// enclosure (wire.temperature runs).
func build(doc domain.Design, limits *Limits, components map[int64]domain.Component, ambientC float64, heat *wireHeat) ([]node, error) {
	var p domain.Problems
	rc := &ratingCache{gauges: map[string]electric.Gauge{}, amps: map[ampKey]ampEntry{}}
	nodes := make([]node, len(doc.Nodes))
	feeds := make([]feed, 0, len(doc.Nodes)) // every node's feed, with room for all of them
	ptrs := nodePointers(doc)
	index := make(map[string]int, len(doc.Nodes))
	for i, dn := range doc.Nodes {
		index[dn.ID] = i
	}
	for i, dn := range doc.Nodes {
		ptr := ptrs[i]
		if dn.Feed != nil {
			nodes[i].wirePtr = ptr
			ptr = ptr[:len(ptr)-len("/feed/wire")]
		}
		n := &nodes[i]
		n.id, n.ptr, n.typ, n.parent, n.mains = dn.ID, ptr, dn.Type, -1, dn.Mains
		if dn.ComponentID != nil {
			c, ok := components[*dn.ComponentID]
			if !ok {
				p.Add(ptr+"/component_id", "names component %d, which is not on the shelf", *dn.ComponentID)
				continue
			}
			n.mainsPart = c.MainsOrigin
			dn = c.FillNode(dn)
			var np domain.Problems
			dn.CheckValues(&np, ptr)
			dn.CheckComplete(&np, ptr)
			var ve *domain.ValidationError
			if errors.As(np.Err(), &ve) {
				for _, fp := range ve.Problems {
					p.Add(fp.Pointer, "%s (after filling the node from component %d)", fp.Detail, c.ID)
				}
				continue
			}
		}
		if dn.Feed != nil {
			n.parent = index[dn.Feed.From]
		}
		resolveNode(&p, n, dn, limits)
		if dn.Feed != nil {
			feeds = append(feeds, feed{})
			n.feed = &feeds[len(feeds)-1]
			resolveFeed(&p, n.feed, n.feedPtr(), *dn.Feed, limits, ambientC, heat, rc)
		}
	}
	return nodes, p.Err()
}

func resolveNode(p *domain.Problems, n *node, dn domain.Node, limits *Limits) {
	switch dn.Type {
	case domain.NodeBattery:
		n.kind = kindBattery
		chem, ok := limits.chemistry(dn.Chemistry)
		if !ok {
			p.Add(n.ptr+"/chemistry", "names %q, which the limits do not store (stored: %s)", dn.Chemistry,
				names(limits.Chemistries, func(c electric.Chemistry) string { return c.Name }))
			return
		}
		chem.FullV = or(dn.CellFullV, chem.FullV)
		chem.NominalV = or(dn.CellNominalV, chem.NominalV)
		chem.CutoffV = or(dn.CellCutoffV, chem.CutoffV)
		chem.InternalOhm = or(dn.CellInternalOhm, chem.InternalOhm)
		n.pack = &electric.Pack{Chem: chem, Series: *dn.Series, Parallel: *dn.Parallel, CellCapacityAh: *dn.CellCapacityMAh / 1000}
		if isLithium(chem.Name) {
			n.protection = &protection{
				overV: or(dn.ProtectionCellOverV, 0), underV: or(dn.ProtectionCellUnderV, 0),
				tripA: or(dn.ProtectionTripA, 0), perString: dn.ProtectionPerString,
			}
		}
		// The node's cell values override the stored ones; together they
		// must still describe a cell (cutoff below nominal, and so on).
		addJoined(p, n.ptr, n.pack.Validate())
		n.maxDischargeA = or(dn.MaxDischargeA, n.pack.MaxDischargeA())
	case domain.NodeSupply:
		n.kind = kindSupply
		n.outputV, n.maxA = *dn.OutputV, *dn.MaxA
		n.sinks, n.clampV = dn.SinksCurrent, or(dn.ClampV, 0)
		n.currentLimitA = or(dn.CurrentLimitA, 0)
	case domain.NodeRegulator:
		n.kind = kindRegulator
		n.topo = parseTopology(dn.Topology)
		n.outputV, n.maxOutA = *dn.OutputV, *dn.MaxOutputA
		n.quiescentA = or(dn.QuiescentA, 0)
		n.maxInputV = or(dn.MaxInputV, 0)
		n.clampV = or(dn.ClampV, 0)
		n.setReverse(dn)
		// A switching regulator's thermal resistance is optional: without
		// it, its heat is judged as a board's with no heat sink.
		n.thetaJA = or(dn.ThetaJACPerW, 0)
		n.tjMaxC = or(dn.TjMaxC, limits.Regulators.TjMaxC.Value)
		n.currentLimitA = or(dn.CurrentLimitA, 0)
		if n.topo == topoLinear {
			n.dropoutV = *dn.DropoutV
		} else {
			n.efficiency = or(dn.Efficiency, limits.Regulators.SwitchingEfficiency.Value)
			n.minInputV = or(dn.MinInputV, 0)
			n.sinks = dn.SinksCurrent
		}
	case domain.NodeDriver:
		n.kind = kindDriver
		n.maxInputV, n.continuousA = *dn.MaxInputV, *dn.ContinuousA
		n.peakRatingA = or(dn.PeakA, 0)
		n.quiescentA = or(dn.QuiescentA, 0)
		n.clampV = or(dn.ClampV, 0)
		n.setReverse(dn)
		n.currentLimitA = or(dn.CurrentLimitA, 0)
	case domain.NodeMotor:
		n.kind = kindMotor
		n.ratedV, n.stallA = *dn.RatedV, *dn.StallA
		if dn.RunningA != nil {
			n.runningA = *dn.RunningA
		} else {
			n.runningA = electric.Motor{RatedV: n.ratedV, NoLoadA: *dn.NoLoadA, StallA: n.stallA}.MaxEfficiencyA()
		}
		n.duty = or(dn.Duty, 1)
		n.setRange(dn)
	case domain.NodeLoad:
		n.kind = kindLoad
		n.currentA = *dn.CurrentA
		n.peakA = or(dn.PeakA, n.currentA)
		n.duty = or(dn.Duty, 1)
		n.critical = dn.Critical
		n.polarityFree = dn.PolarityFree
		n.setReverse(dn)
		n.setRange(dn)
	}
}

// setReverse reads the node's reverse-polarity protection: stating its
// drop says it has one.
func (n *node) setReverse(dn domain.Node) {
	n.revProtected, n.revDropV = dn.ReverseProtectionDropV != nil, or(dn.ReverseProtectionDropV, 0)
}

func (n *node) setRange(dn domain.Node) {
	n.hasMinV, n.hasMaxV = dn.MinV != nil, dn.MaxV != nil
	n.minV, n.maxV = or(dn.MinV, 0), or(dn.MaxV, 0)
}

// ratingCache remembers parsed gauges and ampacities for one review: a
// large design uses a handful of wire sizes many times over.
type ratingCache struct {
	gauges map[string]electric.Gauge
	amps   map[ampKey]ampEntry
}

type ampKey struct {
	label       string
	insulationC float64
	bundled     int
}

type ampEntry struct {
	amps float64
	err  error
}

func (rc *ratingCache) gauge(label string) (electric.Gauge, error) {
	if g, ok := rc.gauges[label]; ok {
		return g, nil
	}
	g, err := electric.ParseGauge(label)
	if err == nil {
		rc.gauges[label] = g
	}
	return g, err
}

func (rc *ratingCache) ampacity(t electric.ConductorTable, g electric.Gauge, insulationC float64, bundled int) (float64, error) {
	k := ampKey{g.Label, insulationC, bundled}
	e, ok := rc.amps[k]
	if !ok {
		e.amps, e.err = t.Ampacity(g, insulationC, bundled)
		rc.amps[k] = e
	}
	return e.amps, e.err
}

// nodePointers gives each node its JSON pointer, or for a node with a
// feed its wire's ("/nodes/N/feed/wire", of which the node's and the
// feed's are prefixes): all of them slices of one string.
func nodePointers(doc domain.Design) []string {
	// Written into a strings.Builder with room for the longest pointers a
	// design can have, which becomes the string without a copy.
	var b strings.Builder
	b.Grow(len(doc.Nodes) * len("/nodes/0000/feed/wire"))
	ptrs := make([]string, len(doc.Nodes))
	ends := make([]int, len(doc.Nodes))
	var digits [20]byte
	for i, dn := range doc.Nodes {
		b.WriteString("/nodes/")
		b.Write(strconv.AppendInt(digits[:0], int64(i), 10))
		if dn.Feed != nil {
			b.WriteString("/feed/wire")
		}
		ends[i] = b.Len()
	}
	all, start := b.String(), 0
	for i, end := range ends {
		ptrs[i], start = all[start:end], end
	}
	return ptrs
}

// resolveFeed fills f from the document's feed; on a wire it cannot read
// it leaves f empty and reports the problem.
func resolveFeed(p *domain.Problems, f *feed, ptr string, df domain.Feed, limits *Limits, ambientC float64, heat *wireHeat, rc *ratingCache) {
	w := df.Wire
	g, err := rc.gauge(w.Gauge)
	if err != nil { // Validate has already said so; keep the pointer honest anyway
		p.Add(ptr+"/wire/gauge", "%v", err)
		return
	}
	*f = feed{
		from: df.From, gauge: g, lengthM: w.LengthM, insulationC: or(w.InsulationC, 105), bundled: 1, enclosed: w.Enclosed,
	}
	if w.Bundled != nil {
		f.bundled = *w.Bundled
	}
	f.resistance = electric.LoopResistanceOhm(g, w.LengthM, ambientC)
	f.tableAmp, err = rc.ampacity(limits.Conductors, g, f.insulationC, f.bundled)
	if err != nil {
		p.Add(ptr+"/wire", "the stored conductor table cannot rate this wire: %v", err)
	}
	f.derating = 1
	if heat != nil {
		f.derating = heat.factor(f.insulationC, ambientC, f.enclosed)
	}
	f.ampacity = f.tableAmp * f.derating
	if df.Fuse != nil {
		fu := df.Fuse
		f.fuse = &fuse{
			ratingA: fu.RatingA, fast: fu.Speed == domain.FuseFast, voltageV: or(fu.VoltageRatingV, 0),
			breakingA: or(fu.BreakingCapacityA, 0),
			distanceM: or(fu.DistanceFromSourceM, 0), hasDist: fu.DistanceFromSourceM != nil, sheathed: fu.Sheathed,
		}
		if fu.Family != "" {
			fam, ok := limits.fuseFamily(fu.Family)
			if !ok {
				p.Add(ptr+"/fuse/family", "names %q, which the limits do not store (stored: %s)", fu.Family,
					names(limits.Fuses.Families, func(f electric.FuseFamily) string { return f.Name }))
			} else {
				f.fuse.family = &fam
				// Only a DC rating stands in: a family's AC rating (its
				// max_voltage_v, for 5x20 cartridges) never does.
				if f.fuse.voltageV == 0 {
					f.fuse.voltageV = fam.DCVoltageV
				}
			}
		}
	}
	for k, dc := range df.Connectors {
		c := connector{family: dc.Family, ratingA: or(dc.RatingA, 0), ratingV: or(dc.RatingV, 0),
			fixesPolarity: dc.FixesPolarity != nil && *dc.FixesPolarity}
		if dc.Family != "" {
			fam, ok := limits.connectorFamily(dc.Family)
			switch {
			case ok:
				c.ratingA = or(dc.RatingA, fam.RatingA)
				c.ratingV = or(dc.RatingV, fam.RatingV)
				// A family that does not say (limits stored before it was
				// asked) counts as not fixing polarity.
				c.fixesPolarity = fam.FixesPolarity != nil && *fam.FixesPolarity
			case dc.RatingA == nil:
				p.Add(fmt.Sprintf("%s/connectors/%d/rating_a", ptr, k),
					"is required: the limits store no connector family %q to take it from (stored: %s)", dc.Family,
					names(limits.Connectors, func(c ConnectorFamily) string { return c.Family }))
			}
		}
		f.connectors = append(f.connectors, c)
	}
}
