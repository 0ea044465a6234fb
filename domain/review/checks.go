package review

import (
	"fmt"
	"maps"
	"math"
	"strconv"
	"strings"

	"wattshelf/domain/electric"
)

// cond is one way a check can go wrong: crossed means it did. A check
// takes the worst crossed condition; when none is crossed it passes and
// shows the condition closest to crossing. what names the condition for
// the check's message function, which runs only for the one shown.
type cond struct {
	what         string
	level        Status
	crossed      bool
	value, limit float64
	unit         string
	margin       float64 // distance from crossing, as a share of the limit
	// The design did not give what value or limit would be worked out
	// from: the check says so, and shows no number for it.
	noValue, noLimit bool
}

func scale(x float64) float64 { return max(math.Abs(x), 1e-9) }

// above is crossed when value > limit.
func above(what string, level Status, value, limit float64, unit string) cond {
	return cond{what: what, level: level, crossed: value > limit, value: value, limit: limit, unit: unit,
		margin: (limit - value) / scale(limit)}
}

// atLeast is crossed when value ≥ limit.
func atLeast(what string, level Status, value, limit float64, unit string) cond {
	return cond{what: what, level: level, crossed: value >= limit, value: value, limit: limit, unit: unit,
		margin: (limit - value) / scale(limit)}
}

// below is crossed when value < limit.
func below(what string, level Status, value, limit float64, unit string) cond {
	return cond{what: what, level: level, crossed: value < limit, value: value, limit: limit, unit: unit,
		margin: (value - limit) / scale(limit)}
}

// flagged is crossed when bad holds; value and limit are shown as they are.
func flagged(what string, level Status, bad bool, value, limit float64, unit string) cond {
	m := 1.0
	if bad {
		m = 0
	}
	return cond{what: what, level: level, crossed: bad, value: value, limit: limit, unit: unit, margin: m}
}

// unknown is crossed always: the design did not give the limit value is
// checked against, which is itself the finding.
func unknown(what string, level Status, value float64, unit string) cond {
	c := flagged(what, level, true, value, 0, unit)
	c.noLimit = true
	return c
}

// newRules are the rule-and-source sentences of each check, built once
// per limits version (Prepare) and written once in each report.
func newRules(l Limits) map[string]Rule {
	u, m := l.Policy.UtilisationPct, l.Policy.ThermalMarginC
	f, d := l.Fuses, l.VoltageDrop
	warnAbove := fmt.Sprintf("warn above %g %% (%s)", u.Value, cite(u.Source))
	// A rule's source is cited; the whole text stays in the limits version
	// the report names.
	datasheet := "the part's datasheet"
	rating := Rule{Basis: "the part's rating (its datasheet); " + warnAbove, Source: datasheet + "; " + cite(u.Source)}
	rules := map[string]Rule{
		CheckVoltageRange: {Basis: "the part's min_v and max_v against its input range at the operating point: full source and no " +
			"load at the high end, cutoff and feed drops at the low end", Source: datasheet},
		CheckRegulatorHeadroom: {Basis: "a linear regulator needs an input of at least output_v + dropout_v, and at most " +
			"max_input_v; a switching regulator needs an input inside its min_input_v to max_input_v window, and a feed " +
			"that carries P/η: V_parent ≥ 2·√(R_feed·P/η)", Source: datasheet},
		CheckRegulatorCurrent: rating,
		CheckRegulatorThermal: {Basis: fmt.Sprintf("T_j = ambient + P·θ_JA at the input high end; fail at tj_max_c, warn within "+
			"%g °C (%s)", m.Value, cite(m.Source)), Source: datasheet + "; " + cite(m.Source)},
		CheckDriverVoltage: rating,
		CheckDriverCurrent: rating,
		CheckSourceCurrent: {Basis: "the source's max_discharge_a (default: C rate × capacity) or max_a; fail on the running " +
			"current, warn on the surge or when its sag takes a critical load below min_v", Source: datasheet},
		CheckSourceRuntime: {Basis: "usable capacity, full to cutoff or first brownout on the discharge curve (Peukert where " +
			"stored), over the average current", Source: "the limits' chemistry table"},
		CheckWireAmpacity: {Basis: fmt.Sprintf("ampacity by insulation and bundling from %s; %s", cite(l.Conductors.Source),
			warnAbove), Source: cites(l.Conductors.Source, u.Source)},
		CheckWireDrop: {Basis: fmt.Sprintf("drop over both copper conductors (IEC 60028) as a share of the parent's nominal "+
			"voltage: fail over %g %%, warn over %g %% on a critical load (%s)", d.NonCriticalPct.Value, d.CriticalPct.Value,
			cites(d.NonCriticalPct.Source, d.CriticalPct.Source)), Source: cites(d.NonCriticalPct.Source, d.CriticalPct.Source)},
		CheckFuseMissing: {Basis: "a source's feed needs a fuse when the source can deliver more than the wire carries " +
			"(33 CFR 183.455); " +
			"otherwise one is advised", Source: "33 CFR 183.455"},
		CheckFuseRating: {Basis: fmt.Sprintf("at most %g × the ampacity it protects (%s), at least %g × the running current "+
			"(%s); a DC voltage rating at least the circuit's (fuse.interrupt's, where it runs), a fast fuse at least the motor "+
			"surge, a standard rating of its series",
			f.MaxAmpacityMultiple.Value, cite(f.MaxAmpacityMultiple.Source), f.ContinuousLoadFactor.Value,
			cite(f.ContinuousLoadFactor.Source)), Source: cites(f.MaxAmpacityMultiple.Source, f.ContinuousLoadFactor.Source)},
		CheckFusePlacement: {Basis: fmt.Sprintf("within %g m of the source, %g m when sheathed (%s)", f.MaxDistanceM.Value,
			f.MaxDistanceSheathedM.Value, cites(f.MaxDistanceM.Source, f.MaxDistanceSheathedM.Source)),
			Source: cites(f.MaxDistanceM.Source, f.MaxDistanceSheathedM.Source)},
		CheckConnectorRating: {Basis: "the connector's rating (the design's or its stored family's); " + warnAbove,
			Source: "the connector's datasheet or the limits' connector families; " + cite(u.Source)},
		CheckScopeMains: {Basis: fmt.Sprintf("mains is out of scope, and so is any source above %g V DC (%s)",
			l.Policy.InScopeMaxV.Value, cite(l.Policy.InScopeMaxV.Source)), Source: cite(l.Policy.InScopeMaxV.Source)},
	}
	maps.Copy(rules, partHazardRules(l))
	maps.Copy(rules, faultRules(l))
	return rules
}

// cite is the citation a stored source opens with: the text before its
// first colon or semicolon ("33 CFR 183.455: at most 150 % of …" cites
// "33 CFR 183.455"), saying so when the rest marks something as recalled
// from memory.
func cite(source string) string {
	head, rest := source, ""
	if i := strings.IndexAny(source, ":;"); i >= 0 {
		head, rest = source[:i], source[i:]
	}
	head = strings.TrimSpace(head)
	if strings.Contains(rest, "from memory") && !strings.Contains(head, "from memory") {
		head += ", partly from memory"
	}
	return head
}

// cites cites two sources, once when they cite the same.
func cites(a, b string) string {
	ca, cb := cite(a), cite(b)
	if ca == cb {
		return ca
	}
	return ca + "; " + cb
}

// num prints a value with about three significant digits.
func num(x float64) string { return string(appendNum(nil, x)) }

func pct(share float64) string { return strconv.FormatFloat(share*100, 'f', 0, 64) + " %" }

// appendNum is num for a byte buffer.
func appendNum(b []byte, x float64) []byte {
	switch ax := math.Abs(x); {
	case ax >= 100:
		return strconv.AppendFloat(b, x, 'f', 0, 64)
	case ax >= 10:
		return strconv.AppendFloat(b, x, 'f', 1, 64)
	case ax >= 1 || ax == 0:
		return strconv.AppendFloat(b, x, 'f', 2, 64)
	}
	return strconv.AppendFloat(b, x, 'g', 3, 64)
}

// piece is a part of a sentence: text, or a number printed as num does.
type piece struct {
	text   string
	number float64
	isNum  bool
}

func txt(s string) piece  { return piece{text: s} }
func val(x float64) piece { return piece{number: x, isNum: true} }

// say writes a sentence of pieces into the review's text, where emit
// finds it, and returns "". The passing sentences of the frequent checks
// use it: a 5,000-node design writes tens of thousands of them, fmt boxes
// every argument, and a string apiece would be an allocation apiece.
func (r *reviewer) say(parts ...piece) string {
	// Built on the stack (a longer sentence moves to the heap) and
	// written to the text in one piece.
	var sentence [256]byte
	b := sentence[:0]
	for _, p := range parts {
		if p.isNum {
			b = appendNum(b, p.number)
		} else {
			b = append(b, p.text...)
		}
	}
	r.text.Write(b)
	return ""
}

// emit records a check from its conditions. msg writes the sentence for
// the condition shown, with say or as a string of its own; passed says
// none was crossed. The message is filled in by finishMessages.
func (r *reviewer) emit(check, nodeID string, conds []cond, msg func(c cond, passed bool) string) {
	pick, status := -1, Pass
	for i := range conds {
		if c := &conds[i]; c.crossed && c.level.Severity() > status.Severity() {
			pick, status = i, c.level
		}
	}
	passed := pick < 0
	if passed {
		for i := range conds {
			if pick < 0 || conds[i].margin < conds[pick].margin {
				pick = i
			}
		}
	}
	c := conds[pick]
	if r.quiet {
		r.add(Check{Check: check, Node: nodeID, Status: status})
		return
	}
	start := r.text.Len()
	if own := msg(c, passed); own != "" {
		r.text.WriteString(own)
	}
	ch := Check{Check: check, Node: nodeID, Status: status, Unit: c.unit}
	if !c.noValue {
		ch.Value = r.nums.hold(c.value)
	}
	hard, warn := thresholds(pick, conds)
	if hard != nil && !hard.noLimit {
		ch.Limit = r.nums.hold(hard.limit)
	}
	if warn != nil && !warn.noLimit {
		ch.WarnAt = r.nums.hold(warn.limit)
	}
	r.add(ch) // cleans the numbers
	r.spans[len(r.checks)-1] = textSpan{int32(start), int32(r.text.Len())}
}

func ptrTo(x float64) *float64 { return &x }

// thresholds are the hard limit and the warning threshold that go with
// the condition shown, conds[pick]: its own, and the condition of the
// other level on the same quantity (the same value and unit) or, failing
// that, with the same threshold, where there is one. They point into
// conds, so nothing here is allocated.
func thresholds(pick int, conds []cond) (hard, warn *cond) {
	c := &conds[pick]
	if c.level == Fail {
		hard = c
	} else {
		warn = c
	}
	// Another condition on the same quantity first, else one with the same
	// threshold (a rating that the running current must not pass and the
	// surge should not).
	for _, sameValue := range []bool{true, false} {
		for i := range conds {
			o := &conds[i]
			if o.unit != c.unit || o.noValue != c.noValue || (sameValue && o.value != c.value) ||
				(!sameValue && o.limit != c.limit) {
				continue
			}
			if o.level == Fail && hard == nil {
				hard = o
			}
			if o.level == Warn && warn == nil {
				warn = o
			}
		}
	}
	return hard, warn
}

// textSpan is where a check's message lies in the review's text; start −1
// means the check was added with its message.
type textSpan struct{ start, end int32 }

// finishMessages gives each emitted check its part of the review's text,
// which a strings.Builder turns into a string without copying it: one
// allocation for every message.
func (r *reviewer) finishMessages() {
	all := r.text.String()
	for i, sp := range r.spans {
		if sp.start >= 0 {
			r.checks[i].Message = all[sp.start:sp.end]
		}
	}
}

func (r *reviewer) add(c Check) {
	for _, x := range []*float64{c.Value, c.Limit, c.WarnAt} {
		if x != nil {
			*x = clean(*x)
		}
	}
	r.checks = append(r.checks, c)
	r.spans = append(r.spans, textSpan{-1, -1})
}

// sourceOf is the battery or supply at the top of n's tree.
func (r *reviewer) sourceOf(n *node) *node { return &r.t.nodes[n.root] }

// brownoutText says at what pack voltage and share of its charge a node's
// input falls to v, when a battery feeds it.
func (r *reviewer) brownoutText(n *node, v float64) string {
	src := r.sourceOf(n)
	if src.kind != kindBattery {
		return ""
	}
	at := n.path.packVFor(v)
	if math.IsInf(at, 1) || at > src.pack.FullV() {
		return " even with the pack full"
	}
	return fmt.Sprintf(" once %s falls to %s V, after about %s of its charge", src.id, num(at), pct(src.pack.UsableShare(at)))
}

func (r *reviewer) voltageRange(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	conds := room[:0]
	if n.hasMaxV {
		conds = append(conds, above("high", Fail, n.vHigh, n.maxV, "V"))
	}
	if n.hasMinV && n.minV > 0 {
		conds = append(conds, below("nominal", Fail, n.vNom, n.minV, "V"), below("low", Warn, n.vLow, n.minV, "V"))
	}
	if len(conds) == 0 {
		conds = append(conds, unknown("unknown", Warn, n.vHigh, "V"))
	}
	r.emit(CheckVoltageRange, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			switch {
			case n.hasMinV && n.hasMaxV:
				return r.say(txt(n.id), txt(" sees "), val(n.vLow), txt("–"), val(n.vHigh), txt(" V (nominal "), val(n.vNom),
					txt(" V), inside its "), val(n.minV), txt("–"), val(n.maxV), txt(" V range."))
			case n.hasMaxV:
				return r.say(txt(n.id), txt(" sees "), val(n.vLow), txt("–"), val(n.vHigh), txt(" V (nominal "), val(n.vNom),
					txt(" V), within its limit of "), val(n.maxV), txt(" V."))
			}
			return r.say(txt(n.id), txt(" sees "), val(n.vLow), txt("–"), val(n.vHigh), txt(" V (nominal "), val(n.vNom),
				txt(" V), above its minimum of "), val(n.minV), txt(" V."))
		case c.what == "high":
			return fmt.Sprintf("%s can see %s V with a full source, above its max_v of %s V: it can be damaged. "+
				"Add a regulator or use a lower-voltage source.", n.id, num(n.vHigh), num(n.maxV))
		case c.what == "nominal":
			return fmt.Sprintf("%s gets only %s V at the source's nominal voltage, below its min_v of %s V: it will not work "+
				"reliably. Raise the supply voltage or shorten and thicken its feeds.", n.id, num(n.vNom), num(n.minV))
		case c.what == "low":
			return fmt.Sprintf("%s browns out: its input falls below its min_v of %s V%s (down to %s V at the source's cutoff).",
				n.id, num(n.minV), r.brownoutText(n, n.minV), num(n.vLow))
		}
		return fmt.Sprintf("%s gives no min_v above 0 and no max_v, so its voltage (%s–%s V) could not be checked.",
			n.id, num(n.vLow), num(n.vHigh))
	})
}

func (r *reviewer) regulatorHeadroom(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	conds := room[:0]
	if n.maxInputV > 0 {
		conds = append(conds, above("overvoltage", Fail, n.vHigh, n.maxInputV, "V"))
	}
	need := n.outputV + n.dropoutV
	vp := r.t.nodes[n.parent].outLow - n.revDropV // after its reverse-polarity protection
	var powerIn, needVp float64
	lo := n.minWorkingInputV()
	if n.topo == topoLinear {
		conds = append(conds, below("never", Fail, n.vHigh, need, "V"), below("dropout", Warn, n.vLow, need, "V"))
	} else {
		powerIn = n.outputV * n.outRun / n.efficiency
		needVp = 2 * math.Sqrt(n.feed.resistance*powerIn)
		carry := below("collapse", Fail, vp, needVp, "V")
		// The solver's verdict rules: it also sees the drops upstream.
		carry.crossed = n.collapsed || !r.t.converged
		conds = append(conds, carry)
		if lo > 0 {
			conds = append(conds, below("never", Fail, n.vHigh, lo, "V"), below("dropout", Warn, n.vLow, lo, "V"))
		}
		if n.topo == topoBoost {
			conds = append(conds, above("step-down", Fail, n.vLow, n.outputV, "V"))
		}
	}
	r.emit(CheckRegulatorHeadroom, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt(n.id), txt("'s input stays within "), val(n.vLow), txt("–"), val(n.vHigh), txt(" V and it holds "),
				val(n.outputV), txt(" V throughout."))
		case c.what == "overvoltage":
			return fmt.Sprintf("%s's input reaches %s V with a full source, above its max_input_v of %s V: it can be damaged.",
				n.id, num(n.vHigh), num(n.maxInputV))
		case c.what == "never" && n.topo == topoLinear:
			return fmt.Sprintf("%s can never deliver %s V: even with a full source its input is %s V, below output_v + dropout_v "+
				"= %s V.", n.id, num(n.outputV), num(n.vHigh), num(need))
		case c.what == "never":
			return fmt.Sprintf("%s can never regulate: even with a full source its input is %s V, below the %s V it needs.",
				n.id, num(n.vHigh), num(lo))
		case c.what == "dropout" && n.topo == topoLinear:
			return fmt.Sprintf("%s drops out before the source is empty: it needs %s V at its input%s; its input falls to %s V "+
				"and its output to %s V.", n.id, num(need), r.brownoutText(n, need), num(n.vLow), num(n.outLow))
		case c.what == "dropout":
			return fmt.Sprintf("%s drops out before the source is empty: it needs %s V at its input%s; its input falls to %s V.",
				n.id, num(lo), r.brownoutText(n, lo), num(n.vLow))
		case c.what == "collapse":
			return fmt.Sprintf("The feed to %s cannot carry the %s W it draws (%s W out at %s efficiency) at the source's low "+
				"end: its input would collapse. It needs at least %s V before the feed and gets %s V; use a thicker or "+
				"shorter wire or a higher source voltage.", n.id, num(powerIn), num(n.outputV*n.outRun), pct(n.efficiency),
				num(needVp), num(vp))
		}
		return fmt.Sprintf("%s is a boost regulator whose input (at least %s V) is always above its output_v of %s V: "+
			"it can never step down to it.", n.id, num(n.vLow), num(n.outputV))
	})
}

func (r *reviewer) regulatorCurrent(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	u := r.limits.utilisation()
	conds := append(room[:0],
		above("peak", Fail, n.outPeak, n.maxOutA, "A"),
		above("run", Warn, n.outRun, u*n.maxOutA, "A"))
	r.emit(CheckRegulatorCurrent, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt(n.id), txt(" delivers "), val(n.outRun), txt(" A (surges "), val(n.outPeak), txt(" A) of its "),
				val(n.maxOutA), txt(" A rating."))
		case c.what == "peak":
			return fmt.Sprintf("%s must deliver surges of %s A, above its max_output_a of %s A.", n.id, num(n.outPeak), num(n.maxOutA))
		}
		return fmt.Sprintf("%s runs at %s A, over %s of its max_output_a of %s A: little margin.", n.id, num(n.outRun),
			pct(u), num(n.maxOutA))
	})
}

// junction is a regulator's heat and junction temperature at its input
// high end: a linear one's drop times its current, a switching one's
// loss (heat); both with the quiescent draw at the input.
func (r *reviewer) junction(n *node) (powerW, tjC float64) {
	if n.switching() {
		powerW = heat(n)
	} else {
		powerW = max(electric.LinearDissipationW(n.vHigh, n.outHigh, n.outRun, n.quiescentA), 0)
	}
	return powerW, electric.JunctionTempC(r.ambient, powerW, n.thetaJA)
}

func (r *reviewer) regulatorThermal(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	powerW, tj := r.junction(n)
	margin := r.limits.Policy.ThermalMarginC.Value
	conds := append(room[:0],
		atLeast("limit", Fail, tj, n.tjMaxC, "°C"),
		atLeast("margin", Warn, tj, n.tjMaxC-margin, "°C"))
	r.emit(CheckRegulatorThermal, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt(n.id), txt(" sheds "), val(powerW), txt(" W; its junction stays at "), val(tj), txt(" °C, well below "),
				val(n.tjMaxC), txt(" °C."))
		case c.what == "limit":
			remedy := "Use a switching regulator, a heatsink, or a lower input voltage."
			if n.switching() {
				remedy = "Add a heatsink, or use a more efficient or larger converter."
			}
			return fmt.Sprintf("%s sheds %s W; its junction reaches %s °C at %s °C ambient, at or over its %s °C limit. %s",
				n.id, num(powerW), num(tj), num(r.ambient), num(n.tjMaxC), remedy)
		}
		return fmt.Sprintf("%s sheds %s W; its junction reaches %s °C, within %s °C of its %s °C limit.", n.id, num(powerW),
			num(tj), num(margin), num(n.tjMaxC))
	})
}

func (r *reviewer) driverChecks(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	u := r.limits.utilisation()
	conds := append(room[:0],
		above("over", Fail, n.vHigh, n.maxInputV, "V"),
		above("near", Warn, n.vHigh, u*n.maxInputV, "V"))
	r.emit(CheckDriverVoltage, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt(n.id), txt("'s input peaks at "), val(n.vHigh), txt(" V of its "), val(n.maxInputV), txt(" V rating."))
		case c.what == "over":
			return fmt.Sprintf("%s's input reaches %s V with a full source, above its max_input_v of %s V.", n.id, num(n.vHigh), num(n.maxInputV))
		}
		return fmt.Sprintf("%s's input reaches %s V, over %s of its max_input_v of %s V: motor spikes can push it over.",
			n.id, num(n.vHigh), pct(u), num(n.maxInputV))
	})
	conds = append(room[:0], above("run", Fail, n.outRun, n.continuousA, "A"))
	if n.peakRatingA > 0 {
		conds = append(conds, above("peak", Fail, n.outPeak, n.peakRatingA, "A"))
	}
	conds = append(conds, above("run near", Warn, n.outRun, u*n.continuousA, "A"))
	if n.peakRatingA > 0 {
		conds = append(conds, above("peak near", Warn, n.outPeak, u*n.peakRatingA, "A"))
	}
	r.emit(CheckDriverCurrent, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed && n.peakRatingA > 0:
			return r.say(txt(n.id), txt(" carries "), val(n.outRun), txt(" A of its "), val(n.continuousA),
				txt(" A continuous rating, and surges of "), val(n.outPeak), txt(" A of its "), val(n.peakRatingA), txt(" A peak rating."))
		case passed:
			return fmt.Sprintf("%s carries %s A of its %s A continuous rating; surges reach %s A (no peak_a given to check them against).",
				n.id, num(n.outRun), num(n.continuousA), num(n.outPeak))
		case c.what == "run":
			return fmt.Sprintf("%s carries %s A continuously, above its continuous_a of %s A.", n.id, num(n.outRun), num(n.continuousA))
		case c.what == "peak":
			return fmt.Sprintf("%s must pass surges of %s A (motor stall), above its peak_a of %s A.", n.id, num(n.outPeak), num(n.peakRatingA))
		case c.what == "run near":
			return fmt.Sprintf("%s carries %s A, over %s of its continuous_a of %s A.", n.id, num(n.outRun), pct(u), num(n.continuousA))
		}
		return fmt.Sprintf("%s must pass surges of %s A, over %s of its peak_a of %s A.", n.id, num(n.outPeak), pct(u), num(n.peakRatingA))
	})
}

func (r *reviewer) sourceCurrent(n *node, criticalNeed float64, criticalID string) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	rating, ratingName := n.maxA, "max_a"
	if n.kind == kindBattery {
		rating, ratingName = n.maxDischargeA, "max_discharge_a"
	}
	conds := append(room[:0],
		above("run", Fail, n.run, rating, "A"),
		above("peak", Warn, n.peak, rating, "A"))
	var sag float64
	if n.kind == kindBattery && !math.IsInf(criticalNeed, 0) {
		sag = n.vNom - n.peak*n.pack.InternalOhm()
		conds = append(conds, below("sag", Warn, sag, criticalNeed, "V"))
	}
	r.emit(CheckSourceCurrent, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt(n.id), txt(" delivers "), val(n.run), txt(" A (surges "), val(n.peak), txt(" A) of its "), val(rating),
				txt(" A rating."))
		case c.what == "run":
			return fmt.Sprintf("%s must deliver %s A continuously, above its %s of %s A.", n.id, num(n.run), ratingName, num(rating))
		case c.what == "peak":
			return fmt.Sprintf("%s must deliver surges of %s A, above its %s of %s A.", n.id, num(n.peak), ratingName, num(rating))
		}
		return fmt.Sprintf("A surge of %s A sags %s from %s V to %s V through its %s Ω internal resistance; the critical "+
			"load %s needs the pack at %s V or more.", num(n.peak), n.id, num(n.vNom), num(sag), num(n.pack.InternalOhm()),
			criticalID, num(criticalNeed))
	})
}

// sourceRuntime compares a battery's runtime with the design's target; a
// design without one still gets the runtime stated, against a limit of 0.
func (r *reviewer) sourceRuntime(n *node, hours float64, targetH *float64, limitedBy string) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	target := 0.0
	if targetH != nil {
		target = *targetH
	}
	conds := append(room[:0], below("short", Warn, hours, target, "h"))
	r.emit(CheckSourceRuntime, n.id, conds, func(c cond, passed bool) string {
		if targetH == nil {
			return fmt.Sprintf("%s lasts about %s h at %s A average (limited by %s); the design sets no target_runtime_h.", n.id,
				num(hours), num(n.avg), limitedBy)
		}
		if passed {
			return fmt.Sprintf("%s lasts about %s h at %s A average (limited by %s), meeting the %s h target.", n.id, num(hours),
				num(n.avg), limitedBy, num(target))
		}
		return fmt.Sprintf("%s lasts about %s h at %s A average (limited by %s), short of the %s h target.", n.id, num(hours),
			num(n.avg), limitedBy, num(target))
	})
}

func (r *reviewer) wireAmpacity(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	f := n.feed
	u := r.limits.utilisation()
	conds := append(room[:0],
		above("over", Fail, n.run, f.ampacity, "A"),
		above("near", Warn, n.run, u*f.ampacity, "A"))
	r.emit(CheckWireAmpacity, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt("The "), txt(f.gauge.Label), txt(" feed to "), txt(n.id), txt(" carries "), val(n.run), txt(" A of its "),
				val(f.ampacity), txt(" A ampacity."))
		case c.what == "over":
			return fmt.Sprintf("The %s feed to %s carries %s A, above its ampacity of %s A: it will overheat. Use a thicker wire.",
				f.gauge.Label, n.id, num(n.run), num(f.ampacity))
		}
		return fmt.Sprintf("The %s feed to %s carries %s A, over %s of its ampacity of %s A.", f.gauge.Label, n.id, num(n.run),
			pct(u), num(f.ampacity))
	})
}

// dropBase is the voltage a feed's drop is a share of: the parent's
// nominal output, or, when a regulator that cannot work puts out nothing,
// the output it is meant to hold, so its own headroom finding stays the
// only one about it and the wire is judged on its own merits.
func (r *reviewer) dropBase(n *node) float64 {
	p := &r.t.nodes[n.parent]
	if p.outNom <= 0 && p.kind == kindRegulator {
		return p.outputV
	}
	return p.outNom
}

// dropPct is a feed's drop at the running current as a percentage of
// dropBase; a parent with no voltage at all gives no share.
func (r *reviewer) dropPct(n *node) (dropV, share float64) {
	dropV = n.run * n.feed.resistance
	if base := r.dropBase(n); base > 0 {
		return dropV, 100 * dropV / base
	}
	return dropV, 0
}

func (r *reviewer) wireDrop(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	dropV, share := r.dropPct(n)
	lim := r.limits.VoltageDrop
	base := r.dropBase(n)
	conds := append(room[:0], above("over", Fail, share, lim.NonCriticalPct.Value, "%"))
	if n.critical {
		conds = append(conds, above("critical", Warn, share, lim.CriticalPct.Value, "%"))
	}
	r.emit(CheckWireDrop, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt("The feed to "), txt(n.id), txt(" loses "), val(dropV), txt(" V ("), val(share), txt(" %), within the "),
				val(c.limit), txt(" % limit."))
		case c.what == "over":
			return fmt.Sprintf("The feed to %s loses %s V, %s %% of %s V: over the %s %% limit. Use a thicker or shorter wire.",
				n.id, num(dropV), num(share), num(base), num(c.limit))
		}
		return fmt.Sprintf("The feed to %s, a critical load, loses %s V, %s %% of %s V: over the %s %% limit for critical loads.",
			n.id, num(dropV), num(share), num(base), num(c.limit))
	})
}

func (r *reviewer) fuseMissing(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	src := &r.t.nodes[n.parent]
	deliver, what := src.maxA, "its max_a"
	if src.kind == kindBattery {
		deliver, what = src.pack.ShortCircuitA(), "a short circuit of the full pack"
	}
	f := n.feed
	fused := f.fuse != nil
	conds := append(room[:0],
		flagged("burns", Fail, !fused && deliver > f.ampacity, deliver, f.ampacity, "A"),
		flagged("advised", Warn, !fused, deliver, f.ampacity, "A"))
	r.emit(CheckFuseMissing, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt("The feed from "), txt(src.id), txt(" to "), txt(n.id), txt(" is fused at "), val(f.fuse.ratingA), txt(" A."))
		case c.what == "burns":
			return fmt.Sprintf("The feed from %s to %s has no fuse, and %s can deliver %s A (%s), more than the %s A its %s wire "+
				"carries: a short would set the wire alight. Fuse it next to %s.", src.id, n.id, src.id, num(deliver), what,
				num(f.ampacity), f.gauge.Label, src.id)
		}
		return fmt.Sprintf("The feed from %s to %s has no fuse. %s can deliver at most %s A, within what the wire carries, "+
			"but a fuse next to the source is still advised.", src.id, n.id, src.id, num(deliver))
	})
}

func (r *reviewer) fuseRating(n *node, protectedAmp float64, protectedID string) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	fu := n.feed.fuse
	l := r.limits.Fuses
	maxRating := l.MaxAmpacityMultiple.Value * protectedAmp
	minRating := l.ContinuousLoadFactor.Value * n.run
	conds := append(room[:0], above("too big", Fail, fu.ratingA, maxRating, "A"))
	// fuse.interrupt judges the voltage rating where it runs, with the
	// breaking capacity; under limits that predate it this check does.
	voltage := fu.voltageV > 0 && !r.runs(CheckFuseInterrupt)
	if voltage {
		conds = append(conds, below("voltage", Fail, fu.voltageV, n.vHigh, "V"))
	}
	conds = append(conds, below("too small", Warn, fu.ratingA, minRating, "A"))
	if fu.fast && n.hasMotor {
		conds = append(conds, below("surge", Warn, fu.ratingA, n.peak, "A"))
	}
	series := l.Families
	if fu.family != nil {
		series = []electric.FuseFamily{*fu.family}
	}
	standard, next := false, 0.0
	for _, fam := range series {
		if electric.IsStandardRating(fam.RatingsA, fu.ratingA) {
			standard = true
		}
		if r, ok := electric.NextStandardRating(fam.RatingsA, fu.ratingA); ok && (next == 0 || r < next) {
			next = r
		}
	}
	conds = append(conds, flagged("standard", Warn, !standard, fu.ratingA, next, "A"))
	r.emit(CheckFuseRating, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			if voltage {
				return r.say(txt("The "), val(fu.ratingA), txt(" A fuse on the feed to "), txt(n.id), txt(" sits between "), val(minRating),
					txt(" A (running current × "), val(l.ContinuousLoadFactor.Value), txt(") and "), val(maxRating),
					txt(" A (the wire it protects × "), val(l.MaxAmpacityMultiple.Value), txt("), and its "), val(fu.voltageV),
					txt(" V rating covers the "), val(n.vHigh), txt(" V circuit."))
			}
			r.say(txt("The "), val(fu.ratingA), txt(" A fuse on the feed to "), txt(n.id), txt(" sits between "), val(minRating),
				txt(" A (running current × "), val(l.ContinuousLoadFactor.Value), txt(") and "), val(maxRating),
				txt(" A (the wire it protects × "), val(l.MaxAmpacityMultiple.Value))
			if r.runs(CheckFuseInterrupt) {
				return r.say(txt(")."))
			}
			return r.say(txt("); give voltage_rating_v or a family to check its DC voltage rating."))
		case c.what == "too big":
			return fmt.Sprintf("The %s A fuse on the feed to %s is too big to protect the wire to %s (%s A ampacity): at most %s A.",
				num(fu.ratingA), n.id, protectedID, num(protectedAmp), num(maxRating))
		case c.what == "voltage":
			return fmt.Sprintf("The fuse on the feed to %s is rated %s V DC, below the %s V the circuit reaches: it may not break the arc.",
				n.id, num(fu.voltageV), num(n.vHigh))
		case c.what == "too small":
			return fmt.Sprintf("The %s A fuse on the feed to %s is below %s × its %s A running current (%s A): it may blow in normal use.",
				num(fu.ratingA), n.id, num(l.ContinuousLoadFactor.Value), num(n.run), num(minRating))
		case c.what == "surge":
			return fmt.Sprintf("The fast %s A fuse on the feed to %s is below the %s A motor surge it will see: use a slow fuse.",
				num(fu.ratingA), n.id, num(n.peak))
		}
		series := "any stored fuse series"
		if fu.family != nil {
			series = "the " + fu.family.Name + " series"
		}
		return fmt.Sprintf("%s A on the feed to %s is not a standard rating of %s; the next one up is %s A (check it against "+
			"the limits above).", num(fu.ratingA), n.id, series, num(next))
	})
}

func (r *reviewer) fusePlacement(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	fu := n.feed.fuse
	l := r.limits.Fuses
	limit := l.MaxDistanceM.Value
	if fu.sheathed {
		limit = l.MaxDistanceSheathedM.Value
	}
	src := r.t.nodes[n.parent].id
	c := above("far", Warn, fu.distanceM, limit, "m")
	if !fu.hasDist {
		c = flagged("unknown", Warn, true, 0, limit, "m")
		c.noValue = true
	}
	r.emit(CheckFusePlacement, n.id, append(room[:0], c), func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt("The fuse on the feed to "), txt(n.id), txt(" sits "), val(fu.distanceM), txt(" m from "), txt(src),
				txt(", within "), val(limit), txt(" m."))
		case c.what == "far":
			return fmt.Sprintf("The fuse on the feed to %s sits %s m from %s; keep it within %s m so the wire before it is short.",
				n.id, num(fu.distanceM), src, num(limit))
		}
		return fmt.Sprintf("The fuse on the feed to %s gives no distance_from_source_m; place it within %s m of %s.",
			n.id, num(limit), src)
	})
}

func (r *reviewer) connectorRating(n *node, ptr string, k int, c connector) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	u := r.limits.utilisation()
	conds := append(room[:0], above("current", Fail, n.run, c.ratingA, "A"))
	if c.ratingV > 0 {
		conds = append(conds, above("voltage", Fail, n.vHigh, c.ratingV, "V"))
	}
	conds = append(conds, above("current near", Warn, n.run, u*c.ratingA, "A"))
	if c.ratingV > 0 {
		conds = append(conds, above("voltage near", Warn, n.vHigh, u*c.ratingV, "V"))
	}
	r.emit(CheckConnectorRating, n.id, conds, func(cd cond, passed bool) string {
		// "xt30 connector", or "connector 2" for one without a family
		first, second := "connector ", strconv.Itoa(k+1)
		if c.family != "" {
			first, second = c.family, " connector"
		}
		if passed {
			r.say(txt("The "), txt(first), txt(second), txt(" on the feed to "), txt(n.id), txt(" carries "), val(n.run),
				txt(" A of its "), val(c.ratingA), txt(" A rating"))
			if c.ratingV > 0 {
				return r.say(txt(" at up to "), val(n.vHigh), txt(" V of its "), val(c.ratingV), txt(" V."))
			}
			return r.say(txt("."))
		}
		name := first + second
		switch {
		case cd.what == "current":
			return fmt.Sprintf("The %s on the feed to %s carries %s A, above its %s A rating.", name, n.id, num(n.run), num(c.ratingA))
		case cd.what == "voltage":
			return fmt.Sprintf("The %s on the feed to %s sees %s V, above its %s V rating.", name, n.id, num(n.vHigh), num(c.ratingV))
		case cd.what == "current near":
			return fmt.Sprintf("The %s on the feed to %s carries %s A, over %s of its %s A rating.", name, n.id, num(n.run), pct(u), num(c.ratingA))
		}
		return fmt.Sprintf("The %s on the feed to %s sees %s V, over %s of its %s V rating.", name, n.id, num(n.vHigh), pct(u), num(c.ratingV))
	})
	// A feed may have several connectors: the node does not say which.
	r.checks[len(r.checks)-1].Pointer = ptr
}

// scope is the design-wide check: mains anywhere, or a source above the
// in-scope voltage, puts the design out of scope.
func (r *reviewer) scope() {
	ceiling := r.limits.Policy.InScopeMaxV.Value
	found, highest := false, 0.0
	var salvaged []string
	for i := range r.t.nodes {
		n := &r.t.nodes[i]
		if n.mainsPart {
			salvaged = append(salvaged, n.id)
		}
		if n.mains {
			found = true
			r.add(Check{Check: CheckScopeMains, Node: n.id, Status: OutOfScope,
				Message: fmt.Sprintf("%s includes mains: wattshelf does not review mains circuits, and this design cannot pass. "+
					"The findings below are listed for information only.", n.id)})
		}
		if n.isSource() {
			highest = max(highest, n.vHigh)
		}
		if n.isSource() && n.vHigh > ceiling {
			found = true
			r.add(Check{Check: CheckScopeMains, Node: n.id, Status: OutOfScope,
				Value: ptrTo(n.vHigh), Limit: ptrTo(ceiling), Unit: "V",
				Message: fmt.Sprintf("%s reaches %s V, above the %s V DC these rules cover: the design is out of scope and cannot "+
					"pass.", n.id, num(n.vHigh), num(ceiling))})
		}
	}
	if found {
		return
	}
	msg := fmt.Sprintf("No mains in the design, and every source stays at or below %s V DC.", num(ceiling))
	if len(salvaged) > 0 {
		msg += fmt.Sprintf(" Salvaged from a mains-powered appliance: %s; use only the low-voltage side.", joinIDs(salvaged))
	}
	r.add(Check{Check: CheckScopeMains, Status: Pass, Value: ptrTo(highest), Limit: ptrTo(ceiling), Unit: "V",
		Message: msg})
}

// joinIDs lists ids as "a, b and c". It builds into one buffer: a source
// can leave out thousands of loads, and adding to a string copies it.
func joinIDs(ids []string) string {
	if len(ids) <= 1 {
		return strings.Join(ids, "")
	}
	return strings.Join(ids[:len(ids)-1], ", ") + " and " + ids[len(ids)-1]
}
