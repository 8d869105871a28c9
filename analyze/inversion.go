package analyze

import (
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/analyze/stats"
	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
)

// InversionClass is the class of an inversion (see InversionClassConfig
// for the rules and their order).
type InversionClass string

// Inversion classes.
const (
	ClassRadiation    InversionClass = "radiation"
	ClassSubsidence   InversionClass = "subsidence"
	ClassFrontal      InversionClass = "frontal"
	ClassCapping      InversionClass = "capping"
	ClassUnclassified InversionClass = "unclassified"
)

// InversionClasses returns the inversion classes in the order above.
func InversionClasses() []InversionClass {
	return []InversionClass{ClassRadiation, ClassSubsidence, ClassFrontal, ClassCapping, ClassUnclassified}
}

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

	// SurfaceBased is true when the base is the surface level (METHODS
	// §3.2 step 6); otherwise the inversion is elevated.
	SurfaceBased bool
	// TopAtCeiling is true when the top is the highest level searched
	// (the last level below the ceiling, or the last of the sounding): the
	// inversion may continue above it.
	TopAtCeiling bool
	// Changes from base to top (top minus base); NaN where an input is
	// missing. RH is with respect to water, in % points.
	ThetaDeltaK              float64 // K, Δθ
	DewpointDepressionDeltaK float64 // K, ΔDPD (positive: drying upward)
	RelHumidityDeltaPct      float64 // % points, ΔRH
	MixingRatioDeltaKgKg     float64 // kg/kg, Δw
	// WindTurningDeg is the shortest signed angle from the wind direction
	// at the base to that at the top, degrees, veering (clockwise with
	// height) positive (TurningDeg); NaN when either wind is calm or
	// missing.
	WindTurningDeg float64
	// Class is one of the Class* constants (InversionClassConfig rules),
	// "" when absent.
	Class InversionClass
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
		BasePressurePa: nan, TopPressurePa: nan, StrengthK: nan, ThetaDeltaK: nan,
		DewpointDepressionDeltaK: nan, RelHumidityDeltaPct: nan, MixingRatioDeltaKgKg: nan, WindTurningDeg: nan}
}

// layerSpan is an inversion layer as profile positions base < top.
type layerSpan struct{ base, top int }

// findInversions returns every inversion layer of the profile (z in m AGL,
// t in K, sorted upward, only the first n levels searched) by the
// Kahl-type algorithm of METHODS §3.2: mark inverted adjacent pairs, group
// maximal runs, merge runs separated by a gap thinner than MergeGapM, then
// keep only the layers that pass the significance rule (MinStrengthK,
// MinDepthM, and MinLevelsFine in finely resolved profiles; see
// InversionConfig). NaN temperatures break runs.
func findInversions(z, t []float64, n int, cfg InversionConfig) []layerSpan {
	return findInversionsIn(nil, z, t, n, cfg, nil)
}

// findInversionsIn is findInversions, appending the layers to runs (empty)
// and taking its working slices from sc.
func findInversionsIn(runs []layerSpan, z, t []float64, n int, cfg InversionConfig, sc *scratch) []layerSpan {
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
	minLevels := 2
	if cfg.MinLevelsFine > 2 && medianSpacing(z, n, sc) < cfg.FineSpacingM {
		minLevels = cfg.MinLevelsFine
	}
	kept := merged[:0]
	for _, r := range merged {
		if t[r.top]-t[r.base] >= cfg.MinStrengthK && z[r.top]-z[r.base] >= cfg.MinDepthM && r.top-r.base+1 >= minLevels {
			kept = append(kept, r)
		}
	}
	return kept
}

// medianSpacing returns the median height difference in m between
// consecutive levels among the first n of z (NaN for fewer than 2).
func medianSpacing(z []float64, n int, sc *scratch) float64 {
	if n < 2 {
		return math.NaN()
	}
	d := sc.floats(n - 1)[:0]
	for k := 0; k+1 < n; k++ {
		d = append(d, z[k+1]-z[k])
	}
	sort.Float64s(d)
	return stats.MedianSorted(d)
}

// inversionFrom fills an Inversion from a profile span (searched levels
// 0..n−1); f converts dewpoints to RH.
func (pr profile) inversionFrom(s layerSpan, n int, f thermo.SatVapFormula) Inversion {
	b, t := s.base, s.top
	rh := func(k int) float64 { return 100 * thermo.RelativeHumidity(pr.t[k], pr.td[k], f) }
	return Inversion{
		Present: true, BaseIndex: pr.idx[b], TopIndex: pr.idx[t],
		BaseAGLM: pr.z[b], TopAGLM: pr.z[t],
		BasePressurePa: pr.p[b], TopPressurePa: pr.p[t],
		StrengthK: pr.t[t] - pr.t[b], Levels: t - b + 1,
		SurfaceBased: b == 0, TopAtCeiling: t == n-1,
		ThetaDeltaK:              pr.theta[t] - pr.theta[b],
		DewpointDepressionDeltaK: (pr.t[t] - pr.td[t]) - (pr.t[b] - pr.td[b]),
		RelHumidityDeltaPct:      rh(t) - rh(b),
		MixingRatioDeltaKgKg:     pr.w[t] - pr.w[b],
		WindTurningDeg:           TurningDeg(windDirection(pr.u[b], pr.v[b]), windDirection(pr.u[t], pr.v[t])),
	}
}

// classContext is what the class rules need beyond the layer itself.
type classContext struct {
	sunClass       sun.Class
	solarTimeH     float64   // local apparent solar time, h
	surfaceWindMS  float64   // m/s
	mixedLayerTops []float64 // m AGL
}

// ClassifyInversion returns the class of inversion v by the rules of
// InversionClassConfig, evaluated in the documented order, given the sun
// class of the launch (one of sun.Classes),
// the local apparent solar time in hours, the surface wind speed in m/s
// and the tops of the sounding's well-mixed layers in m AGL. Missing
// inputs (NaN, unknown sun class) never satisfy a rule. An absent
// inversion gives "".
func ClassifyInversion(v Inversion, sunClass sun.Class, solarTimeH, surfaceWindMS float64, mixedLayerTopsAGLM []float64, cfg InversionClassConfig) InversionClass {
	return classify(v, classContext{sunClass, solarTimeH, surfaceWindMS, mixedLayerTopsAGLM}, cfg)
}

func classify(v Inversion, c classContext, cfg InversionClassConfig) InversionClass {
	if !v.Present {
		return ""
	}
	if v.SurfaceBased {
		night := sun.Below(c.sunClass) || (c.sunClass == sun.LowSun && c.solarTimeH < cfg.RadiationMorningBeforeH)
		if night && c.surfaceWindMS <= cfg.RadiationMaxWindMS {
			return ClassRadiation
		}
		return ClassUnclassified
	}
	drying := v.DewpointDepressionDeltaK >= cfg.SubsidenceMinDPDIncreaseK || v.RelHumidityDeltaPct <= cfg.SubsidenceMaxRHChangePct
	if drying && v.MixingRatioDeltaKgKg <= cfg.SubsidenceMaxMixingRatioChangeKgKg {
		return ClassSubsidence
	}
	if v.DewpointDepressionDeltaK <= cfg.FrontalMaxDPDChangeK && v.WindTurningDeg >= cfg.FrontalMinVeeringDeg {
		return ClassFrontal
	}
	for _, top := range c.mixedLayerTops {
		if math.Abs(v.BaseAGLM-top) <= cfg.CappingToleranceM {
			return ClassCapping
		}
	}
	return ClassUnclassified
}
