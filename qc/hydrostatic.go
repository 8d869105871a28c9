package qc

import (
	"math"
	"slices"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// layer is one hydrostatic layer between two consecutive levels with
// reported heights (anchors a below, b above).
type layer struct {
	a, b      int
	thickness float64 // m, hypsometric from the temperatures
	residual  float64 // m, reported minus hypsometric thickness
	tol       float64 // m
	evaluated bool    // both anchors have a temperature
	explained bool    // a finding already accounts for its failure
}

func (l *layer) fails() bool { return l.evaluated && math.Abs(l.residual) > l.tol }

// virtualT returns the virtual temperature in K for temperature tK,
// dewpoint tdK (NaN: dry) and pressure pPa.
func (st *state) virtualT(tK, tdK, pPa float64) float64 {
	if math.IsNaN(tdK) {
		return tK
	}
	c := &st.cfg.Constants
	w := thermo.MixingRatio(thermo.VapourPressureFromDewpoint(tdK, st.cfg.SatVap), pPa, c.Epsilon)
	if math.IsNaN(w) {
		return tK
	}
	return thermo.VirtualTemperature(tK, w, c.Epsilon)
}

// tvCache holds, per level, a virtual temperature (tv, K) and the
// temperature, dewpoint and pressure it was computed from. The checks
// integrate the hypsometric equation over the same levels several times
// (each layer, its neighbours, the superadiabatic heights), each time
// with the working values of the moment; a level whose values have not
// changed since gets the same Tv without its saturation vapour pressure
// (an exponential) being computed again. One entry a level keeps the
// keys and the value together (one bounds test, one cache line).
type tvCache []tvEntry

type tvEntry struct{ t, td, p, tv float64 }

// virtualTAt returns the virtual temperature in K of level i for the
// temperatures t and dewpoints td (the working ones or a trial) and the
// working pressure: virtualT of those values, from the cache when they
// are bit for bit the ones it was computed from. A level without pressure
// is not cached (its Tv is T, cheap), so the NaN pressure an unused entry
// holds never matches. The test of the cache is small enough to be
// inlined; a miss computes in virtualTMiss.
func (st *state) virtualTAt(i int, t, td []float64) float64 {
	e := &st.tv[i]
	if tK, tdK, pPa := t[i], td[i], st.p[i]; same(e.p, pPa) && same(e.t, tK) && same(e.td, tdK) && !math.IsNaN(pPa) {
		return e.tv
	}
	return st.virtualTMiss(i, t[i], td[i])
}

// virtualTMiss is virtualTAt for values not in the cache.
func (st *state) virtualTMiss(i int, tK, tdK float64) float64 {
	pPa := st.p[i]
	v := st.virtualT(tK, tdK, pPa)
	if !math.IsNaN(pPa) {
		st.tv[i] = tvEntry{t: tK, td: tdK, p: pPa, tv: v}
	}
	return v
}

// lnCache holds, per level b, ln(pa/pb) (ln) with the pressures pa of
// the level below it and pb of b it was computed from. The hydrostatic
// layers, the spike interpolation and the superadiabatic heights all take
// the logarithm of the pressure ratio of the same neighbouring levels.
type lnCache []lnEntry

type lnEntry struct{ pa, pb, ln float64 }

// lnRatio returns math.Log(p[a]/p[b]) of the working pressures, from the
// cache when it holds the logarithm of those two pressures, bit for bit
// (the same operation on the same bits gives the same result). NaN
// pressures are not cached, so an unused entry (keys NaN) never matches;
// the test of the cache is inlined, a miss computes in lnRatioMiss.
func (st *state) lnRatio(a, b int) float64 {
	e := &st.ln[b]
	if pa, pb := st.p[a], st.p[b]; same(e.pa, pa) && same(e.pb, pb) && !math.IsNaN(pa) && !math.IsNaN(pb) {
		return e.ln
	}
	return st.lnRatioMiss(a, b)
}

// lnRatioMiss is lnRatio for pressures not in the cache.
func (st *state) lnRatioMiss(a, b int) float64 {
	pa, pb := st.p[a], st.p[b]
	v := math.Log(pa / pb)
	if !math.IsNaN(pa) && !math.IsNaN(pb) {
		st.ln[b] = lnEntry{pa: pa, pb: pb, ln: v}
	}
	return v
}

func same(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// thickness returns the hypsometric thickness in m from level a up to level
// b, integrating Tv by the trapezoid rule in ln p through every level
// between them that has a pressure and a temperature (METHODS §1.6). t and
// td are the working temperatures (so a trial value can be substituted).
// NaN when a or b has no temperature.
func (st *state) thickness(a, b int, t, td []float64) float64 {
	if math.IsNaN(t[a]) || math.IsNaN(t[b]) {
		return nan
	}
	sum, _ := st.thicknessFrom(a, b, t, td, st.virtualTAt(a, t, td))
	return sum
}

// thicknessFrom is thickness with the virtual temperature at a given
// (tvA, K); it also returns the virtual temperature at b, so that a chain
// of layers computes each level's once.
func (st *state) thicknessFrom(a, b int, t, td []float64, tvA float64) (sum, tvB float64) {
	c := &st.cfg.Constants
	p := st.p
	prev, tvPrev := a, tvA
	for i := a + 1; i <= b; i++ {
		if math.IsNaN(p[i]) || math.IsNaN(t[i]) {
			continue
		}
		dz, tv := st.step(prev, i, t, td, tvPrev, c.Rd, c.G0)
		sum += dz
		prev, tvPrev = i, tv
	}
	if prev != b { // b itself had no pressure
		tvPrev = st.virtualTAt(b, t, td)
	}
	return sum, tvPrev
}

// step returns the hypsometric thickness in m of the one step from level
// a (virtual temperature tvA, K) up to level b, both with a pressure and a
// temperature, and the virtual temperature at b: one term of
// thicknessFrom's sum. It is virtualTAt(b) and lnRatio(a, b) with their
// cache tests written out, as each step of every layer and of the
// superadiabatic heights takes them.
func (st *state) step(a, b int, t, td []float64, tvA, rd, g0 float64) (dz, tvB float64) {
	pa, pb := st.p[a], st.p[b]
	if tK, tdK, e := t[b], td[b], &st.tv[b]; same(e.p, pb) && same(e.t, tK) && same(e.td, tdK) && !math.IsNaN(pb) {
		tvB = e.tv
	} else {
		tvB = st.virtualTMiss(b, tK, tdK)
	}
	if !(pa > 0) || !(pb > 0) {
		return nan, tvB // as thermo.Thickness
	}
	var ln float64
	if e := &st.ln[b]; same(e.pa, pa) && same(e.pb, pb) { // neither is NaN
		ln = e.ln
	} else {
		ln = st.lnRatioMiss(a, b)
	}
	return thermo.ThicknessLn(ln, tvA, tvB, rd, g0), tvB
}

// evaluate fills l's thickness, residual and tolerance from t and td.
func (st *state) evaluate(l *layer, t, td []float64) {
	st.evaluated(l, t, st.thickness(l.a, l.b, t, td))
}

// evaluated fills l's residual and tolerance from its thickness in m.
func (st *state) evaluated(l *layer, t []float64, thickness float64) {
	l.thickness = thickness
	l.evaluated = !math.IsNaN(l.thickness)
	l.residual = (st.z[l.b] - st.z[l.a]) - l.thickness
	l.tol = max(st.cfg.HydrostaticTolM, st.cfg.HydrostaticTolFrac*math.Abs(l.thickness)) + st.readingTol(l, t)
}

// readingTol is the part of a layer's thickness the pressure readings
// cannot resolve: a reading uncertain by δp (PressureResolutionPa) at each
// end shifts the hypsometric thickness by about (Rd T/g0)(δp/p_a + δp/p_b)
// (differentiating the hypsometric equation, METHODS §1.6). It matters
// only for high-resolution profiles, whose adjacent levels are a fraction
// of a hPa apart; for archive levels it is a few metres at most.
func (st *state) readingTol(l *layer, t []float64) float64 {
	dp := st.cfg.PressureResolutionPa
	if !(dp > 0) {
		return 0
	}
	c := &st.cfg.Constants
	tm := (t[l.a] + t[l.b]) / 2
	return c.Rd * tm / c.G0 * (dp/st.p[l.a] + dp/st.p[l.b])
}

// hydrostatic compares the reported thickness of every layer between
// consecutive levels with reported heights (and pressures) with the
// hypsometric thickness from the temperatures (and dewpoints) between
// them,
//
//	r = (Z_b − Z_a) − (Rd/g0) ∫ Tv d ln p,
//
// and fails a layer when |r| > max(HydrostaticTolM, HydrostaticTolFrac ×
// thickness) (METHODS §6 "Hydrostatic") plus the thickness the pressure
// readings cannot resolve (readingTol). Levels without a reported height
// (significant levels) contribute their temperatures to the integral but do
// not split layers. The residual pattern then assigns the blame (NCEP
// complex quality control, Collins 2001, as summarised in METHODS §6):
//
//   - Two failing layers sharing a level, with residuals of opposite sign
//     whose sum (the residual of the merged layer, which does not depend on
//     the shared height) passes: the shared height is bad. The message gives
//     the hydrostatic estimate.
//   - Two failing layers sharing a level, with residuals of the same sign:
//     the shared temperature is wrong. If reversing its sign in °C (a
//     common coding error) makes both layers pass, it is corrected to that
//     value; otherwise it is bad.
//   - A failing layer that no pattern explains makes one value suspect,
//     chosen from which neighbouring layers pass (see singleLayer).
func (st *state) hydrostatic() {
	anchors := st.sc.idx[:0]
	for i := range st.p {
		if !math.IsNaN(st.p[i]) && !math.IsNaN(st.z[i]) {
			anchors = append(anchors, i)
		}
	}
	st.sc.idx = anchors
	if len(anchors) < 2 {
		return
	}
	layers := slices.Grow(st.sc.layers[:0], len(anchors)-1)[:len(anchors)-1]
	st.sc.layers = layers
	// Each layer as evaluate gives it, the virtual temperature at its
	// base carried from the layer below (the same value virtualTAt gives).
	t, td := st.t, st.td
	tvA, carried := 0.0, false
	for j := range layers {
		l := &layers[j]
		*l = layer{a: anchors[j], b: anchors[j+1]}
		if math.IsNaN(t[l.a]) || math.IsNaN(t[l.b]) {
			st.evaluated(l, t, nan)
			carried = false
			continue
		}
		if !carried {
			tvA = st.virtualTAt(l.a, t, td)
		}
		var sum float64
		sum, tvA = st.thicknessFrom(l.a, l.b, t, td, tvA)
		st.evaluated(l, t, sum)
		carried = true
	}
	for j := 1; j < len(layers); j++ {
		lo, hi := &layers[j-1], &layers[j]
		if !lo.fails() || !hi.fails() || lo.explained || hi.explained {
			continue
		}
		k := lo.b
		if (lo.residual > 0) != (hi.residual > 0) {
			merged := layer{a: lo.a, b: hi.b}
			st.evaluate(&merged, st.t, st.td)
			if merged.fails() {
				continue
			}
			lo.explained, hi.explained = true, true
			st.flag(k, sounding.VarHeight, Bad, CheckHydrostatic, st.z[k], nan,
				"height %.0f gpm: residual %+.0f m in the layer below and %+.0f m above (tolerance %.0f m); the temperatures give about %.0f gpm",
				st.z[k], lo.residual, hi.residual, lo.tol, st.z[k]-lo.residual)
			continue
		}
		lo.explained, hi.explained = true, true
		if tk, ok := st.signFlip(k, lo, hi); ok {
			st.flag(k, sounding.VarTemperature, Corrected, CheckHydrostatic, st.t[k], tk,
				"temperature %.1f °C: residuals %+.0f m and %+.0f m in the two layers sharing it (tolerance %.0f m) vanish with the sign reversed; corrected to %.1f °C",
				st.t[k]-c0, lo.residual, hi.residual, lo.tol, tk-c0)
			continue
		}
		st.flag(k, sounding.VarTemperature, Bad, CheckHydrostatic, st.t[k], nan,
			"temperature %.1f °C: residuals %+.0f m and %+.0f m of the same sign in the two layers sharing it (tolerance %.0f m)",
			st.t[k]-c0, lo.residual, hi.residual, lo.tol)
	}
	for j := range layers {
		if l := &layers[j]; l.fails() && !l.explained {
			st.singleLayer(layers, j)
		}
	}
}

// passes reports whether layers[j] exists, was evaluated and passed.
func passes(layers []layer, j int) bool {
	return j >= 0 && j < len(layers) && layers[j].evaluated && !layers[j].fails()
}

// singleLayer flags the suspect value of a failing layer that no two-layer
// pattern explains. A height at an anchor shared with a passing layer is
// vouched for by that layer, so:
//
//   - lower neighbour missing, upper one passing: the lower height;
//   - upper neighbour missing, lower one passing: the upper height;
//   - both neighbours passing: a temperature inside the layer, the one
//     that departs most from the ln p interpolation between its
//     neighbours;
//   - otherwise (no usable neighbour): the upper height.
func (st *state) singleLayer(layers []layer, j int) {
	l := &layers[j]
	below, above := passes(layers, j-1), passes(layers, j+1)
	lowerKnown := j > 0 && layers[j-1].evaluated
	upperKnown := j+1 < len(layers) && layers[j+1].evaluated
	msg := "layer %.1f–%.1f hPa: residual %+.0f m exceeds the tolerance %.0f m; %s"
	args := []any{st.p[l.a] / 100, st.p[l.b] / 100, l.residual, l.tol}
	switch {
	case !lowerKnown && above:
		st.flag(l.a, sounding.VarHeight, Suspect, CheckHydrostatic, st.z[l.a], nan, msg,
			append(args, "the layer above passes, so this height (the lowest) is the likely fault")...)
		return
	case below && above:
		if k := st.worstInterior(l.a, l.b); k >= 0 {
			st.flag(k, sounding.VarTemperature, Suspect, CheckHydrostatic, st.t[k], nan, msg,
				append(args, "the layers below and above pass, so a temperature inside it is the likely fault")...)
			return
		}
	case !upperKnown && below:
		st.flag(l.b, sounding.VarHeight, Suspect, CheckHydrostatic, st.z[l.b], nan, msg,
			append(args, "the layer below passes, so this height (the highest) is the likely fault")...)
		return
	}
	st.flag(l.b, sounding.VarHeight, Suspect, CheckHydrostatic, st.z[l.b], nan, msg,
		append(args, "one layer cannot tell a bad height from a bad temperature")...)
}

// worstInterior returns the level strictly between a and b with a usable
// temperature that departs most from the ln p interpolation between its
// neighbouring temperature levels, or −1 when there is none.
func (st *state) worstInterior(a, b int) int {
	best, worst := -1, -1.0
	prev := a
	for i := a + 1; i < b; i++ {
		if math.IsNaN(st.p[i]) || math.IsNaN(st.t[i]) {
			continue
		}
		next := -1
		for k := i + 1; k <= b; k++ {
			if !math.IsNaN(st.p[k]) && !math.IsNaN(st.t[k]) {
				next = k
				break
			}
		}
		if next < 0 {
			break
		}
		f := math.Log(st.p[prev]/st.p[i]) / math.Log(st.p[prev]/st.p[next])
		if d := math.Abs(st.t[i] - (st.t[prev] + f*(st.t[next]-st.t[prev]))); d > worst {
			best, worst = i, d
		}
		prev = i
	}
	return best
}

// signFlip tries level k's temperature with its sign reversed in °C in
// both layers and returns the new temperature when both then pass.
func (st *state) signFlip(k int, lo, hi *layer) (float64, bool) {
	tk := st.t[k]
	if math.IsNaN(tk) || math.Abs(tk-c0) < 1 {
		return nan, false
	}
	flipped := 2*c0 - tk
	if outside(flipped, st.cfg.MinTemperatureK, st.cfg.MaxTemperatureK) {
		return nan, false
	}
	t := append(st.sc.t[:0], st.t...)
	td := append(st.sc.td[:0], st.td...)
	st.sc.t, st.sc.td = t, td
	t[k] = flipped
	if !math.IsNaN(st.dpd[k]) {
		td[k] = flipped - st.dpd[k]
	} else {
		td[k] = nan
	}
	a, b := layer{a: lo.a, b: lo.b}, layer{a: hi.a, b: hi.b}
	st.evaluate(&a, t, td)
	st.evaluate(&b, t, td)
	if a.evaluated && b.evaluated && !a.fails() && !b.fails() {
		return flipped, true
	}
	return nan, false
}
