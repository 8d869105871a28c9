package analyze

import (
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// TestAnalyzeTTBB checks the METHODS §9 TTBB snippet: SBI base 0 m AGL, top
// 489.9 m AGL (962 hPa), ΔT = +3.8 K, mean gradient +7.76 K/km; θ surface
// 286.01 K, 962 hPa 294.59 K [D]; tolerances ±0.5 in the last printed digit.
func TestAnalyzeTTBB(t *testing.T) {
	s := ttbb()
	r := Analyze(s, DefaultConfig())
	if r.Status != StatusOK || r.SurfaceIndex != 0 || r.ConstantSet != "codata2018.v1" {
		t.Fatalf("status %q surface %d set %q", r.Status, r.SurfaceIndex, r.ConstantSet)
	}
	sbi := r.SBI
	if !sbi.Present || sbi.BaseIndex != 0 || sbi.TopIndex != 2 || sbi.Levels != 3 {
		t.Fatalf("SBI = %+v", sbi)
	}
	near(t, "SBI base", sbi.BaseAGLM, 0, 0.05)
	near(t, "SBI top", sbi.TopAGLM, 489.9, 0.05)
	near(t, "SBI top p", sbi.TopPressurePa, 96200, 0)
	near(t, "SBI strength", sbi.StrengthK, 3.8, 0.05)
	near(t, "SBI gradient", sbi.GradientKPerKm(), 7.76, 0.005)
	near(t, "theta sfc", r.ThetaK[0], 286.01, 0.005)
	near(t, "theta 962", r.ThetaK[2], 294.59, 0.005)
	// Per-level slices aligned with s.Levels.
	if len(r.HeightAGLM) != 4 || !r.HeightDerived[1] || r.HeightDerived[0] {
		t.Errorf("per-level slices: %v %v", r.HeightAGLM, r.HeightDerived)
	}
	near(t, "AGL 850", r.HeightAGLM[3], 1540.0, 0.05) // 1555.0 − 15, METHODS §9
	// Mixed layer starts at the SBI top; above it only 850 hPa remains
	// (θ ≈ 299.1 K, more than 1 K above): no well-mixed layer.
	if r.MixedLayer.Found || r.MixedLayer.BaseAGLM != sbi.TopAGLM {
		t.Errorf("mixed layer = %+v", r.MixedLayer)
	}
	// Parcel from the surface (θ0 = 286.01 K) is colder than the first
	// level above (983 hPa): surface (METHODS §4.1 rule).
	if r.Parcel.Status != MixingHeightSurface || r.Parcel.HeightAGLM != 0 {
		t.Errorf("parcel = %+v", r.Parcel)
	}
}

// TestFindInversions checks the METHODS §9 "Inversion detection" profile
// [D]: with merge gap 100 m SBI 0–300 m ΔT 7.0 K and EI 1000–1200 m ΔT
// 1.0 K; without merging SBI 0–150 (5.0 K), EI 220–300 (2.5 K), EI
// 1000–1200 (1.0 K); with ΔT_min = 1.5 K and merging, SBI only.
func TestFindInversions(t *testing.T) {
	z := []float64{0, 50, 150, 220, 300, 400, 600, 1000, 1200, 1400, 2000}
	tc := []float64{-20, -18, -15, -15.5, -13, -14, -16, -18, -17, -19, -23}
	tk := make([]float64, len(tc))
	for i := range tc {
		tk[i] = tc[i] + 273.15
	}
	type want struct{ zb, zt, dt float64 }
	tests := []struct {
		name string
		cfg  InversionConfig
		want []want
	}{
		{"merge 100 m", InversionConfig{MergeGapM: 100}, []want{{0, 300, 7.0}, {1000, 1200, 1.0}}},
		{"no merge", InversionConfig{}, []want{{0, 150, 5.0}, {220, 300, 2.5}, {1000, 1200, 1.0}}},
		{"min 1.5 K", InversionConfig{MergeGapM: 100, MinStrengthK: 1.5}, []want{{0, 300, 7.0}}},
		// The default significance rule (0.5 K, 10 m; these levels are
		// coarse, so two levels suffice) keeps both layers of METHODS §9.
		{"defaults", DefaultConfig().Inversion, []want{{0, 300, 7.0}, {1000, 1200, 1.0}}},
		// Without merging, a 0.5 K minimum still keeps the 2.5 K layer;
		// a 300 m minimum depth keeps only the merged SBI (300 m deep).
		{"no merge, 0.5 K", InversionConfig{MinStrengthK: 0.5}, []want{{0, 150, 5.0}, {220, 300, 2.5}, {1000, 1200, 1.0}}},
		{"min depth 300 m", InversionConfig{MergeGapM: 100, MinDepthM: 300}, []want{{0, 300, 7.0}}},
	}
	for _, tt := range tests {
		got := findInversions(z, tk, len(z), tt.cfg)
		if len(got) != len(tt.want) {
			t.Errorf("%s: %d layers, want %d", tt.name, len(got), len(tt.want))
			continue
		}
		for i, w := range tt.want {
			g := got[i]
			if z[g.base] != w.zb || z[g.top] != w.zt || math.Abs(tk[g.top]-tk[g.base]-w.dt) > 1e-9 {
				t.Errorf("%s layer %d: %v–%v m ΔT %.2f, want %+v", tt.name, i, z[g.base], z[g.top], tk[g.top]-tk[g.base], w)
			}
		}
	}
	// Significance rule on a weak layer: +0.3 K over 40 m at 600–640 m is
	// below the 0.5 K default (common practice, no source) and is dropped;
	// with the minimum set to 0 it is an inversion.
	zw := []float64{0, 200, 600, 640, 1000}
	tw := []float64{280, 278, 274, 274.3, 271}
	if got := findInversions(zw, tw, len(zw), DefaultConfig().Inversion); len(got) != 0 {
		t.Errorf("0.3 K layer kept by the default rule: %v", got)
	}
	if got := findInversions(zw, tw, len(zw), InversionConfig{}); len(got) != 1 {
		t.Errorf("0.3 K layer not found with the rule off: %v", got)
	}
	// Resolution: a 10 m-spaced (high-resolution) profile cooling 0.1 K
	// per record, with a real 1 K inversion over 200–240 m (5 records) and
	// a single record 0.9 K warm at 600 m. That record makes a two-level
	// "layer" of +0.9 K over 10 m; in a fine profile the rule asks for 3
	// levels and drops it, while the real layer stays.
	var zf, tf []float64
	for k := 0; k <= 100; k++ {
		zf = append(zf, float64(10*k))
		tf = append(tf, 285-0.01*float64(10*k))
	}
	for k := 21; k <= 100; k++ {
		if k <= 24 {
			tf[k] = tf[20] + 0.25*float64(k-20)
		} else {
			tf[k] = 285 - 0.01*float64(10*k) + 1.4
		}
	}
	tf[60] = tf[59] + 0.9
	got := findInversions(zf, tf, len(zf), DefaultConfig().Inversion)
	if len(got) != 1 || zf[got[0].base] != 200 || zf[got[0].top] != 240 {
		t.Errorf("fine profile: layers %v, want one 200–240 m", got)
	}
	fine := DefaultConfig().Inversion
	fine.MinLevelsFine = 0
	if got := findInversions(zf, tf, len(zf), fine); len(got) != 2 {
		t.Errorf("fine profile with the level test off: %d layers, want 2 (the spike too)", len(got))
	}
	// Same profile through Analyze, as a sounding with pressures from the
	// USSA76 pressure altitude (METHODS §1.7) and reported heights:
	// SBI 0–300 m, ΔT 7.0 K, depth 300 m (METHODS §9).
	s := &sounding.Sounding{StationID: "XQ0003", ElevationM: 0}
	for i := range z {
		s.Levels = append(s.Levels, lvl(sounding.KindSignificant, thermo.StandardPressure(z[i])/100, z[i], tc[i], nan))
	}
	s.Levels[0].Kind = sounding.KindSurface
	r := Analyze(s, DefaultConfig())
	if !r.SBI.Present || r.Status != StatusOK {
		t.Fatalf("status %q SBI %+v", r.Status, r.SBI)
	}
	near(t, "SBI top", r.SBI.TopAGLM, 300, 1e-9)
	near(t, "SBI depth", r.SBI.DepthM(), 300, 1e-9)
	near(t, "SBI strength", r.SBI.StrengthK, 7.0, 1e-9)
	if r.SBI.Levels != 5 {
		t.Errorf("SBI levels = %d, want 5", r.SBI.Levels)
	}
}

// TestParcelMixingHeight checks METHODS §9 "Mixing height" [D]: θ = 291 +
// 2.4 K/km·z, surface parcel θ0 = 295.2 K → 1750 m.
func TestParcelMixingHeight(t *testing.T) {
	z := []float64{0, 250, 500, 1000, 1500, 2000, 2500, 3000}
	th := make([]float64, len(z))
	for i := range z {
		th[i] = 291 + 2.4*z[i]/1000
	}
	tests := []struct {
		name   string
		theta0 float64
		ceil   float64
		want   float64
		status MixingHeightStatus
	}{
		{"METHODS §9 1750 m", 295.2, 5000, 1750, MixingHeightOK},
		// Holzworth construction, linear in z from the surface: θ0 between
		// θ_sfc (291 K) and θ(250 m) (291.6 K) crosses at
		// (291.3 − 291)/2.4 K km⁻¹ = 125 m, below the first level.
		{"below first level", 291.3, 5000, 125, MixingHeightOK},
		// The parcel cannot rise (θ0 ≤ θ_sfc under a stable profile):
		// surface, 0 (METHODS §4.1).
		{"equal surface", 291.0, 5000, 0, MixingHeightSurface},
		{"colder than surface", 290.5, 5000, 0, MixingHeightSurface},
		// Equal to the first level: lowest height where θ ≥ θ0 is that level.
		{"equal first level", 291.6, 5000, 250, MixingHeightOK},
		// Crossing at 1750 m lies above a 1500 m ceiling.
		{"above ceiling", 295.2, 1500, nan, MixingHeightUndefined},
		// Never crosses within the profile.
		{"never crosses", 400, 5000, nan, MixingHeightUndefined},
		{"NaN theta0", nan, 5000, nan, MixingHeightUndefined},
	}
	for _, tt := range tests {
		h, st := ParcelMixingHeight(z, th, tt.theta0, tt.ceil)
		if st != tt.status || !(h == tt.want || math.Abs(h-tt.want) < 0.05 || math.IsNaN(h) && math.IsNaN(tt.want)) {
			t.Errorf("%s: %v %q, want %v %q", tt.name, h, st, tt.want, tt.status)
		}
	}
	// NaN levels are skipped: removing the 1500 m level leaves the crossing
	// between 1000 and 2000 m, still 1750 m for a linear profile.
	th[4] = nan
	if h, st := ParcelMixingHeight(z, th, 295.2, 5000); st != MixingHeightOK || math.Abs(h-1750) > 1e-6 {
		t.Errorf("with NaN level: %v %q", h, st)
	}
	// A superadiabatic surface layer: a parcel at the surface θ (300 K)
	// rises through it and meets θ = 300 K at 400 + 200·(300 − 299)/(301 −
	// 299) = 500 m (linear in z, hand value).
	zs, ts := []float64{0, 400, 600}, []float64{300, 299, 301}
	if h, st := ParcelMixingHeight(zs, ts, 300, 5000); st != MixingHeightOK || math.Abs(h-500) > 1e-9 {
		t.Errorf("superadiabatic surface layer: %v %q, want 500 ok", h, st)
	}
	// A NaN surface θ leaves no base to interpolate from: θ0 below the
	// first valid level stays surface.
	if h, st := ParcelMixingHeight(zs, []float64{nan, 301, 302}, 300.5, 5000); st != MixingHeightSurface || h != 0 {
		t.Errorf("NaN surface: %v %q, want 0 surface", h, st)
	}
	if _, st := ParcelMixingHeight(z[:3], th, 295.2, 5000); st != MixingHeightUndefined {
		t.Errorf("mismatched slices: %q", st)
	}
}

// TestAnalyzeParcelTTAA checks METHODS §9 "Mixing height" on the TTAA
// example (standard levels, station at 15 m) [D]: T_max = 30 °C at 1019 hPa
// → θ0 = 301.52 K → ≈ 3211 m AGL (3226 m MSL); T_sfc + 5 = 26.4 °C → θ0 =
// 297.94 K → ≈ 1229 m AGL. The surface temperature is 21.4 °C, so the
// parcel excesses are 8.6 K and 5.0 K. The "≈" values are compared with
// the §9 rule, ±0.5 in the last printed digit (±0.5 m).
func TestAnalyzeParcelTTAA(t *testing.T) {
	tests := []struct {
		excess, theta0, want float64
	}{
		{8.6, 301.52, 3211},
		{5.0, 297.94, 1229},
	}
	for _, tt := range tests {
		cfg := DefaultConfig()
		cfg.Parcel.ExcessK = tt.excess
		r := Analyze(ttaa(), cfg)
		if r.Status != StatusOK || r.Parcel.Status != MixingHeightOK {
			t.Fatalf("status %q parcel %+v", r.Status, r.Parcel)
		}
		near(t, "theta0", r.Parcel.Theta0K, tt.theta0, 0.005)
		near(t, "mixing height", r.Parcel.HeightAGLM, tt.want, 0.5)
	}
	// Ceiling: 500 hPa is at 5735 m AGL, so the 5 km AGL ceiling applies
	// (METHODS §3.2 default, whichever is lower).
	r := Analyze(ttaa(), DefaultConfig())
	near(t, "ceiling", r.CeilingAGLM, 5000, 0)
}

// TestAnalyzeMixedLayer uses the METHODS §9.17 profile (θ = 300, 302, 304 K
// at 1000/950/900 hPa → mass-weighted 302.000 K) as a sounding, with the θ
// range threshold widened to 5 K so the three levels form one layer, capped
// by a much warmer 850 hPa level.
func TestAnalyzeMixedLayer(t *testing.T) {
	c := thermo.CODATA2018()
	mk := func(thetas []float64, tdC float64) *sounding.Sounding {
		s := &sounding.Sounding{StationID: "XQ0004", ElevationM: 100}
		for i, ph := range []float64{1000, 950, 900, 850} {
			tk := thermo.TemperatureFromPotentialTemperature(thetas[i], ph*100, c.Kappa, c.P0Pa)
			z := nan
			if i == 0 {
				z = 100
			}
			s.Levels = append(s.Levels, lvl(sounding.KindSignificant, ph, z, tk-273.15, tdC))
		}
		s.Levels[0].Kind = sounding.KindSurface
		return s
	}
	cfg := DefaultConfig()
	cfg.MixedLayer.MaxThetaVRangeK = 5
	r := Analyze(mk([]float64{300, 302, 304, 315}, nan), cfg)
	ml := r.MixedLayer
	if !ml.Found || ml.Levels != 3 || ml.BaseAGLM != 0 || ml.TopPressurePa != 90000 {
		t.Fatalf("mixed layer = %+v", ml)
	}
	near(t, "9.17 ML theta", ml.ThetaK, 302.000, 0.0005) // METHODS §9.17
	near(t, "theta range", ml.ThetaRangeK, 4, 1e-9)
	if !math.IsNaN(ml.MixingRatioKgKg) || r.SBI.Present {
		t.Errorf("dry profile: w %v, SBI %v", ml.MixingRatioKgKg, r.SBI.Present)
	}

	// Default thresholds (METHODS §2 suggested: θv range ≤ 1 K, w range ≤
	// 1 g/kg, ≥ 3 levels, ≥ 200 m): a nearly neutral, moist layer
	// (invented scaffolding) is found; its means lie inside its ranges.
	r = Analyze(mk([]float64{300, 300.2, 300.4, 305}, 10), DefaultConfig())
	ml = r.MixedLayer
	if !ml.Found || ml.Levels != 3 || !(ml.TopAGLM-ml.BaseAGLM >= 200) {
		t.Fatalf("default mixed layer = %+v", ml)
	}
	near(t, "ML theta", ml.ThetaK, 300.2, 0.001) // linear in p → mid value (§9.17 algebra)
	lo, hi := math.Min(r.MixingRatioKgKg[0], r.MixingRatioKgKg[2]), math.Max(r.MixingRatioKgKg[0], r.MixingRatioKgKg[2])
	if !(ml.MixingRatioKgKg > lo && ml.MixingRatioKgKg < hi && ml.MixingRatioRangeKgKg <= 0.001) {
		t.Errorf("ML w %v outside [%v, %v] or range %v", ml.MixingRatioKgKg, lo, hi, ml.MixingRatioRangeKgKg)
	}
	// θv is higher than θ by about 0.61 w θ ≈ 1.4 K at w ≈ 7.8 g/kg (METHODS §1.5 approximation).
	near(t, "thetav - theta", r.ThetaVK[0]-r.ThetaK[0], 0.61*r.MixingRatioKgKg[0]*r.ThetaK[0], 0.02)

	// A layer thinner than 200 m is not well mixed.
	cfg = DefaultConfig()
	cfg.MixedLayer.MinDepthM = 1e4
	if r := Analyze(mk([]float64{300, 300.2, 300.4, 305}, 10), cfg); r.MixedLayer.Found {
		t.Error("mixed layer found despite MinDepthM")
	}
}

// TestAnalyzeEdgeCases covers soundings that cannot be analysed or have no
// inversion; each must return a reason, never panic (invented scaffolding
// built on the METHODS §9 TTBB levels).
func TestAnalyzeEdgeCases(t *testing.T) {
	cfg := DefaultConfig()
	allNaN := ttbb()
	for i := range allNaN.Levels {
		allNaN.Levels[i].TemperatureK = nan
	}
	one := ttbb()
	one.Levels = one.Levels[:1]
	high := ttbb()
	high.Levels = high.Levels[2:] // lowest level 489.9 m above the station
	high.Levels[0].HeightM = 504.9
	infP := ttbb()
	infP.Levels[1].PressurePa = math.Inf(1)
	tests := []struct {
		name   string
		s      *sounding.Sounding
		cfg    Config
		status Status
	}{
		{"nil", nil, cfg, StatusNoLevels},
		{"empty", &sounding.Sounding{}, cfg, StatusNoLevels},
		{"zero config", ttbb(), Config{}, StatusInvalidConfig},
		{"all NaN temperatures", allNaN, cfg, StatusNoThermoLevels},
		{"one level", one, cfg, StatusTooFewLevels},
		{"no surface", high, cfg, StatusNoSurfaceLevel},
		{"infinite pressure", infP, cfg, StatusOK},
	}
	for _, tt := range tests {
		r := Analyze(tt.s, tt.cfg)
		if r.Status != tt.status {
			t.Errorf("%s: status %q, want %q", tt.name, r.Status, tt.status)
		}
		if r.Status != StatusOK && (r.SBI.Present || r.MixedLayer.Found || r.Parcel.Status != MixingHeightUndefined) {
			t.Errorf("%s: diagnostics present on failure: %+v", tt.name, r)
		}
		if tt.s != nil && len(r.HeightM) != len(tt.s.Levels) && tt.status != StatusInvalidConfig {
			t.Errorf("%s: per-level slices not aligned", tt.name)
		}
	}

	// No inversion and a superadiabatic surface layer: TTBB snippet with
	// the surface at 20.0 °C (θ ≈ 291.7 K, warmer than 983 hPa's θ ≈ 291.1 K)
	// and 962 hPa cooled to 16.0 °C (θ ≈ 292.4 K). T falls upward everywhere.
	sa := ttbb()
	sa.Levels[0].TemperatureK = 20.0 + 273.15
	sa.Levels[0].DewpointK = 10.0 + 273.15
	sa.Levels[2].TemperatureK = 16.0 + 273.15
	sa.Levels[2].DewpointK = 10.0 + 273.15
	r := Analyze(sa, cfg)
	if r.Status != StatusOK || r.SBI.Present || !math.IsNaN(r.SBI.TopAGLM) {
		t.Fatalf("superadiabatic: status %q SBI %+v", r.Status, r.SBI)
	}
	if !(r.ThetaK[0] > r.ThetaK[1]) {
		t.Fatalf("profile is not superadiabatic at the surface: θ %v", r.ThetaK)
	}
	// The parcel rises past 983 hPa and meets the environment below 962 hPa.
	if r.Parcel.Status != MixingHeightOK || !(r.Parcel.HeightAGLM > r.HeightAGLM[1] && r.Parcel.HeightAGLM < r.HeightAGLM[2]) {
		t.Errorf("superadiabatic parcel = %+v (levels at %v)", r.Parcel, r.HeightAGLM)
	}
	// Never crosses below the ceiling: a parcel 30 K too warm.
	cfg.Parcel.ExcessK = 30
	if r := Analyze(ttbb(), cfg); r.Parcel.Status != MixingHeightUndefined || !math.IsNaN(r.Parcel.HeightAGLM) {
		t.Errorf("warm parcel = %+v", r.Parcel)
	}
}

// TestAnalyzeWindOnlySurface: surface line without pressure (wind-only, at
// the station elevation), as in late-2016 archive files (PROVENANCE.md,
// quirks): the lowest pressure level becomes the surface of the profile and
// heights stay as in METHODS §9 TTBB.
func TestAnalyzeWindOnlySurface(t *testing.T) {
	s := ttbb()
	s.ElevationM = 0
	s.Levels[0].Kind = sounding.KindSignificant
	s.Levels = append([]sounding.Level{lvl(sounding.KindWindOnly, nan, 0, nan, nan)}, s.Levels...)
	r := Analyze(s, DefaultConfig())
	if r.Status != StatusOK || r.SurfaceIndex != 1 {
		t.Fatalf("status %q surface %d", r.Status, r.SurfaceIndex)
	}
	near(t, "AGL of first pressure level", r.HeightAGLM[1], 15, 1e-9)
	near(t, "SBI top", r.SBI.TopAGLM, 504.9, 0.05) // METHODS §9 TTBB 504.9 m, ground at 0 m
	if !math.IsNaN(r.ThetaK[0]) {
		t.Errorf("wind-only level has θ %v", r.ThetaK[0])
	}
}
