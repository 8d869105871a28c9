package thermo

import (
	"math"
	"sort"
)

// InterpolateLogP returns x at pressure targetPa, interpolated linearly in
// ln p between the two levels of the profile (pPa, x) that bracket it.
// pPa must be strictly decreasing (surface first); levels where p or x is
// NaN are ignored. NaN when the target is outside the profile (no
// extrapolation), when fewer than one valid level remains, when the
// slices differ in length or when pPa is not decreasing.
func InterpolateLogP(pPa, x []float64, targetPa float64) float64 {
	p, v, ok := validDecreasing(pPa, x)
	if !ok || len(p) == 0 || !(targetPa > 0) {
		return math.NaN()
	}
	return interpLogP(p, v, targetPa)
}

// interpLogP interpolates on already validated, strictly decreasing p.
func interpLogP(p, v []float64, target float64) float64 {
	n := len(p)
	if target > p[0] || target < p[n-1] {
		return math.NaN()
	}
	// First index with p[i] <= target.
	i := sort.Search(n, func(i int) bool { return p[i] <= target })
	if p[i] == target {
		return v[i]
	}
	f := math.Log(p[i-1]/target) / math.Log(p[i-1]/p[i])
	return v[i-1] + f*(v[i]-v[i-1])
}

// validDecreasing drops levels where p or x is NaN (or p ≤ 0) and reports
// whether the remainder is strictly decreasing in p. When no level is
// dropped the input itself is returned (callers only read it).
func validDecreasing(pPa, x []float64) (p, v []float64, ok bool) {
	if len(pPa) != len(x) {
		return nil, nil, false
	}
	whole := true
	for i := range pPa {
		if !(pPa[i] > 0 && !math.IsNaN(x[i]) && !math.IsInf(pPa[i], 0)) || i > 0 && !(pPa[i] < pPa[i-1]) {
			whole = false
			break
		}
	}
	if whole {
		return pPa, x, true
	}
	p = make([]float64, 0, len(pPa))
	v = make([]float64, 0, len(pPa))
	for i := range pPa {
		if pPa[i] > 0 && !math.IsNaN(x[i]) && !math.IsInf(pPa[i], 0) {
			if len(p) > 0 && !(pPa[i] < p[len(p)-1]) {
				return nil, nil, false
			}
			p = append(p, pPa[i])
			v = append(v, x[i])
		}
	}
	return p, v, true
}

// layerPoints returns the profile restricted to [pTop, pBot], with x
// interpolated in ln p at both ends.
func layerPoints(pPa, x []float64, pBotPa, pTopPa float64) (p, v []float64) {
	pv, xv, ok := validDecreasing(pPa, x)
	if !ok || len(pv) < 1 || !(pBotPa > pTopPa) || !(pTopPa > 0) {
		return nil, nil
	}
	xb, xt := interpLogP(pv, xv, pBotPa), interpLogP(pv, xv, pTopPa)
	if math.IsNaN(xb) || math.IsNaN(xt) {
		return nil, nil
	}
	p = append(p, pBotPa)
	v = append(v, xb)
	for i := range pv {
		if pv[i] < pBotPa && pv[i] > pTopPa {
			p = append(p, pv[i])
			v = append(v, xv[i])
		}
	}
	return append(p, pTopPa), append(v, xt)
}

// MassWeightedMean returns the mass-weighted (pressure-weighted in the
// sense dm = −dp/g) mean of x over the layer from pBotPa up to pTopPa,
//
//	X̄ = (1/(p_bot − p_top)) ∫_{p_top}^{p_bot} X dp,
//
// by the trapezoid rule in p, with x interpolated linearly in ln p at the
// layer ends. This is the mean that mixing the layer conserves for a
// conserved variable (θ, q; very nearly w). pPa must be strictly decreasing
// (surface first); levels where p or x is NaN are ignored. NaN when the
// layer is empty (pBot ≤ pTop), not inside the profile, or the input is
// unsorted.
func MassWeightedMean(pPa, x []float64, pBotPa, pTopPa float64) float64 {
	p, v := layerPoints(pPa, x, pBotPa, pTopPa)
	if p == nil {
		return math.NaN()
	}
	var s float64
	for i := 1; i < len(p); i++ {
		s += 0.5 * (v[i-1] + v[i]) * (p[i-1] - p[i])
	}
	return s / (pBotPa - pTopPa)
}

// PressureWeightedMean returns the p·dp-weighted mean of x over the layer
// from pBotPa up to pTopPa,
//
//	X̄ = ∫ X p dp / ∫ p dp,
//
// numerator by the trapezoid rule on X·p, denominator exact
// ((p_bot² − p_top²)/2), with x interpolated linearly in ln p at the layer
// ends (the convention of MetPy's mean_pressure_weighted). Used only for
// transport-wind conventions that ask for it; for mixing use
// MassWeightedMean. Input rules and NaN cases as for MassWeightedMean.
func PressureWeightedMean(pPa, x []float64, pBotPa, pTopPa float64) float64 {
	p, v := layerPoints(pPa, x, pBotPa, pTopPa)
	if p == nil {
		return math.NaN()
	}
	var s float64
	for i := 1; i < len(p); i++ {
		s += 0.5 * (v[i-1]*p[i-1] + v[i]*p[i]) * (p[i-1] - p[i])
	}
	return s / (0.5 * (pBotPa*pBotPa - pTopPa*pTopPa))
}
