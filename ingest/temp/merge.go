package temp

import (
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/sounding"
)

// kindPriority orders kinds when two parts give the same pressure.
func kindPriority(k sounding.LevelKind) int {
	switch k {
	case sounding.KindSurface:
		return 3
	case sounding.KindStandard:
		return 2
	case sounding.KindSignificant:
		return 1
	}
	return 0
}

// mergeLevels sorts levels by decreasing pressure (levels without pressure
// last, by increasing height), joins levels of equal pressure, and drops
// standard levels below the surface. elevationM, when not NaN, becomes the
// surface height (status Derived).
func mergeLevels(lv []level, elevationM float64) []sounding.Level {
	sort.SliceStable(lv, func(i, j int) bool {
		pi, pj := lv[i].PressurePa, lv[j].PressurePa
		switch {
		case math.IsNaN(pi) && math.IsNaN(pj):
			return lv[i].HeightM < lv[j].HeightM
		case math.IsNaN(pi):
			return false
		case math.IsNaN(pj):
			return true
		}
		return pi > pj
	})
	var out []level
	for _, l := range lv {
		if n := len(out); n > 0 && !math.IsNaN(l.PressurePa) && math.Abs(out[n-1].PressurePa-l.PressurePa) < 0.5 {
			out[n-1] = join(out[n-1], l)
			continue
		}
		out = append(out, l)
	}
	surfPa := math.NaN()
	for _, l := range out {
		if l.Kind == sounding.KindSurface {
			surfPa = l.PressurePa
			break
		}
	}
	res := make([]sounding.Level, 0, len(out))
	for _, l := range out {
		if l.PressurePa > surfPa && l.Kind != sounding.KindSurface {
			continue // extrapolated below ground by the sender
		}
		if l.Kind == sounding.KindSurface && !math.IsNaN(elevationM) && math.IsNaN(l.HeightM) {
			l.HeightM = elevationM
			l.Status[sounding.VarHeight] = sounding.Derived
		}
		res = append(res, l.Level)
	}
	return res
}

// join merges two levels at the same pressure. The level of higher kind
// priority (surface > standard > significant; the first on ties) keeps its
// values and takes the missing ones from the other. At the surface the
// temperature and dewpoint of Part B win.
func join(a, b level) level {
	if kindPriority(b.Kind) > kindPriority(a.Kind) {
		a, b = b, a
	}
	a.Tropopause = a.Tropopause || b.Tropopause
	take := func(dst *float64, src float64, v sounding.Var) {
		if math.IsNaN(*dst) && !math.IsNaN(src) {
			*dst = src
			a.Status[v] = b.Status[v]
		}
	}
	if a.Kind == sounding.KindSurface && b.from == partB && !math.IsNaN(b.TemperatureK) {
		a.TemperatureK, a.DewpointK, a.DewpointDepressionK = b.TemperatureK, b.DewpointK, b.DewpointDepressionK
		a.Status[sounding.VarTemperature] = b.Status[sounding.VarTemperature]
		a.Status[sounding.VarDewpointDepression] = b.Status[sounding.VarDewpointDepression]
	}
	take(&a.HeightM, b.HeightM, sounding.VarHeight)
	take(&a.TemperatureK, b.TemperatureK, sounding.VarTemperature)
	take(&a.DewpointDepressionK, b.DewpointDepressionK, sounding.VarDewpointDepression)
	if math.IsNaN(a.DewpointK) {
		a.DewpointK = b.DewpointK
	}
	take(&a.WindDirectionDeg, b.WindDirectionDeg, sounding.VarWindDirection)
	take(&a.WindSpeedMS, b.WindSpeedMS, sounding.VarWindSpeed)
	return a
}
