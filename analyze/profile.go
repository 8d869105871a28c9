package analyze

import (
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// profile is the thermodynamic profile of one sounding: levels with
// pressure, temperature and height, sorted by decreasing pressure, exact
// duplicate pressures dropped. Index 0 is the surface.
type profile struct {
	idx    []int     // index into the sounding's Levels
	p      []float64 // Pa
	t      []float64 // K
	z      []float64 // m AGL
	theta  []float64 // K
	thetav []float64 // K; θv, or θ where humidity is missing
	w      []float64 // kg/kg, NaN where humidity is missing
	td     []float64 // K, dewpoint, NaN where missing
	u, v   []float64 // m/s, wind components (from the level, else interpolated in z), NaN where missing
}

// buildProfile returns the thermodynamic profile of s, its slices from sc
// except z and θ, which the Result keeps (Result.Profile). p and t are
// the levels' pressures and temperatures as levelValues gives them
// (finite or NaN).
func (r *Result) buildProfile(s *sounding.Sounding, p, t []float64, wp windProfile, sc *scratch) profile {
	idx := sc.ints(len(p))
	// The pressures taken are finite and positive, so "in order" is
	// p[previous] ≥ p[next]; levels in order need no (stable) sort, and
	// without a repeated pressure none is dropped.
	sorted, equal := true, false
	t, hz := t[:len(p)], r.HeightAGLM[:len(p)]
	for i := range p {
		if p[i] > 0 && t[i] > 0 && !math.IsNaN(hz[i]) {
			if n := len(idx); n > 0 {
				q := p[idx[n-1]]
				sorted = sorted && q >= p[i]
				equal = equal || q == p[i]
			}
			idx = append(idx, i)
		}
	}
	if !sorted {
		sort.SliceStable(idx, func(a, b int) bool { return p[idx[a]] > p[idx[b]] })
	}
	k := len(idx)
	if !sorted || equal {
		k = 0
		for _, i := range idx {
			if k > 0 && p[i] == p[idx[k-1]] {
				continue
			}
			idx[k] = i
			k++
		}
	}
	idx = idx[:k]
	pr := profile{idx: idx}
	kept := make([]float64, 2*k)
	pr.z, pr.theta = kept[:k:k], kept[k:]
	buf := sc.floats(7 * k)
	pr.p, pr.t, pr.thetav, pr.w = buf[:k], buf[k:2*k], buf[2*k:3*k], buf[3*k:4*k]
	pr.td, pr.u, pr.v = buf[4*k:5*k], buf[5*k:6*k], buf[6*k:]
	for n, i := range idx {
		pr.p[n], pr.t[n], pr.z[n] = p[i], t[i], r.HeightAGLM[i]
		pr.td[n] = finite(s.Levels[i].DewpointK)
		if u := wp.lu[i]; !math.IsNaN(u) {
			pr.u[n], pr.v[n] = u, wp.lv[i]
		} else {
			pr.u[n], pr.v[n] = wp.at(pr.z[n])
		}
		pr.theta[n], pr.w[n] = r.ThetaK[i], r.MixingRatioKgKg[i]
		pr.thetav[n] = r.ThetaVK[i]
		if math.IsNaN(pr.thetav[n]) {
			pr.thetav[n] = pr.theta[n]
		}
	}
	return pr
}

// ceiling returns the search ceiling in m AGL (the lower of the height
// ceiling and the height of the pressure ceiling, interpolated in ln p when
// the profile reaches it) and the number of leading profile levels at or
// below it.
func (pr profile) ceiling(cfg Config) (zc float64, n int) {
	zc = cfg.CeilingAGLM
	if zp := thermo.InterpolateLogP(pr.p, pr.z, cfg.CeilingPressurePa); zp < zc {
		zc = zp
	}
	for n < len(pr.p) && pr.z[n] <= zc && pr.p[n] >= cfg.CeilingPressurePa {
		n++
	}
	return zc, n
}
