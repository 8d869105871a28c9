package analyze

import (
	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
)

// Config holds every tunable parameter of Analyze. Start from DefaultConfig
// and change fields; a zero Config is refused with Status "invalid_config".
type Config struct {
	// Constants is the thermodynamic constant set; its ID is recorded in
	// the Result. Default thermo.Default() (codata2018).
	Constants thermo.Constants
	// SatVap is the saturation vapour pressure formula used to turn
	// dewpoints into vapour pressures. Default thermo.Bolton (METHODS §1.3;
	// radiosonde humidity is relative to water).
	SatVap thermo.SatVapFormula

	// CeilingPressurePa and CeilingAGLM bound every search: levels above
	// whichever is reached first are not searched. Defaults 500 hPa and
	// 5 km AGL (METHODS §3.2 for inversions, from memory there; METHODS
	// §4.1 for the parcel method).
	CeilingPressurePa float64
	CeilingAGLM       float64

	// MinLevels is the minimum number of usable thermodynamic levels
	// (pressure, temperature and height, surface included) at pressures
	// ≥ CoverageTopPa for the sounding to be analysed. Defaults 3 and
	// 700 hPa (METHODS §6 "Depth / coverage", a proposal there).
	MinLevels     int
	CoverageTopPa float64
	// MaxSurfaceGapM is the largest height of the lowest thermodynamic
	// level above the station elevation that still counts as the surface
	// (needed when the surface line is wind-only, without pressure): the
	// profile then starts at that level, the surface pressure is derived
	// hypsometrically (Result.SurfacePressureDerived) and the level's
	// height above ground is kept (Result.LowestLevelAGLM). Default 150 m:
	// in the real Sterling 2016 file (PROVENANCE.md) the lowest pressure
	// level of the 100 soundings without a surface pressure lies 2–217 m
	// above the station (median 33 m, 99th percentile 128 m), and 150 m
	// stays inside the 200 m within which Kahl (1990, abstract) still
	// calls Arctic inversions near-surface; the value itself is common
	// practice, no source. Not checked when the station elevation is
	// unknown.
	MaxSurfaceGapM float64

	// Sun holds the solar-elevation thresholds of the sun class: day above
	// 10°, low sun 0–10°, civil twilight 0 to −6°, night below (package
	// sun: the Astronomical Almanac's civil twilight; the 10° split from
	// METHODS §8, from memory there).
	Sun sun.Thresholds

	Inversion    InversionConfig
	MixedLayer   MixedLayerConfig
	Parcel       ParcelConfig
	Heffter      HeffterConfig
	Richardson   RichardsonConfig
	LiuLiang     LiuLiangConfig
	MixingHeight MixingHeightConfig
	Ventilation  VentilationConfig
	// HeatDeficit sets the reference height of the heat deficit and
	// StableLayer the deep-stable-layer test (heatdeficit.go).
	HeatDeficit HeatDeficitConfig
	StableLayer StableLayerConfig
}

// InversionConfig parameterises inversion detection (METHODS §3.2).
type InversionConfig struct {
	// MinPairDeltaK: a pair of adjacent levels is inverted when
	// T(k+1) − T(k) > MinPairDeltaK. Default 0 K (METHODS §3.2 step 2).
	MinPairDeltaK float64
	// IsothermalAsInversion also counts pairs with T(k+1) = T(k).
	// Default false (METHODS §3.2 step 2).
	IsothermalAsInversion bool
	// MergeGapM: consecutive inverted runs separated by a non-inverted gap
	// thinner than this are merged. Default 100 m (METHODS §3.2 step 4,
	// the Kahl 1990 refinement; value from memory there). 0 disables.
	MergeGapM float64
	// Significance rule (METHODS §3.2 step 5), applied after merging: a
	// layer is an inversion only when it rises at least MinStrengthK over
	// at least MinDepthM, and, in a finely resolved profile, spans at least
	// MinLevelsFine levels. Layers below the rule are not inversions
	// anywhere: not in sbi_*, ei_*, the inversions table, the frequencies
	// or the elevated-inversion-base mixing height.
	//
	// MinStrengthK: default 0.5 K (common practice, no source; no published
	// threshold was found). It is five times the 0.1 K to which archive and
	// TEMP temperatures are reported, so a layer cannot pass on rounding
	// alone; TEMP significant levels do not resolve much weaker inversions
	// anyway (METHODS §3.2, §7.1).
	MinStrengthK float64
	// MinDepthM: default 10 m (common practice, no source): about what a
	// sonde rising 5 m/s covers in the 2 s between high-resolution records,
	// so a thinner layer is below the data's vertical resolution.
	MinDepthM float64
	// FineSpacingM and MinLevelsFine make the rule aware of the profile's
	// resolution: when the median spacing of the searched levels is below
	// FineSpacingM (a high-resolution profile, not significant levels), a
	// layer must hold at least MinLevelsFine levels, base and top included,
	// so that one noisy record cannot make an inversion. In coarse profiles
	// two levels suffice: significant levels are placed at the base and top
	// of every inversion by the reporting rules (WMO-No. 306, METHODS §7.1).
	// Defaults 50 m and 3 levels (common practice, no source). MinLevelsFine
	// ≤ 2 disables the test.
	FineSpacingM  float64
	MinLevelsFine int
	// Classes holds the thresholds of the inversion class rules.
	Classes InversionClassConfig
}

// InversionClassConfig holds the thresholds of the inversion class rules
// (METHODS §3.3, "suggested decision rule": a synthesis of published
// synoptic guidance; the thresholds are proposals there). The rules are
// evaluated in this order and the first that holds gives the class:
//
//  1. radiation: surface-based; the sun is below the horizon at launch
//     (civil twilight or night), or low (sun class low_sun) before
//     RadiationMorningBeforeH local apparent solar time (early morning, when
//     the night's inversion has not yet been mixed out); surface wind speed
//     ≤ RadiationMaxWindMS.
//  2. subsidence: elevated; drying upward, ΔDPD ≥ SubsidenceMinDPDIncreaseK
//     or ΔRH ≤ SubsidenceMaxRHChangePct; and Δw ≤ SubsidenceMaxMixingRatioChangeKgKg.
//  3. frontal: elevated; moistening upward, ΔDPD ≤ FrontalMaxDPDChangeK,
//     and veering (clockwise turning with height) ≥ FrontalMinVeeringDeg.
//  4. capping: elevated; the base lies within CappingToleranceM of the top
//     of a well-mixed layer.
//  5. unclassified: anything else, including any rule whose inputs are
//     missing (NaN never satisfies a rule).
type InversionClassConfig struct {
	RadiationMaxWindMS                 float64 // m/s; default 5
	RadiationMorningBeforeH            float64 // h local apparent solar time; default 12
	SubsidenceMinDPDIncreaseK          float64 // K; default 3
	SubsidenceMaxRHChangePct           float64 // % points; default −20
	SubsidenceMaxMixingRatioChangeKgKg float64 // kg/kg; default 0
	FrontalMaxDPDChangeK               float64 // K; default 0
	FrontalMinVeeringDeg               float64 // degrees; default 30
	// CappingToleranceM: default 100 m (proposal, no source).
	CappingToleranceM float64
}

// MixedLayerConfig parameterises the well-mixed layer test (METHODS §2,
// "suggested default"; heuristics, not a published standard).
type MixedLayerConfig struct {
	MaxThetaVRangeK         float64 // max − min θv in the layer, K; default 1.0
	MaxMixingRatioRangeKgKg float64 // max − min w in the layer, kg/kg; default 0.001 (1 g/kg)
	MinLevels               int     // levels in the layer, base included; default 3
	MinDepthM               float64 // top − base, m; default 200
	// SuperadiabaticMaxDepthM allows a near-surface superadiabatic layer
	// (θv decreasing with height) of up to this depth at the bottom of a
	// surface-based well-mixed layer: those levels belong to the layer but
	// are left out of the θv and w spread tests. Default 200 m (METHODS §2:
	// "first 50–200 m", from memory there). 0 disables.
	SuperadiabaticMaxDepthM float64
	// SuperadiabaticDayOnly restricts that allowance to soundings whose
	// sun class is day. Default true.
	SuperadiabaticDayOnly bool
}

// ParcelConfig parameterises the parcel mixing height (METHODS §4.1).
type ParcelConfig struct {
	// ExcessK is added to the surface temperature before lifting the
	// parcel. Default 0 K; METHODS §4.1 mentions +0.5 K as an option
	// (from memory) and the Holzworth morning construction uses +5 K.
	ExcessK float64
}

// DefaultConfig returns the documented defaults listed on each field.
func DefaultConfig() Config {
	return Config{
		Constants:         thermo.Default(),
		SatVap:            thermo.Bolton,
		CeilingPressurePa: 50000,
		CeilingAGLM:       5000,
		MinLevels:         3,
		CoverageTopPa:     70000,
		MaxSurfaceGapM:    150,
		Sun:               sun.DefaultThresholds(),
		Inversion: InversionConfig{MergeGapM: 100, MinStrengthK: 0.5, MinDepthM: 10,
			FineSpacingM: 50, MinLevelsFine: 3, Classes: InversionClassConfig{
				RadiationMaxWindMS: 5, RadiationMorningBeforeH: 12,
				SubsidenceMinDPDIncreaseK: 3, SubsidenceMaxRHChangePct: -20,
				FrontalMaxDPDChangeK: 0, FrontalMinVeeringDeg: 30, CappingToleranceM: 100,
			}},
		MixedLayer: MixedLayerConfig{
			MaxThetaVRangeK:         1.0,
			MaxMixingRatioRangeKgKg: 0.001,
			MinLevels:               3,
			MinDepthM:               200,
			SuperadiabaticMaxDepthM: 200,
			SuperadiabaticDayOnly:   true,
		},
		Heffter:      DefaultHeffterConfig(),
		Richardson:   DefaultRichardsonConfig(),
		LiuLiang:     LiuLiangLand(),
		MixingHeight: DefaultMixingHeightConfig(),
		Ventilation:  DefaultVentilationConfig(),
		HeatDeficit:  DefaultHeatDeficitConfig(),
		StableLayer:  DefaultStableLayerConfig(),
	}
}

// valid reports whether the configuration can be used.
func (c Config) valid() bool {
	return c.Constants.Valid() && c.CeilingPressurePa > 0 && c.CeilingAGLM > 0 &&
		c.MinLevels >= 1 && !(c.CoverageTopPa < 0) && c.MixedLayer.MinLevels >= 2 &&
		!(c.MaxSurfaceGapM < 0) && !(c.Inversion.MergeGapM < 0) &&
		c.Heffter.GridStepPa > 0 && c.LiuLiang.GridStepPa > 0 && c.Heffter.MaxLayers >= 1
}
