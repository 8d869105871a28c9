package analyze

import (
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// HeightAnchor records a level whose reported height was used to re-anchor
// the hypsometric integration, with the height the integration had reached
// there. The mismatch is a hydrostatic-consistency diagnostic for quality
// control (METHODS §1.6, §6).
type HeightAnchor struct {
	Index       int     // index of the level in the sounding's Levels
	PressurePa  float64 // Pa
	ReportedM   float64 // gpm above mean sea level, as reported
	IntegratedM float64 // gpm, from the level below (or above) by the hypsometric equation
	MismatchM   float64 // ReportedM − IntegratedM, m
}

// Heights is the result of FillHeights. Slices are aligned 1:1 with the
// levels given.
type Heights struct {
	HeightM []float64 // gpm above mean sea level; reported, derived, or NaN
	Derived []bool    // true where HeightM was computed here
	Anchors []HeightAnchor
	// StartIndex is the level the integration started from, −1 when no
	// level could be used.
	StartIndex int
	// StandardAnchor is true when no level with pressure, temperature and
	// height existed and the start level was placed at its U.S. Standard
	// Atmosphere 1976 pressure altitude: heights above that level are then
	// correct relative to it, but not above sea level.
	StandardAnchor bool
}

// FillHeights fills missing geopotential heights of a sounding's pressure
// levels by integrating the hypsometric equation,
//
//	Z2 − Z1 = (Rd/g0) (Tv1 + Tv2)/2 ln(p1/p2)   (trapezoid Tv in ln p),
//
// through the levels sorted by decreasing pressure (the input order does
// not matter). Tv is computed from T and the dewpoint when both are given,
// from T alone (Tv = T) when the dewpoint is missing; for a level with
// pressure but no temperature Tv is interpolated linearly in ln p between
// the nearest levels that have one (never extrapolated).
//
// Integration starts at the lowest level that has both a usable Tv and a
// height: normally the surface level, whose height is the station elevation
// elevationM when the level itself carries none. When the surface line is
// wind-only (no pressure, as in some archive files) the start is the lowest
// pressure level with a height, and levels below it are integrated
// downward from it. Going up (and down), every level with a reported height
// re-anchors the integration; the difference between reported and
// integrated heights is returned in Anchors. Levels without pressure keep
// their reported height and are not used. When no level has a height at
// all, the lowest level with Tv is placed at its USSA76 pressure altitude
// (METHODS §1.7) and StandardAnchor is set.
//
// Levels whose height cannot be derived (no Tv available) stay NaN unless
// reported. Exact duplicate pressures get the same height. It never
// panics; an empty input gives empty slices and StartIndex −1.
func FillHeights(levels []sounding.Level, elevationM float64, c thermo.Constants, f thermo.SatVapFormula) Heights {
	return fillHeights(levels, elevationM, c, f, nil, true, nil)
}

// fillHeights is FillHeights with the levels' mixing ratios w in kg/kg
// (indexed like levels, as levelValues computes them from the finite
// dewpoint and pressure) when the caller has them, so that the
// saturation vapour pressure of each level is computed once; nil: they
// are computed here; its working slices come from sc. Without anchors
// the Anchors are not recorded, and the hypsometric thickness up to a
// level with a reported height, which only they would keep, is not
// computed: the heights are the same.
func fillHeights(levels []sounding.Level, elevationM float64, c thermo.Constants, f thermo.SatVapFormula, w []float64, anchors bool, sc *scratch) Heights {
	n := len(levels)
	h := Heights{HeightM: sc.floats(n), Derived: sc.bools(n), StartIndex: -1}
	ord := sc.ints(n)
	sorted := true // the pressures taken are finite and positive: in order is p[previous] ≥ p[next]
	missing := 0   // levels with a pressure but no height
	for i := range levels {
		l := &levels[i]
		h.HeightM[i] = l.HeightM
		if math.IsInf(l.HeightM, 0) {
			h.HeightM[i] = math.NaN()
		}
		if l.PressurePa > 0 && !math.IsInf(l.PressurePa, 0) {
			if k := len(ord); k > 0 {
				sorted = sorted && levels[ord[k-1]].PressurePa >= l.PressurePa
			}
			ord = append(ord, i)
			if math.IsNaN(h.HeightM[i]) {
				missing++
			}
		}
	}
	if len(ord) == 0 {
		return h
	}
	if !sorted {
		sort.SliceStable(ord, func(a, b int) bool { return levels[ord[a]].PressurePa > levels[ord[b]].PressurePa })
	}
	if j0 := ord[0]; levels[j0].Kind == sounding.KindSurface && math.IsNaN(h.HeightM[j0]) && !math.IsNaN(elevationM) {
		h.HeightM[j0], h.Derived[j0] = elevationM, true
		missing--
	}
	if missing == 0 && !anchors {
		// Every level with a pressure has a height: there is nothing to
		// fill, and without anchors nothing to integrate. The start is
		// the first level with a usable Tv, which is the first with a
		// usable temperature (virtualTemperatures interpolates Tv only
		// between two such levels).
		for _, j := range ord {
			if tK := levels[j].TemperatureK; tK > 0 && !math.IsInf(tK, 0) {
				h.StartIndex = j
				break
			}
		}
		return h
	}
	tv := virtualTemperatures(sc.floats(len(ord)), levels, ord, c, f, w)
	start := -1
	for pos, j := range ord {
		if !math.IsNaN(tv[pos]) && !math.IsNaN(h.HeightM[j]) {
			start = pos
			break
		}
	}
	if start < 0 {
		for pos, j := range ord {
			if !math.IsNaN(tv[pos]) {
				start = pos
				h.HeightM[j] = thermo.StandardHeight(levels[j].PressurePa)
				h.Derived[j], h.StandardAnchor = true, true
				break
			}
		}
	}
	if start < 0 || math.IsNaN(h.HeightM[ord[start]]) {
		return h
	}
	h.StartIndex = ord[start]
	if anchors {
		n := 0 // the levels that will re-anchor: a usable Tv and a reported height
		for pos, j := range ord {
			if pos != start && !math.IsNaN(tv[pos]) && !math.IsNaN(h.HeightM[j]) {
				n++
			}
		}
		if n > 0 {
			h.Anchors = make([]HeightAnchor, 0, n)
		}
	}
	h.integrate(levels, ord, tv, start, +1, anchors, c)
	h.integrate(levels, ord, tv, start, -1, anchors, c)
	return h
}

// integrate walks ord from position start in direction dir (+1 up, −1
// down), filling or re-anchoring heights, and recording the anchors when
// anchors is true.
func (h *Heights) integrate(levels []sounding.Level, ord []int, tv []float64, start, dir int, anchors bool, c thermo.Constants) {
	prev := start
	for pos := start + dir; pos >= 0 && pos < len(ord); pos += dir {
		if math.IsNaN(tv[pos]) {
			continue
		}
		from := prev
		jp, j := ord[from], ord[pos]
		prev = pos
		rep := h.HeightM[j]
		if !math.IsNaN(rep) && !anchors {
			continue // re-anchored: the integrated height would only be recorded
		}
		z := h.HeightM[jp] + thermo.Thickness(levels[jp].PressurePa, levels[j].PressurePa, tv[from], tv[pos], c.Rd, c.G0)
		if !math.IsNaN(rep) {
			h.Anchors = append(h.Anchors, HeightAnchor{Index: j, PressurePa: levels[j].PressurePa,
				ReportedM: rep, IntegratedM: z, MismatchM: rep - z})
		} else {
			h.HeightM[j], h.Derived[j] = z, true
		}
	}
}

// virtualTemperatures returns Tv in K for each position of ord, from T and
// the dewpoint (Tv = T when the dewpoint is missing), interpolated in ln p
// for levels without temperature, NaN where not bracketed, written into tv
// (as long as ord).
func virtualTemperatures(tv []float64, levels []sounding.Level, ord []int, c thermo.Constants, f thermo.SatVapFormula, w []float64) []float64 {
	for pos, j := range ord {
		l := &levels[j]
		if w == nil || math.IsInf(l.DewpointK, 0) {
			tv[pos] = virtualTemperature(*l, c, f)
			continue
		}
		// The level's pressure is finite (ord holds no other), so w[j]
		// is the mixing ratio virtualTemperature would compute.
		tv[pos] = virtualTemperatureW(l.TemperatureK, w[j], c)
	}
	last := -1
	for pos := range ord {
		if math.IsNaN(tv[pos]) {
			continue
		}
		if last >= 0 && pos > last+1 {
			p0, p1 := levels[ord[last]].PressurePa, levels[ord[pos]].PressurePa
			for k := last + 1; k < pos; k++ {
				pk := levels[ord[k]].PressurePa
				if p0 == p1 {
					tv[k] = tv[last]
					continue
				}
				fr := math.Log(p0/pk) / math.Log(p0/p1)
				tv[k] = tv[last] + fr*(tv[pos]-tv[last])
			}
		}
		last = pos
	}
	return tv
}

// virtualTemperature returns Tv of one level in K, or NaN without T.
func virtualTemperature(l sounding.Level, c thermo.Constants, f thermo.SatVapFormula) float64 {
	if !(l.TemperatureK > 0) || math.IsInf(l.TemperatureK, 0) {
		return math.NaN()
	}
	return virtualTemperatureW(l.TemperatureK, thermo.MixingRatio(thermo.VapourPressureFromDewpoint(l.DewpointK, f), l.PressurePa, c.Epsilon), c)
}

// virtualTemperatureW returns Tv in K for temperature tK and mixing ratio
// w in kg/kg (Tv = T when w is NaN), NaN without T.
func virtualTemperatureW(tK, w float64, c thermo.Constants) float64 {
	if !(tK > 0) || math.IsInf(tK, 0) {
		return math.NaN()
	}
	if math.IsNaN(w) {
		return tK
	}
	return thermo.VirtualTemperature(tK, w, c.Epsilon)
}
