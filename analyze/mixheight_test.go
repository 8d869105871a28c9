package analyze

import (
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// ribProfile is the METHODS §9 bulk Richardson profile [D]: z = 0…1200 m,
// θv = [300.0, 300.1, 300.2, 300.3, 301.3, 303.0, 304.0] K, u = [0, 5, 6,
// 6.5, 7, 8, 9] m/s, v = 0.
func ribProfile() (z, thv, u, v []float64) {
	return []float64{0, 200, 400, 600, 800, 1000, 1200},
		[]float64{300.0, 300.1, 300.2, 300.3, 301.3, 303.0, 304.0},
		[]float64{0, 5, 6, 6.5, 7, 8, 9}, make([]float64, 7)
}

// TestBulkRichardson checks METHODS §9 "Bulk Richardson" [D]: Rib = [0,
// 0.0262, 0.0726, 0.1393, 0.6938, 1.5323, 1.9371]; Ric 0.25 → 639.9 m;
// Ric 0.5 → 730.1 m; b = 100, u* = 0.3 m/s → 657.4 m at Ric 0.25. Surface
// reference, us = 0, g = 9.80665.
func TestBulkRichardson(t *testing.T) {
	z, thv, u, v := ribProfile()
	cfg := DefaultRichardsonConfig()
	rib := make([]float64, len(z))
	BulkRichardsonNumbers(rib, z, thv, u, v, 9.80665, cfg)
	for i, w := range []float64{0, 0.0262, 0.0726, 0.1393, 0.6938, 1.5323, 1.9371} {
		near(t, "Rib", rib[i], w, 0.00005)
	}
	tests := []struct {
		name   string
		ric    float64
		ustar  float64
		want   float64
		status MixingHeightStatus
		note   string
	}{
		{"Ric 0.25", 0.25, 0, 639.9, MixingHeightOK, "ric=0.25"},
		{"Ric 0.5", 0.5, 0, 730.1, MixingHeightOK, "ric=0.5"},
		{"friction term", 0.25, 0.3, 657.4, MixingHeightOK, "ric=0.25"},
		// Never crosses: Ric 5 exceeds every Rib (hand check: max 1.94).
		{"no crossing", 5, 0, nan, MixingHeightUndefined, "no_crossing"},
	}
	for _, tt := range tests {
		c := cfg
		c.FrictionVelocityMS = tt.ustar
		BulkRichardsonNumbers(rib, z, thv, u, v, 9.80665, c)
		h, st, note := RichardsonHeight(z, rib, tt.ric, 4000)
		if st != tt.status || note != tt.note || !(math.Abs(h-tt.want) <= 0.05 || math.IsNaN(h) && math.IsNaN(tt.want)) {
			t.Errorf("%s: %.2f %q %q, want %.1f %q %q", tt.name, h, st, note, tt.want, tt.status, tt.note)
		}
	}
	// Ceiling below the crossing (639.9 m) → undefined.
	BulkRichardsonNumbers(rib, z, thv, u, v, 9.80665, cfg)
	if h, st, _ := RichardsonHeight(z, rib, 0.25, 600); st != MixingHeightUndefined || !math.IsNaN(h) {
		t.Errorf("ceiling 600 m: %v %q", h, st)
	}
	// Missing winds at 400 m: undefined, not a zero-shear (huge Rib) crossing.
	u2 := append([]float64(nil), u...)
	u2[2] = nan
	BulkRichardsonNumbers(rib, z, thv, u2, v, 9.80665, cfg)
	if !math.IsNaN(rib[2]) {
		t.Errorf("Rib with missing wind = %v, want NaN", rib[2])
	}
	if h, st, note := RichardsonHeight(z, rib, 0.25, 4000); st != MixingHeightUndefined || note != "missing_wind" || !math.IsNaN(h) {
		t.Errorf("missing wind: %v %q %q", h, st, note)
	}
	// Calm winds aloft: the shear floor (0.01 m²/s²) bounds Rib, which is
	// then large: (g/300)(0.1)(200)/0.01 = 65.4 at 200 m [D], crossing just
	// above the surface: h = 200·0.25/65.38 = 0.76 m.
	BulkRichardsonNumbers(rib, z, thv, make([]float64, 7), v, 9.80665, cfg)
	near(t, "floored Rib", rib[1], 9.80665/300*0.1*200/0.01, 1e-9)
	// Subtracting the surface wind changes nothing here (us = 0), and a NaN
	// surface wind then makes every level NaN.
	c := cfg
	c.SubtractSurfaceWind = true
	u3 := append([]float64(nil), u...)
	u3[0] = nan
	BulkRichardsonNumbers(rib, z, thv, u3, v, 9.80665, c)
	if !math.IsNaN(rib[3]) {
		t.Error("NaN surface wind subtracted gives a number")
	}
	// One level only.
	if _, st, note := RichardsonHeight(z[:1], rib[:1], 0.25, 4000); st != MixingHeightUndefined || note != "too_few_levels" {
		t.Errorf("one level: %q %q", st, note)
	}
}

// ribSounding turns the METHODS §9 Richardson profile into a dry sounding
// (invented station): pressures at the USSA76 pressure altitude of each
// height (METHODS §1.7), reported heights, T = θ (p/p0)^κ, wind from the
// west (270°) at the listed speeds.
func ribSounding() *sounding.Sounding {
	z, thv, u, _ := ribProfile()
	c := thermo.CODATA2018()
	s := &sounding.Sounding{StationID: "XQ0010", ElevationM: 0}
	for i := range z {
		p := thermo.StandardPressure(z[i])
		tk := thermo.TemperatureFromPotentialTemperature(thv[i], p, c.Kappa, c.P0Pa)
		l := lvl(sounding.KindSignificant, p/100, z[i], tk-273.15, nan)
		l.WindSpeedMS, l.WindDirectionDeg = u[i], 270
		s.Levels = append(s.Levels, l)
	}
	s.Levels[0].Kind = sounding.KindSurface
	// A level at 2000 m keeps the profile going above the crossing.
	p := thermo.StandardPressure(2000)
	l := lvl(sounding.KindSignificant, p/100, 2000, thermo.TemperatureFromPotentialTemperature(308, p, c.Kappa, c.P0Pa)-273.15, nan)
	l.WindSpeedMS, l.WindDirectionDeg = 10, 270
	s.Levels = append(s.Levels, l)
	return s
}

// TestAnalyzeMixingHeights runs the METHODS §9 Richardson profile through
// Analyze: both Richardson heights as in §9 (639.9 m, 730.1 m) [D]; the
// parcel from the surface (θ0 = 300.0 K < θ(200 m) = 300.1 K) is surface
// (METHODS §4.1 rule); no inversion (T falls upward everywhere: θ rises
// at most 8.5 K/km, less than g/cp ≈ 9.8 K/km), so the inversion methods
// are undefined; the consensus is the median of the ok methods.
func TestAnalyzeMixingHeights(t *testing.T) {
	r := Analyze(ribSounding(), DefaultConfig())
	if r.Status != StatusOK || len(r.MixingHeights) != len(MethodNames()) {
		t.Fatalf("status %q, %d heights", r.Status, len(r.MixingHeights))
	}
	by := map[string]MixingHeight{}
	for i, m := range r.MixingHeights {
		if want := MethodNames()[i]; m.Method != want {
			t.Errorf("method %d = %q, want %q", i, m.Method, want)
		}
		by[m.Method] = m
	}
	near(t, "Rib 0.25", by[MethodRichardson].HeightAGLM, 639.9, 0.05)
	near(t, "Rib 0.5", by[MethodRichardsonAlt].HeightAGLM, 730.1, 0.05)
	if m := by[MethodParcel]; m.Status != MixingHeightSurface || m.HeightAGLM != 0 {
		t.Errorf("parcel = %+v", m)
	}
	if len(r.Inversions) != 0 || by[MethodSBITop].Status != MixingHeightUndefined || by[MethodElevatedBase].Note != "no_elevated_inversion" {
		t.Errorf("inversions %v, sbi_top %+v, ei %+v", r.Inversions, by[MethodSBITop], by[MethodElevatedBase])
	}
	// Resolution rule: 639.9 m lies between levels 200 m apart, less than
	// half its height and less than 500 m → resolved.
	if m := by[MethodRichardson]; m.Unresolved || m.LevelSpacingM != 200 {
		t.Errorf("Richardson resolution: %+v", m)
	}
	// No position (no sun class) and a near-neutral profile (Liu–Liang
	// NRL): the regime is neutral, whose consensus holds the Richardson
	// and Liu–Liang methods only (ClassifyRegime rule 4, METHODS §4.6a).
	if r.Regime != BLNeutral || r.LiuLiangRegime != RegimeNeutral {
		t.Errorf("regime %q (Liu–Liang %q), want neutral (NRL)", r.Regime, r.LiuLiangRegime)
	}
	var ok []float64
	for _, name := range regimeConsensus(nil, DefaultMixingHeightConfig().Consensus, r.Regime, r.LiuLiangRegime) {
		if m := by[name]; m.Status == MixingHeightOK {
			ok = append(ok, m.HeightAGLM)
		}
	}
	c := r.MixingHeightConsensus
	if c.OK != len(ok) || c.OK == 0 {
		t.Fatalf("consensus %+v, ok heights %v", c, ok)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, h := range ok {
		lo, hi = math.Min(lo, h), math.Max(hi, h)
	}
	near(t, "spread", c.SpreadM, hi-lo, 1e-9)
	// Ventilation: consensus height × scalar-mean wind, converted at
	// 6.37745 kt·ft per m²/s (METHODS §5).
	v := r.Ventilation
	near(t, "VI", v.IndexM2S, v.MixingHeightAGLM*v.TransportWindMS, 1e-9)
	near(t, "VI kt ft", v.IndexKtFt, v.IndexM2S*6.37745, 1e-3*v.IndexM2S)
	if v.MixingHeightAGLM != c.HeightAGLM || v.Category == "" || v.Table != "generic" {
		t.Errorf("ventilation %+v", v)
	}
	// Winds removed: Richardson undefined with missing_wind, never zero.
	s := ribSounding()
	for i := range s.Levels {
		s.Levels[i].WindSpeedMS = nan
	}
	r = Analyze(s, DefaultConfig())
	if m, _ := r.MixingHeight(MethodRichardson); m.Status != MixingHeightUndefined || m.Note != "missing_wind" {
		t.Errorf("no winds: %+v", m)
	}
	if !math.IsNaN(r.Ventilation.TransportWindMS) || !math.IsNaN(r.Ventilation.IndexM2S) {
		t.Errorf("no winds: ventilation %+v", r.Ventilation)
	}
}

// TestConsensusOf: median and spread of ok heights (hand-computed).
func TestConsensusOf(t *testing.T) {
	mh := []MixingHeight{
		{Method: "a", HeightAGLM: 900, Status: MixingHeightOK},
		{Method: "b", HeightAGLM: 500, Status: MixingHeightOK},
		{Method: "c", HeightAGLM: 0, Status: MixingHeightSurface},
		{Method: "d", HeightAGLM: nan, Status: MixingHeightUndefined},
		{Method: "e", HeightAGLM: 700, Status: MixingHeightOK},
		{Method: "x", HeightAGLM: 5000, Status: MixingHeightOK}, // not listed
	}
	c := ConsensusOf(mh, []string{"a", "b", "c", "d", "e"})
	if c.HeightAGLM != 700 || c.SpreadM != 400 || c.OK != 3 || c.Surface != 1 || c.Status != MixingHeightOK {
		t.Errorf("odd: %+v", c)
	}
	c = ConsensusOf(mh, []string{"a", "b"}) // even count: mean of the middle two
	if c.HeightAGLM != 700 || c.SpreadM != 400 {
		t.Errorf("even: %+v", c)
	}
	c = ConsensusOf(mh, []string{"c", "d"})
	if c.HeightAGLM != 0 || c.Status != MixingHeightSurface || !math.IsNaN(c.SpreadM) {
		t.Errorf("surface only: %+v", c)
	}
	c = ConsensusOf(mh, []string{"d"})
	if !math.IsNaN(c.HeightAGLM) || c.Status != MixingHeightUndefined {
		t.Errorf("undefined only: %+v", c)
	}
}

// heffterGrid builds a gridded θ profile every 50 m from piecewise-linear
// lapse rates: segments of (top m, dθ/dz K/km), starting at 300 K.
func heffterGrid(segs [][2]float64) (z, th []float64) {
	z, th = []float64{0}, []float64{300}
	for _, s := range segs {
		for z[len(z)-1] < s[0]-1e-9 {
			z = append(z, z[len(z)-1]+50)
			th = append(th, th[len(th)-1]+50*s[1]/1000)
		}
	}
	return z, th
}

// TestHeffter uses constructed gridded profiles; expected heights by hand
// from the METHODS §4.2 rule (critical dθ/dz ≥ 5 K/km, base of the lowest
// of the five lowest critical layers with Δθ > 2 K, else the largest Δθ).
func TestHeffter(t *testing.T) {
	tests := []struct {
		name   string
		segs   [][2]float64
		want   float64
		status MixingHeightStatus
		note   string
	}{
		// Neutral to 1000 m, 8 K/km to 1400 m (Δθ 3.2 K), 3 K/km above: 1000 m.
		{"capped mixed layer", [][2]float64{{1000, 0}, {1400, 8}, {3000, 3}}, 1000, MixingHeightOK, ""},
		// Surface layer 10 K/km to 150 m (Δθ 1.5 K, too small), neutral to
		// 1500 m, 6 K/km to 2000 m (Δθ 3 K): 1500 m.
		{"weak SBI below", [][2]float64{{150, 10}, {1500, 0}, {2000, 6}, {3000, 3}}, 1500, MixingHeightOK, ""},
		// Critical layers of Δθ 1.0, 1.5, 1.2 K only: the largest (1.5 K)
		// starts at 1500 m.
		{"largest jump", [][2]float64{{500, 0}, {600, 10}, {1500, 0}, {1750, 6}, {2500, 0}, {2700, 6}, {3500, 0}},
			1500, MixingHeightOK, "largest_jump"},
		// 12 K/km from the ground to 300 m (Δθ 3.6 K): surface.
		{"surface", [][2]float64{{300, 12}, {3000, 3}}, 0, MixingHeightSurface, ""},
		// Neutral throughout: undefined.
		{"neutral", [][2]float64{{3000, 0}}, nan, MixingHeightUndefined, "no_critical_layer"},
		// Only critical layer based above 4 km: undefined.
		{"too high", [][2]float64{{4200, 0}, {4800, 8}}, nan, MixingHeightUndefined, "no_critical_layer"},
		// An inversion at the very top of the profile, never closed: 2000 m.
		{"open at top", [][2]float64{{2000, 0}, {2500, 10}}, 2000, MixingHeightOK, ""},
	}
	for _, tt := range tests {
		z, th := heffterGrid(tt.segs)
		h, st, note := HeffterHeight(z, th, DefaultHeffterConfig())
		if st != tt.status || note != tt.note || !(math.Abs(h-tt.want) < 1e-6 || math.IsNaN(h) && math.IsNaN(tt.want)) {
			t.Errorf("%s: %v %q %q, want %v %q %q", tt.name, h, st, note, tt.want, tt.status, tt.note)
		}
	}
	if _, st, _ := HeffterHeight([]float64{0}, []float64{300}, DefaultHeffterConfig()); st != MixingHeightUndefined {
		t.Error("one level accepted")
	}
}

// TestLiuLiang uses constructed 50 m grids; expected results by hand from
// the rules listed on LiuLiangHeight (land thresholds, METHODS §4.4).
func TestLiuLiang(t *testing.T) {
	n := 41 // 0–2000 m
	z := make([]float64, n)
	for i := range z {
		z[i] = 50 * float64(i)
	}
	mk := func(f func(z float64) float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = f(z[i])
		}
		return x
	}
	calm := mk(func(float64) float64 { return 5 })
	// Convective: θ = 302, 301.6, 301.4, 301.2 then 300.5 K up to 1000 m,
	// then +6 K/km. θ5 − θ2 = 300.5 − 301.6 = −1.1 K < −1 K → CBL. Onset:
	// θ ≥ θ1 + 0.5 = 302.5 K at 1000 + 2.0/0.006 = 1333 m; the first grid
	// level at or above is 1350 m, where the gradient is 6 ≥ 4 K/km → 1350 m.
	cbl := mk(func(z float64) float64 {
		switch {
		case z < 200:
			return []float64{302, 301.6, 301.4, 301.2}[int(z/50)]
		case z <= 1000:
			return 300.5
		}
		return 300.5 + 0.006*(z-1000)
	})
	// Stable: 20 K/km to 200 m, 2 K/km above. θ5 − θ2 = 294 − 291 = 3 K > 1
	// → SBL. Thermal top: gradient drops from 20 to 2 K/km at 200 m (a local
	// minimum; the next gradient 2 < 4 K/km) → 200 m.
	sbl := mk(func(z float64) float64 {
		if z <= 200 {
			return 290 + 0.02*z
		}
		return 294 + 0.002*(z-200)
	})
	// Jet: speed rises to 8 m/s at 150 m, 5 m/s above: 8 − 4... − min above
	// (4 m/s) = 4 > 2 m/s → nose 150 m, lower than the thermal top.
	jet := mk(func(z float64) float64 {
		switch {
		case z <= 150:
			return 2 + z/25
		case z == 200:
			return 5
		}
		return 4
	})
	neutral := mk(func(z float64) float64 {
		if z <= 800 {
			return 300
		}
		return 300 + 0.005*(z-800)
	})
	tests := []struct {
		name   string
		th, sp []float64
		want   float64
		regime LiuLiangRegime
		st     MixingHeightStatus
		n      string
	}{
		{"CBL", cbl, calm, 1350, RegimeConvective, MixingHeightOK, ""},
		{"SBL thermal", sbl, calm, 200, RegimeStable, MixingHeightOK, "thermal"},
		{"SBL jet", sbl, jet, 150, RegimeStable, MixingHeightOK, "llj"},
		// Missing winds: no jet can be found, the thermal top stands.
		{"SBL no wind", sbl, mk(func(float64) float64 { return nan }), 200, RegimeStable, MixingHeightOK, "thermal"},
		// Neutral: θ constant to 800 m, then 5 K/km; onset θ ≥ 300.5 K at
		// 900 m, gradient 5 ≥ 4 K/km there → 900 m.
		{"NRL", neutral, calm, 900, RegimeNeutral, MixingHeightOK, ""},
		// Neutral and never stable enough: undefined.
		{"NRL never", mk(func(float64) float64 { return 300 }), calm, nan, RegimeNeutral, MixingHeightUndefined, "no_crossing"},
	}
	for _, tt := range tests {
		h, regime, st, note := LiuLiangHeight(z, tt.th, tt.sp, LiuLiangLand())
		if regime != tt.regime || st != tt.st || note != tt.n || !(math.Abs(h-tt.want) < 1e-6 || math.IsNaN(h) && math.IsNaN(tt.want)) {
			t.Errorf("%s: %v %q %q %q, want %v %q %q %q", tt.name, h, regime, st, note, tt.want, tt.regime, tt.st, tt.n)
		}
	}
	// Over ocean the regime threshold is 0.2 K (METHODS §4.4): the CBL
	// profile stays CBL, and a θ5 − θ2 of +0.5 K (NRL over land) is SBL.
	mild := mk(func(z float64) float64 { return 300 + 0.5*math.Min(z, 200)/150 })
	if _, regime, _, _ := LiuLiangHeight(z, mild, calm, LiuLiangLand()); regime != RegimeNeutral {
		t.Errorf("land regime %q", regime)
	}
	if _, regime, _, _ := LiuLiangHeight(z, mild, calm, LiuLiangOcean()); regime != RegimeStable {
		t.Errorf("ocean regime %q", regime)
	}
	if _, _, st, note := LiuLiangHeight(z[:4], cbl[:4], calm[:4], LiuLiangLand()); st != MixingHeightUndefined || note != "too_few_levels" {
		t.Errorf("4 levels: %q %q", st, note)
	}
}
