package qc

import (
	"math"
	"slices"

	"github.com/sondeclim/sondeclim/physics/sun"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// thermoLevels returns the indices of the levels with a usable pressure and
// temperature, in source order (pressures strictly decreasing after
// pressureOrder). The list lives in the scratch (sc.idx) until the next
// check that walks levels.
func (st *state) thermoLevels() []int {
	idx := st.sc.idx[:0]
	p, t := st.p, st.t[:len(st.p)]
	for i := range p {
		if !math.IsNaN(p[i]) && !math.IsNaN(t[i]) {
			idx = append(idx, i)
		}
	}
	st.sc.idx = idx
	return idx
}

// spikes flags isolated temperature spikes (METHODS §6 "Vertical T
// spike"): a temperature more than SpikeK warmer (or colder) than the
// ln p interpolation between its neighbouring levels with temperatures,
// and warmer (colder) than both of them, is suspect. The first and last
// levels have one neighbour and are not tested.
func (st *state) spikes() {
	idx := st.thermoLevels()
	for n := 1; n+1 < len(idx); n++ {
		a, k, b := idx[n-1], idx[n], idx[n+1]
		up, dn := st.t[k]-st.t[a], st.t[k]-st.t[b]
		// A spike is warmer (or colder) than both neighbours: (up > 0) ==
		// (d > 0) == (dn > 0) below. Where it is not, the interpolation
		// and its logarithms are not needed.
		if up == 0 || dn == 0 || (up > 0) != (dn > 0) {
			continue
		}
		f := st.lnRatio(a, k) / math.Log(st.p[a]/st.p[b])
		d := st.t[k] - (st.t[a] + f*(st.t[b]-st.t[a]))
		if math.Abs(d) > st.cfg.SpikeK && (up > 0) == (d > 0) && (dn > 0) == (d > 0) && up != 0 && dn != 0 {
			st.flag(k, sounding.VarTemperature, Suspect, CheckSpike, st.t[k], nan,
				"temperature %.1f °C departs %+.1f K from the interpolation between %.1f °C at %.1f hPa and %.1f °C at %.1f hPa",
				st.t[k]-c0, d, st.t[a]-c0, st.p[a]/100, st.t[b]-c0, st.p[b]/100)
			n++ // the next level's neighbour was the spike
		}
	}
}

// heightsAGL returns hypsometric heights above the lowest level of idx (the
// levels with a pressure and a temperature, thermoLevels), in m, for the
// levels of idx, plus the height of that lowest level above the
// station (0 when unknown). The heights live in the scratch (sc.z) until
// the next call.
func (st *state) heightsAGL(idx []int) []float64 {
	z := slices.Grow(st.sc.z[:0], len(idx))[:len(idx)]
	clear(z)
	st.sc.z = z
	if len(idx) == 0 {
		return z
	}
	if base := st.z[idx[0]] - st.elev; base > 0 {
		z[0] = base
	}
	// Each level's virtual temperature is computed once along the chain.
	// The levels of idx have a pressure and a temperature (thermoLevels),
	// so no level between two of them has both: the thickness from one
	// to the next (thicknessFrom) is the one step between them.
	c := &st.cfg.Constants
	t, td := st.t, st.td
	tv := st.virtualTAt(idx[0], t, td)
	for n := 1; n < len(idx); n++ {
		dz, tvB := st.step(idx[n-1], idx[n], t, td, tv, c.Rd, c.G0)
		z[n] = z[n-1] + dz
		tv = tvB
	}
	return z
}

// superadiabatic flags layers that cool with height faster than
// SuspectLapseKPerM (suspect) or BadLapseKPerM (bad) above the surface
// layer (METHODS §6 "Superadiabatic"). Layers start at each level with a
// temperature whose height above the station exceeds SuperadiabaticMinAGLM
// and whose pressure is SuperadiabaticMinDepthPa below the lowest pressure,
// and reach up to the first level at least SuperadiabaticLayerPa higher;
// thicknesses are hypsometric. The finding is on the layer's upper
// temperature, and the next layer starts there.
func (st *state) superadiabatic() {
	c := st.cfg
	idx := st.thermoLevels()
	if len(idx) < 2 {
		return
	}
	z := st.heightsAGL(idx)
	pLow := st.p[idx[0]]
	night := st.night()
	// Where the pressures strictly decrease along idx (the common case),
	// the layer top found for one base is a lower bound of the next
	// base's: every level below it is less than SuperadiabaticLayerPa
	// above the lower base, so also above the higher one (the rounded
	// difference p[a] − p[x] does not grow as p[a] falls). Else each
	// search starts at the level above its base.
	monotone := pressuresDecrease(st.p, idx)
	m := 0
	for n := 0; n+1 < len(idx); n++ {
		a := idx[n]
		nearSurface := z[n] < c.SuperadiabaticMinAGLM || st.p[a] > pLow-c.SuperadiabaticMinDepthPa
		if nearSurface && !night {
			continue
		}
		if !monotone || m < n+1 {
			m = n + 1
		}
		for m < len(idx) && st.p[a]-st.p[idx[m]] < c.SuperadiabaticLayerPa {
			m++
		}
		if m == len(idx) {
			return
		}
		b := idx[m]
		dz := z[m] - z[n]
		lapse := -(st.t[b] - st.t[a]) / dz
		if dz > 0 && lapse > c.SuspectLapseKPerM {
			if nearSurface {
				st.flag(b, sounding.VarTemperature, Suspect, CheckSuperadiabatic, st.t[b], nan,
					"layer %.1f–%.1f hPa (%.0f m deep, base %.0f m above ground) cools %.1f K/km at night (sun below %.0f°)",
					st.p[a]/100, st.p[b]/100, dz, z[n], lapse*1000, c.NightSunBelowDeg)
			} else {
				st.flag(b, sounding.VarTemperature, sev(lapse > c.BadLapseKPerM), CheckSuperadiabatic, st.t[b], nan,
					"layer %.1f–%.1f hPa (%.0f m deep, base %.0f m above ground) cools %.1f K/km",
					st.p[a]/100, st.p[b]/100, dz, z[n], lapse*1000)
			}
			n = m - 1
		}
	}
}

// coldHumidity marks humidity reported where the temperature is below
// ColdHumidityK as suspect (METHODS §6 "Cold-humidity"). Every such value
// is flagged, but one finding (on the lowest such level) summarises them,
// since the condition is routine above the mid troposphere.
func (st *state) coldHumidity() {
	if math.IsNaN(st.cfg.ColdHumidityK) {
		return
	}
	first, count := -1, 0
	for i := range st.s.Levels {
		if !(st.t[i] < st.cfg.ColdHumidityK) {
			continue
		}
		hit := false
		fl, l := &st.rep.Flags[i], &st.s.Levels[i]
		if fl[sounding.VarDewpointDepression] == Good && !math.IsNaN(dewpointDepression(l)) {
			hit = true
			if first >= 0 {
				fl[sounding.VarDewpointDepression] = Suspect
			}
		}
		if fl[sounding.VarRelHumidity] == Good && !math.IsNaN(l.RelHumidityPct) {
			hit = true
			if first >= 0 {
				fl[sounding.VarRelHumidity] = Suspect
			}
		}
		if hit {
			count++
			if first < 0 {
				first = i
			}
		}
	}
	if first < 0 {
		return
	}
	v := sounding.VarDewpointDepression
	if st.rep.Flags[first][v] != Good {
		v = sounding.VarRelHumidity
	}
	st.flag(first, v, Suspect, CheckColdHumidity, value(&st.s.Levels[first], v), nan,
		"humidity at %d level(s) from %.1f hPa (%.1f °C) up, colder than %.0f °C, is unreliable",
		count, st.p[first]/100, st.t[first]-c0, st.cfg.ColdHumidityK-c0)
	if v == sounding.VarDewpointDepression && st.rep.Flags[first][sounding.VarRelHumidity] == Good &&
		!math.IsNaN(st.s.Levels[first].RelHumidityPct) {
		st.rep.Flags[first][sounding.VarRelHumidity] = Suspect
	}
}

// surfacePressure compares the surface pressure with the U.S. Standard
// Atmosphere 1976 pressure at the station elevation (METHODS §1.7, §6);
// a difference above MaxSurfacePressureDiffPa is suspect. Skipped when the
// surface level has no pressure or the elevation is unknown.
func (st *state) surfacePressure() {
	if st.surface < 0 {
		return
	}
	p := st.p[st.surface]
	std := thermo.StandardPressure(st.elev)
	if math.IsNaN(p) || math.IsNaN(std) {
		return
	}
	if d := p - std; math.Abs(d) > st.cfg.MaxSurfacePressureDiffPa {
		st.flag(st.surface, sounding.VarPressure, Suspect, CheckSurfPressure, p, nan,
			"surface pressure %.1f hPa differs by %+.1f hPa from the standard atmosphere at the station elevation %.0f m (%.1f hPa)",
			p/100, d/100, st.elev, std/100)
	}
}

// usableThermo reports whether level i's pressure and temperature may be
// used (not missing and not bad).
func (st *state) usableThermo(i int) bool {
	fp, ft := st.rep.Flags[i][sounding.VarPressure], st.rep.Flags[i][sounding.VarTemperature]
	return fp != Missing && fp != Bad && ft != Missing && ft != Bad
}

// coverage decides whether the sounding covers enough of the lower
// troposphere for boundary-layer analysis (METHODS §6 "Depth / coverage"):
// at least CoverageMinLevels levels with usable pressure and temperature
// at pressures ≥ CoverageLowPa, and usable temperatures up to
// CoverageTopPa or CoverageTopAGLM above the station (reported heights,
// else hypsometric from the lowest level). Otherwise the status is
// insufficient:few_low_levels or insufficient:shallow.
func (st *state) coverage() {
	c := st.cfg
	idx := st.sc.idx[:0]
	low := 0
	for i := range st.s.Levels {
		if st.usableThermo(i) {
			idx = append(idx, i)
			if st.s.Levels[i].PressurePa >= c.CoverageLowPa {
				low++
			}
		}
	}
	st.sc.idx = idx
	if low < c.CoverageMinLevels {
		st.flag(-1, AllVars, Suspect, CheckCoverage, nan, nan,
			"%d level(s) with pressure and temperature at or below %.0f hPa, %d needed",
			low, c.CoverageLowPa/100, c.CoverageMinLevels)
		st.rep.Status = insufficient("few_low_levels")
		return
	}
	top := idx[len(idx)-1]
	pTop := st.s.Levels[top].PressurePa
	for _, i := range idx {
		pTop = min(pTop, st.s.Levels[i].PressurePa)
	}
	if pTop <= c.CoverageTopPa {
		return
	}
	agl := st.s.Levels[top].HeightM - st.elev
	if math.IsNaN(agl) {
		// Hypsometric over the usable levels with the original values.
		agl = 0
		for n := 1; n < len(idx); n++ {
			a, b := idx[n-1], idx[n]
			la, lb := &st.s.Levels[a], &st.s.Levels[b]
			agl += thermo.Thickness(la.PressurePa, lb.PressurePa, la.TemperatureK, lb.TemperatureK, c.Constants.Rd, c.Constants.G0)
		}
	}
	if agl >= c.CoverageTopAGLM {
		return
	}
	st.flag(-1, AllVars, Suspect, CheckCoverage, nan, nan,
		"usable temperatures reach only %.1f hPa (%.0f m above ground); %.0f hPa or %.0f m needed",
		pTop/100, agl, c.CoverageTopPa/100, c.CoverageTopAGLM)
	st.rep.Status = insufficient("shallow")
}

// mostlyBad rejects a sounding in which more than MaxBadTemperatureFrac of
// the reported temperatures are bad.
func (st *state) mostlyBad() {
	reported, bad := 0, 0
	for i := range st.s.Levels {
		if st.s.Levels[i].Status[sounding.VarTemperature] == sounding.Missing {
			continue
		}
		reported++
		if st.rep.Flags[i][sounding.VarTemperature] == Bad {
			bad++
		}
	}
	if reported > 0 && float64(bad) > st.cfg.MaxBadTemperatureFrac*float64(reported) {
		st.reject("mostly_bad", "%d of %d temperatures are bad (more than %.0f %%)",
			bad, reported, 100*st.cfg.MaxBadTemperatureFrac)
	}
}

// night reports whether the sun was below Config.NightSunBelowDeg at
// launch (sun.ElevationDeg: Astronomical Almanac low-precision formulas).
// Without a position, a launch time or a threshold it is false, so the
// near-surface layers stay excused.
func (st *state) night() bool {
	s := st.s
	if math.IsNaN(st.cfg.NightSunBelowDeg) || math.IsNaN(s.LatitudeDeg) || math.IsNaN(s.LongitudeDeg) || s.LaunchTime.IsZero() {
		return false
	}
	return sun.ElevationDeg(s.LaunchTime, s.LatitudeDeg, s.LongitudeDeg) < st.cfg.NightSunBelowDeg
}
