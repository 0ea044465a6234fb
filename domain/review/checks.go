package review

import (
	"fmt"
	"math"
	"strconv"

	"wattshelf/domain/electric"
)

// cond is one way a check can go wrong: crossed means it did. A check
// takes the worst crossed condition; when none is crossed it passes and
// shows the condition closest to crossing.
type cond struct {
	level        Status
	crossed      bool
	value, limit float64
	unit         string
	margin       float64 // distance from crossing, as a share of the limit
	msg          func() string
}

func scale(x float64) float64 { return max(math.Abs(x), 1e-9) }

// above is crossed when value > limit.
func above(level Status, value, limit float64, unit string, msg func() string) cond {
	return cond{level, value > limit, value, limit, unit, (limit - value) / scale(limit), msg}
}

// atLeast is crossed when value ≥ limit.
func atLeast(level Status, value, limit float64, unit string, msg func() string) cond {
	return cond{level, value >= limit, value, limit, unit, (limit - value) / scale(limit), msg}
}

// below is crossed when value < limit.
func below(level Status, value, limit float64, unit string, msg func() string) cond {
	return cond{level, value < limit, value, limit, unit, (value - limit) / scale(limit), msg}
}

// flagged is crossed when bad holds; value and limit are shown as they are.
func flagged(level Status, bad bool, value, limit float64, unit string, msg func() string) cond {
	m := 1.0
	if bad {
		m = 0
	}
	return cond{level, bad, value, limit, unit, m, msg}
}

// bases are the rule-and-source sentences of each check, built once per
// review from the limits.
type bases struct {
	voltageRange, headroomLinear, headroomSwitching, rating, thermal, source, runtime string
	ampacity, drop, fuseMissing, fuseRating, fusePlacement, connector, scope          string
}

func newBases(l Limits) bases {
	u, m := l.Policy.UtilisationPct, l.Policy.ThermalMarginC
	f := l.Fuses
	return bases{
		voltageRange: "the part's own rating (min_v, max_v) against its input: the high end with a full source and no load, " +
			"the nominal, and the low end at the source's cutoff after feed drops at the running current (DESIGN section 6)",
		headroomLinear: "a linear regulator holds output_v only while its input is at least output_v + dropout_v, " +
			"and never above max_input_v (the part's datasheet)",
		headroomSwitching: "a switching regulator holds output_v inside its input window (min_input_v to max_input_v; a buck " +
			"needs at least its output, a boost at most it), and its feed must carry the input power P/η, which needs " +
			"V_parent ≥ 2·√(R_feed·P/η)",
		rating: fmt.Sprintf("fail above the part's rating; warn above %g %% of it (%s)", u.Value, u.Source),
		thermal: fmt.Sprintf("junction temperature T_j = ambient + P·θ_JA, P = (V_in − V_out)·I_out + V_in·I_q at the input "+
			"high end; fail at tj_max_c, warn within %g °C of it (%s)", m.Value, m.Source),
		source: "fail when the continuous current exceeds the source's rating (max_discharge_a, by default the chemistry's " +
			"C rate times the capacity; a supply's max_a); warn when the surge does, or when the sag of the surge through " +
			"the internal resistance takes a critical load below its min_v",
		runtime: "usable capacity (from full to the cell cutoff or the first brownout, read off the chemistry's discharge " +
			"curve; Peukert's law where the chemistry stores an exponent) over the average current",
		ampacity: fmt.Sprintf("ampacity from the stored conductor table (%s), insulation column and bundling factor; fail above it, "+
			"warn above %g %% of it (%s)", l.Conductors.Source, u.Value, u.Source),
		drop: fmt.Sprintf("drop across both conductors (copper 1/58 Ω·mm²/m at 20 °C, α = 0.00393 /K, IEC 60028) as a share of the "+
			"parent's nominal voltage: fail over %g %% (%s); warn over %g %% on a critical load (%s)",
			l.VoltageDrop.NonCriticalPct.Value, l.VoltageDrop.NonCriticalPct.Source,
			l.VoltageDrop.CriticalPct.Value, l.VoltageDrop.CriticalPct.Source),
		fuseMissing: "a feed leaving a source needs a fuse when the source can deliver more than the conductor carries " +
			"(a battery: full voltage over internal resistance; a supply: max_a) (33 CFR 183.455); otherwise a fuse is still advised",
		fuseRating: fmt.Sprintf("rating at most %g × the ampacity of every conductor it protects (%s); voltage rating at least "+
			"the circuit's high end; rating at least %g × the continuous current (%s); a fast fuse at least the motor surge; "+
			"a standard rating of its series (stored fuse families)",
			f.MaxAmpacityMultiple.Value, f.MaxAmpacityMultiple.Source, f.ContinuousLoadFactor.Value, f.ContinuousLoadFactor.Source),
		fusePlacement: fmt.Sprintf("within %g m of the source, or %g m when the conductor is sheathed (%s; %s)",
			f.MaxDistanceM.Value, f.MaxDistanceSheathedM.Value, f.MaxDistanceM.Source, f.MaxDistanceSheathedM.Source),
		connector: fmt.Sprintf("the connector's rating (from the design or its stored family); fail above it, warn above "+
			"%g %% of it (%s)", u.Value, u.Source),
		scope: fmt.Sprintf("mains is out of scope, and so is any source whose high end exceeds %g V DC (%s)",
			l.Policy.InScopeMaxV.Value, l.Policy.InScopeMaxV.Source),
	}
}

// num prints a value with about three significant digits.
func num(x float64) string {
	switch ax := math.Abs(x); {
	case ax >= 100:
		return strconv.FormatFloat(x, 'f', 0, 64)
	case ax >= 10:
		return strconv.FormatFloat(x, 'f', 1, 64)
	case ax >= 1 || ax == 0:
		return strconv.FormatFloat(x, 'f', 2, 64)
	}
	return strconv.FormatFloat(x, 'g', 3, 64)
}

func pct(share float64) string { return strconv.FormatFloat(share*100, 'f', 0, 64) + " %" }

// emit records a check from its conditions.
func (r *reviewer) emit(check, nodeID, ptr, basis string, conds []cond, pass func(cond) string) {
	pick, status := -1, Pass
	for i, c := range conds {
		if c.crossed && c.level.rank() > status.rank() {
			pick, status = i, c.level
		}
	}
	var msg string
	if pick >= 0 {
		msg = conds[pick].msg()
	} else {
		for i, c := range conds {
			if pick < 0 || c.margin < conds[pick].margin {
				pick = i
			}
		}
		msg = pass(conds[pick])
	}
	c := conds[pick]
	r.add(Check{Check: check, Node: nodeID, Pointer: ptr, Status: status, Value: c.value, Limit: c.limit,
		Unit: c.unit, Message: msg, Basis: basis})
}

func (r *reviewer) add(c Check) {
	c.Value, c.Limit = clean(c.Value), clean(c.Limit)
	r.checks = append(r.checks, c)
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
	conds := r.buf[:0]
	if n.hasMaxV {
		conds = append(conds, above(Fail, n.vHigh, n.maxV, "V", func() string {
			return fmt.Sprintf("%s can see %s V with a full source, above its max_v of %s V: it can be damaged. "+
				"Add a regulator or use a lower-voltage source.", n.id, num(n.vHigh), num(n.maxV))
		}))
	}
	if n.hasMinV && n.minV > 0 {
		conds = append(conds,
			below(Fail, n.vNom, n.minV, "V", func() string {
				return fmt.Sprintf("%s gets only %s V at the source's nominal voltage, below its min_v of %s V: it will not work "+
					"reliably. Raise the supply voltage or shorten and thicken its feeds.", n.id, num(n.vNom), num(n.minV))
			}),
			below(Warn, n.vLow, n.minV, "V", func() string {
				return fmt.Sprintf("%s browns out: its input falls below its min_v of %s V%s (down to %s V at the source's cutoff).",
					n.id, num(n.minV), r.brownoutText(n, n.minV), num(n.vLow))
			}))
	}
	if len(conds) == 0 {
		conds = append(conds, flagged(Warn, true, n.vHigh, 0, "V", func() string {
			return fmt.Sprintf("%s gives no min_v above 0 and no max_v, so its voltage (%s–%s V) could not be checked.",
				n.id, num(n.vLow), num(n.vHigh))
		}))
	}
	r.emit(CheckVoltageRange, n.id, n.ptr, r.basis.voltageRange, conds, func(cond) string {
		return fmt.Sprintf("%s sees %s–%s V (nominal %s V), inside its %s.", n.id, num(n.vLow), num(n.vHigh), num(n.vNom), rangeText(n))
	})
	r.buf = conds
}

func rangeText(n *node) string {
	switch {
	case n.hasMinV && n.hasMaxV:
		return fmt.Sprintf("%s–%s V range", num(n.minV), num(n.maxV))
	case n.hasMaxV:
		return fmt.Sprintf("limit of %s V", num(n.maxV))
	}
	return fmt.Sprintf("minimum of %s V", num(n.minV))
}

func (r *reviewer) regulatorHeadroom(n *node) {
	conds := r.buf[:0]
	if n.maxInputV > 0 {
		conds = append(conds, above(Fail, n.vHigh, n.maxInputV, "V", func() string {
			return fmt.Sprintf("%s's input reaches %s V with a full source, above its max_input_v of %s V: it can be damaged.",
				n.id, num(n.vHigh), num(n.maxInputV))
		}))
	}
	basis := r.basis.headroomSwitching
	if n.topo == topoLinear {
		basis = r.basis.headroomLinear
		need := n.outputV + n.dropoutV
		conds = append(conds,
			below(Fail, n.vHigh, need, "V", func() string {
				return fmt.Sprintf("%s can never deliver %s V: even with a full source its input is %s V, below output_v + dropout_v "+
					"= %s V.", n.id, num(n.outputV), num(n.vHigh), num(need))
			}),
			below(Warn, n.vLow, need, "V", func() string {
				return fmt.Sprintf("%s drops out before the source is empty: it needs %s V at its input%s; its input falls to %s V "+
					"and its output to %s V.", n.id, num(need), r.brownoutText(n, need), num(n.vLow), num(n.outLow))
			}))
	} else {
		vp := r.t.nodes[n.parent].outLow
		powerIn := n.outputV * n.outRun / n.efficiency
		needVp := 2 * math.Sqrt(n.feed.resistance*powerIn)
		conds = append(conds, flagged(Fail, n.collapsed || !r.t.converged, vp, needVp, "V", func() string {
			return fmt.Sprintf("The feed to %s cannot carry the %s W it draws (%s W out at %s efficiency) at the source's low "+
				"end: its input would collapse. It needs at least %s V before the feed and gets %s V; use a thicker or "+
				"shorter wire or a higher source voltage.", n.id, num(powerIn), num(n.outputV*n.outRun), pct(n.efficiency),
				num(needVp), num(vp))
		}))
		if lo := n.minWorkingInputV(); lo > 0 {
			conds = append(conds,
				below(Fail, n.vHigh, lo, "V", func() string {
					return fmt.Sprintf("%s can never regulate: even with a full source its input is %s V, below the %s V it needs.",
						n.id, num(n.vHigh), num(lo))
				}),
				below(Warn, n.vLow, lo, "V", func() string {
					return fmt.Sprintf("%s drops out before the source is empty: it needs %s V at its input%s; its input falls to %s V.",
						n.id, num(lo), r.brownoutText(n, lo), num(n.vLow))
				}))
		}
		if n.topo == topoBoost {
			conds = append(conds, above(Fail, n.vLow, n.outputV, "V", func() string {
				return fmt.Sprintf("%s is a boost regulator whose input (at least %s V) is always above its output_v of %s V: "+
					"it can never step down to it.", n.id, num(n.vLow), num(n.outputV))
			}))
		}
	}
	r.emit(CheckRegulatorHeadroom, n.id, n.ptr, basis, conds, func(cond) string {
		return fmt.Sprintf("%s's input stays within %s–%s V and it holds %s V throughout.", n.id, num(n.vLow), num(n.vHigh), num(n.outputV))
	})
	r.buf = conds
}

func (r *reviewer) regulatorCurrent(n *node) {
	limit := r.limits.utilisation() * n.maxOutA
	conds := append(r.buf[:0],
		above(Fail, n.outPeak, n.maxOutA, "A", func() string {
			return fmt.Sprintf("%s must deliver surges of %s A, above its max_output_a of %s A.", n.id, num(n.outPeak), num(n.maxOutA))
		}),
		above(Warn, n.outRun, limit, "A", func() string {
			return fmt.Sprintf("%s runs at %s A, over %s of its max_output_a of %s A: little margin.", n.id, num(n.outRun),
				pct(r.limits.utilisation()), num(n.maxOutA))
		}))
	r.emit(CheckRegulatorCurrent, n.id, n.ptr, r.basis.rating, conds, func(cond) string {
		return fmt.Sprintf("%s delivers %s A (surges %s A) of its %s A rating.", n.id, num(n.outRun), num(n.outPeak), num(n.maxOutA))
	})
	r.buf = conds
}

// junction is a linear regulator's heat and junction temperature at its
// input high end.
func (r *reviewer) junction(n *node) (powerW, tjC float64) {
	powerW = max(electric.LinearDissipationW(n.vHigh, n.outHigh, n.outRun, n.quiescentA), 0)
	return powerW, electric.JunctionTempC(r.ambient, powerW, n.thetaJA)
}

func (r *reviewer) regulatorThermal(n *node) {
	powerW, tj := r.junction(n)
	warnAt := n.tjMaxC - r.limits.Policy.ThermalMarginC.Value
	conds := append(r.buf[:0],
		atLeast(Fail, tj, n.tjMaxC, "°C", func() string {
			return fmt.Sprintf("%s sheds %s W; its junction reaches %s °C at %s °C ambient, at or over its %s °C limit. "+
				"Use a switching regulator, a heatsink, or a lower input voltage.", n.id, num(powerW), num(tj), num(r.ambient), num(n.tjMaxC))
		}),
		atLeast(Warn, tj, warnAt, "°C", func() string {
			return fmt.Sprintf("%s sheds %s W; its junction reaches %s °C, within %s °C of its %s °C limit.", n.id, num(powerW),
				num(tj), num(r.limits.Policy.ThermalMarginC.Value), num(n.tjMaxC))
		}))
	r.emit(CheckRegulatorThermal, n.id, n.ptr, r.basis.thermal, conds, func(cond) string {
		return fmt.Sprintf("%s sheds %s W; its junction stays at %s °C, well below %s °C.", n.id, num(powerW), num(tj), num(n.tjMaxC))
	})
	r.buf = conds
}

func (r *reviewer) driverChecks(n *node) {
	u := r.limits.utilisation()
	conds := append(r.buf[:0],
		above(Fail, n.vHigh, n.maxInputV, "V", func() string {
			return fmt.Sprintf("%s's input reaches %s V with a full source, above its max_input_v of %s V.", n.id, num(n.vHigh), num(n.maxInputV))
		}),
		above(Warn, n.vHigh, u*n.maxInputV, "V", func() string {
			return fmt.Sprintf("%s's input reaches %s V, over %s of its max_input_v of %s V: motor spikes can push it over.",
				n.id, num(n.vHigh), pct(u), num(n.maxInputV))
		}))
	r.emit(CheckDriverVoltage, n.id, n.ptr, r.basis.rating, conds, func(cond) string {
		return fmt.Sprintf("%s's input peaks at %s V of its %s V rating.", n.id, num(n.vHigh), num(n.maxInputV))
	})
	conds = append(conds[:0],
		above(Fail, n.outRun, n.continuousA, "A", func() string {
			return fmt.Sprintf("%s carries %s A continuously, above its continuous_a of %s A.", n.id, num(n.outRun), num(n.continuousA))
		}))
	if n.peakRatingA > 0 {
		conds = append(conds, above(Fail, n.outPeak, n.peakRatingA, "A", func() string {
			return fmt.Sprintf("%s must pass surges of %s A (motor stall), above its peak_a of %s A.", n.id, num(n.outPeak), num(n.peakRatingA))
		}))
	}
	conds = append(conds, above(Warn, n.outRun, u*n.continuousA, "A", func() string {
		return fmt.Sprintf("%s carries %s A, over %s of its continuous_a of %s A.", n.id, num(n.outRun), pct(u), num(n.continuousA))
	}))
	if n.peakRatingA > 0 {
		conds = append(conds, above(Warn, n.outPeak, u*n.peakRatingA, "A", func() string {
			return fmt.Sprintf("%s must pass surges of %s A, over %s of its peak_a of %s A.", n.id, num(n.outPeak), pct(u), num(n.peakRatingA))
		}))
	}
	r.emit(CheckDriverCurrent, n.id, n.ptr, r.basis.rating, conds, func(cond) string {
		msg := fmt.Sprintf("%s carries %s A of its %s A continuous rating", n.id, num(n.outRun), num(n.continuousA))
		if n.peakRatingA > 0 {
			return msg + fmt.Sprintf(", and surges of %s A of its %s A peak rating.", num(n.outPeak), num(n.peakRatingA))
		}
		return msg + fmt.Sprintf("; surges reach %s A (no peak_a given to check them against).", num(n.outPeak))
	})
	r.buf = conds
}

func (r *reviewer) sourceCurrent(n *node, criticalNeed float64, criticalID string) {
	rating, ratingName := n.maxA, "max_a"
	if n.kind == kindBattery {
		rating, ratingName = n.maxDischargeA, "max_discharge_a"
	}
	conds := append(r.buf[:0],
		above(Fail, n.run, rating, "A", func() string {
			return fmt.Sprintf("%s must deliver %s A continuously, above its %s of %s A.", n.id, num(n.run), ratingName, num(rating))
		}),
		above(Warn, n.peak, rating, "A", func() string {
			return fmt.Sprintf("%s must deliver surges of %s A, above its %s of %s A.", n.id, num(n.peak), ratingName, num(rating))
		}))
	if n.kind == kindBattery && !math.IsInf(criticalNeed, 0) {
		sag := n.vNom - n.peak*n.pack.InternalOhm()
		conds = append(conds, below(Warn, sag, criticalNeed, "V", func() string {
			return fmt.Sprintf("A surge of %s A sags %s from %s V to %s V through its %s Ω internal resistance; the critical "+
				"load %s needs the pack at %s V or more.", num(n.peak), n.id, num(n.vNom), num(sag), num(n.pack.InternalOhm()),
				criticalID, num(criticalNeed))
		}))
	}
	r.emit(CheckSourceCurrent, n.id, n.ptr, r.basis.source, conds, func(cond) string {
		return fmt.Sprintf("%s delivers %s A (surges %s A) of its %s A rating.", n.id, num(n.run), num(n.peak), num(rating))
	})
	r.buf = conds
}

func (r *reviewer) sourceRuntime(n *node, hours, target float64, limitedBy string) {
	conds := append(r.buf[:0], below(Warn, hours, target, "h", func() string {
		return fmt.Sprintf("%s lasts about %s h at %s A average (limited by %s), short of the %s h target.", n.id, num(hours),
			num(n.avg), limitedBy, num(target))
	}))
	r.emit(CheckSourceRuntime, n.id, n.ptr, r.basis.runtime, conds, func(cond) string {
		return fmt.Sprintf("%s lasts about %s h at %s A average (limited by %s), meeting the %s h target.", n.id, num(hours),
			num(n.avg), limitedBy, num(target))
	})
	r.buf = conds
}

func (r *reviewer) wireAmpacity(n *node) {
	f := n.feed
	u := r.limits.utilisation()
	conds := append(r.buf[:0],
		above(Fail, n.run, f.ampacity, "A", func() string {
			return fmt.Sprintf("The %s feed to %s carries %s A, above its ampacity of %s A: it will overheat. Use a thicker wire.",
				f.gauge.Label, n.id, num(n.run), num(f.ampacity))
		}),
		above(Warn, n.run, u*f.ampacity, "A", func() string {
			return fmt.Sprintf("The %s feed to %s carries %s A, over %s of its ampacity of %s A.", f.gauge.Label, n.id, num(n.run),
				pct(u), num(f.ampacity))
		}))
	r.emit(CheckWireAmpacity, n.id, n.ptr+"/feed/wire", r.basis.ampacity, conds, func(cond) string {
		return fmt.Sprintf("The %s feed to %s carries %s A of its %s A ampacity.", f.gauge.Label, n.id, num(n.run), num(f.ampacity))
	})
	r.buf = conds
}

// dropPct is a feed's drop at the running current as a percentage of the
// parent's nominal output.
func (r *reviewer) dropPct(n *node) (dropV, share float64) {
	dropV = n.run * n.feed.resistance
	base := r.t.nodes[n.parent].outNom
	switch {
	case base > 0:
		return dropV, 100 * dropV / base
	case dropV > 0:
		return dropV, 100
	}
	return dropV, 0
}

func (r *reviewer) wireDrop(n *node) {
	dropV, share := r.dropPct(n)
	lim := r.limits.VoltageDrop
	conds := append(r.buf[:0], above(Fail, share, lim.NonCriticalPct.Value, "%", func() string {
		return fmt.Sprintf("The feed to %s loses %s V, %s %% of %s V: over the %s %% limit. Use a thicker or shorter wire.",
			n.id, num(dropV), num(share), num(r.t.nodes[n.parent].outNom), num(lim.NonCriticalPct.Value))
	}))
	if n.critical {
		conds = append(conds, above(Warn, share, lim.CriticalPct.Value, "%", func() string {
			return fmt.Sprintf("The feed to %s, a critical load, loses %s V, %s %% of %s V: over the %s %% limit for critical loads.",
				n.id, num(dropV), num(share), num(r.t.nodes[n.parent].outNom), num(lim.CriticalPct.Value))
		}))
	}
	r.emit(CheckWireDrop, n.id, n.ptr+"/feed/wire", r.basis.drop, conds, func(c cond) string {
		return fmt.Sprintf("The feed to %s loses %s V (%s %%), within the %s %% limit.", n.id, num(dropV), num(share), num(c.limit))
	})
	r.buf = conds
}

func (r *reviewer) fuseMissing(n *node) {
	src := &r.t.nodes[n.parent]
	deliver, what := src.maxA, "its max_a"
	if src.kind == kindBattery {
		deliver, what = src.pack.ShortCircuitA(), "a short circuit of the full pack"
	}
	f := n.feed
	fused := f.fuse != nil
	conds := append(r.buf[:0],
		flagged(Fail, !fused && deliver > f.ampacity, deliver, f.ampacity, "A", func() string {
			return fmt.Sprintf("The feed from %s to %s has no fuse, and %s can deliver %s A (%s), more than the %s A its %s wire "+
				"carries: a short would set the wire alight. Fuse it next to %s.", src.id, n.id, src.id, num(deliver), what,
				num(f.ampacity), f.gauge.Label, src.id)
		}),
		flagged(Warn, !fused, deliver, f.ampacity, "A", func() string {
			return fmt.Sprintf("The feed from %s to %s has no fuse. %s can deliver at most %s A, within what the wire carries, "+
				"but a fuse next to the source is still advised.", src.id, n.id, src.id, num(deliver))
		}))
	r.emit(CheckFuseMissing, n.id, n.ptr+"/feed", r.basis.fuseMissing, conds, func(cond) string {
		return fmt.Sprintf("The feed from %s to %s is fused at %s A.", src.id, n.id, num(f.fuse.ratingA))
	})
	r.buf = conds
}

func (r *reviewer) fuseRating(n *node, protectedAmp float64, protectedID string) {
	f := n.feed
	fu := f.fuse
	l := r.limits.Fuses
	maxRating := l.MaxAmpacityMultiple.Value * protectedAmp
	minRating := l.ContinuousLoadFactor.Value * n.run
	conds := append(r.buf[:0],
		above(Fail, fu.ratingA, maxRating, "A", func() string {
			return fmt.Sprintf("The %s A fuse on the feed to %s is too big to protect the wire to %s (%s A ampacity): at most %s A.",
				num(fu.ratingA), n.id, protectedID, num(protectedAmp), num(maxRating))
		}))
	if fu.voltageV > 0 {
		conds = append(conds, below(Fail, fu.voltageV, n.vHigh, "V", func() string {
			return fmt.Sprintf("The fuse on the feed to %s is rated %s V, below the %s V the circuit reaches: it may not break the arc.",
				n.id, num(fu.voltageV), num(n.vHigh))
		}))
	}
	conds = append(conds, below(Warn, fu.ratingA, minRating, "A", func() string {
		return fmt.Sprintf("The %s A fuse on the feed to %s is below %s × its %s A running current (%s A): it may blow in normal use.",
			num(fu.ratingA), n.id, num(l.ContinuousLoadFactor.Value), num(n.run), num(minRating))
	}))
	if fu.fast && n.hasMotor {
		conds = append(conds, below(Warn, fu.ratingA, n.peak, "A", func() string {
			return fmt.Sprintf("The fast %s A fuse on the feed to %s is below the %s A motor surge it will see: use a slow fuse.",
				num(fu.ratingA), n.id, num(n.peak))
		}))
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
	conds = append(conds, flagged(Warn, !standard, fu.ratingA, next, "A", func() string {
		series := "any stored fuse series"
		if fu.family != nil {
			series = "the " + fu.family.Name + " series"
		}
		return fmt.Sprintf("%s A on the feed to %s is not a standard rating of %s; the next one up is %s A (check it against "+
			"the limits above).", num(fu.ratingA), n.id, series, num(next))
	}))
	r.emit(CheckFuseRating, n.id, n.ptr+"/feed/fuse", r.basis.fuseRating, conds, func(cond) string {
		msg := fmt.Sprintf("The %s A fuse on the feed to %s sits between %s A (running current × %s) and %s A (the wire it "+
			"protects × %s)", num(fu.ratingA), n.id, num(minRating), num(l.ContinuousLoadFactor.Value), num(maxRating),
			num(l.MaxAmpacityMultiple.Value))
		if fu.voltageV > 0 {
			return msg + fmt.Sprintf(", and its %s V rating covers the %s V circuit.", num(fu.voltageV), num(n.vHigh))
		}
		return msg + "; give voltage_rating_v or a family to check its voltage rating."
	})
	r.buf = conds
}

func (r *reviewer) fusePlacement(n *node) {
	fu := n.feed.fuse
	l := r.limits.Fuses
	limit := l.MaxDistanceM.Value
	if fu.sheathed {
		limit = l.MaxDistanceSheathedM.Value
	}
	src := r.t.nodes[n.parent].id
	var c cond
	if fu.hasDist {
		c = above(Warn, fu.distanceM, limit, "m", func() string {
			return fmt.Sprintf("The fuse on the feed to %s sits %s m from %s; keep it within %s m so the wire before it is short.",
				n.id, num(fu.distanceM), src, num(limit))
		})
	} else {
		c = flagged(Warn, true, 0, limit, "m", func() string {
			return fmt.Sprintf("The fuse on the feed to %s gives no distance_from_source_m; place it within %s m of %s.",
				n.id, num(limit), src)
		})
	}
	conds := append(r.buf[:0], c)
	r.emit(CheckFusePlacement, n.id, n.ptr+"/feed/fuse", r.basis.fusePlacement, conds, func(cond) string {
		return fmt.Sprintf("The fuse on the feed to %s sits %s m from %s, within %s m.", n.id, num(fu.distanceM), src, num(limit))
	})
	r.buf = conds
}

func (r *reviewer) connectorRating(n *node, k int, c connector) {
	u := r.limits.utilisation()
	name := "connector " + strconv.Itoa(k+1)
	if c.family != "" {
		name = c.family + " connector"
	}
	conds := append(r.buf[:0], above(Fail, n.run, c.ratingA, "A", func() string {
		return fmt.Sprintf("The %s on the feed to %s carries %s A, above its %s A rating.", name, n.id, num(n.run), num(c.ratingA))
	}))
	if c.ratingV > 0 {
		conds = append(conds, above(Fail, n.vHigh, c.ratingV, "V", func() string {
			return fmt.Sprintf("The %s on the feed to %s sees %s V, above its %s V rating.", name, n.id, num(n.vHigh), num(c.ratingV))
		}))
	}
	conds = append(conds, above(Warn, n.run, u*c.ratingA, "A", func() string {
		return fmt.Sprintf("The %s on the feed to %s carries %s A, over %s of its %s A rating.", name, n.id, num(n.run), pct(u), num(c.ratingA))
	}))
	if c.ratingV > 0 {
		conds = append(conds, above(Warn, n.vHigh, u*c.ratingV, "V", func() string {
			return fmt.Sprintf("The %s on the feed to %s sees %s V, over %s of its %s V rating.", name, n.id, num(n.vHigh), pct(u), num(c.ratingV))
		}))
	}
	r.emit(CheckConnectorRating, n.id, n.ptr+"/feed/connectors/"+strconv.Itoa(k), r.basis.connector, conds, func(cond) string {
		msg := fmt.Sprintf("The %s on the feed to %s carries %s A of its %s A rating", name, n.id, num(n.run), num(c.ratingA))
		if c.ratingV > 0 {
			return msg + fmt.Sprintf(" at up to %s V of its %s V.", num(n.vHigh), num(c.ratingV))
		}
		return msg + "."
	})
	r.buf = conds
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
			r.add(Check{Check: CheckScopeMains, Node: n.id, Pointer: n.ptr + "/mains", Status: OutOfScope, Value: 1, Limit: 0,
				Unit: "", Basis: r.basis.scope,
				Message: fmt.Sprintf("%s includes mains: wattshelf does not review mains circuits, and this design cannot pass. "+
					"The findings below are listed for information only.", n.id)})
		}
		if n.isSource() {
			highest = max(highest, n.vHigh)
		}
		if n.isSource() && n.vHigh > ceiling {
			found = true
			r.add(Check{Check: CheckScopeMains, Node: n.id, Pointer: n.ptr, Status: OutOfScope, Value: n.vHigh, Limit: ceiling,
				Unit: "V", Basis: r.basis.scope,
				Message: fmt.Sprintf("%s reaches %s V, above the %s V DC these rules cover: the design is out of scope and cannot "+
					"pass.", n.id, num(n.vHigh), num(ceiling))})
		}
	}
	if found {
		return
	}
	msg := fmt.Sprintf("No mains in the design, and every source stays at or below %s V DC.", num(ceiling))
	if len(salvaged) > 0 {
		msg += fmt.Sprintf(" %s came out of mains-powered appliances: use only their low-voltage side.", joinIDs(salvaged))
	}
	r.add(Check{Check: CheckScopeMains, Pointer: "", Status: Pass, Value: highest, Limit: ceiling, Unit: "V", Basis: r.basis.scope,
		Message: msg})
}

func joinIDs(ids []string) string {
	out := ""
	for i, id := range ids {
		switch {
		case i == 0:
		case i == len(ids)-1:
			out += " and "
		default:
			out += ", "
		}
		out += id
	}
	return out
}
