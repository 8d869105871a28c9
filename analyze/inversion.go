package analyze

import "math"

// Inversion is a temperature inversion layer: a layer in which temperature
// increases with height (METHODS §3.1). Heights are m AGL.
type Inversion struct {
	Present bool
	// BaseIndex and TopIndex are indices into the sounding's Levels, −1
	// when the inversion is absent.
	BaseIndex, TopIndex int
	BaseAGLM, TopAGLM   float64 // m AGL
	BasePressurePa      float64 // Pa
	TopPressurePa       float64 // Pa
	// StrengthK is T_top − T_base in K (not the warmest temperature minus
	// the surface temperature).
	StrengthK float64
	// Levels is the number of profile levels from base to top inclusive.
	Levels int
}

// DepthM returns TopAGLM − BaseAGLM in m (NaN when absent).
func (v Inversion) DepthM() float64 { return v.TopAGLM - v.BaseAGLM }

// GradientKPerKm returns the mean gradient StrengthK/DepthM in K km⁻¹ (NaN
// when absent or of zero depth).
func (v Inversion) GradientKPerKm() float64 {
	d := v.DepthM()
	if !(d > 0) {
		return math.NaN()
	}
	return 1000 * v.StrengthK / d
}

func noInversion() Inversion {
	nan := math.NaN()
	return Inversion{BaseIndex: -1, TopIndex: -1, BaseAGLM: nan, TopAGLM: nan,
		BasePressurePa: nan, TopPressurePa: nan, StrengthK: nan}
}

// layerSpan is an inversion layer as profile positions base < top.
type layerSpan struct{ base, top int }

// findInversions returns every inversion layer of the profile (z in m AGL,
// t in K, sorted upward, only the first n levels searched) by the
// Kahl-type algorithm of METHODS §3.2: mark inverted adjacent pairs, group
// maximal runs, merge runs separated by a gap thinner than MergeGapM, then
// discard layers weaker than MinStrengthK or thinner than MinDepthM. NaN
// temperatures break runs.
func findInversions(z, t []float64, n int, cfg InversionConfig) []layerSpan {
	var runs []layerSpan
	for k := 0; k+1 < n; k++ {
		d := t[k+1] - t[k]
		inverted := d > cfg.MinPairDeltaK || (cfg.IsothermalAsInversion && d == 0)
		if !inverted {
			continue
		}
		if m := len(runs); m > 0 && runs[m-1].top == k {
			runs[m-1].top = k + 1
		} else {
			runs = append(runs, layerSpan{k, k + 1})
		}
	}
	merged := runs[:0]
	for _, r := range runs {
		if m := len(merged); m > 0 && z[r.base]-z[merged[m-1].top] < cfg.MergeGapM {
			merged[m-1].top = r.top
			continue
		}
		merged = append(merged, r)
	}
	kept := merged[:0]
	for _, r := range merged {
		if t[r.top]-t[r.base] >= cfg.MinStrengthK && z[r.top]-z[r.base] >= cfg.MinDepthM {
			kept = append(kept, r)
		}
	}
	return kept
}

// inversionFrom fills an Inversion from a profile span.
func (pr profile) inversionFrom(s layerSpan) Inversion {
	return Inversion{
		Present: true, BaseIndex: pr.idx[s.base], TopIndex: pr.idx[s.top],
		BaseAGLM: pr.z[s.base], TopAGLM: pr.z[s.top],
		BasePressurePa: pr.p[s.base], TopPressurePa: pr.p[s.top],
		StrengthK: pr.t[s.top] - pr.t[s.base], Levels: s.top - s.base + 1,
	}
}
