package analyze

import (
	"math"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// TestInversionProperties: the METHODS §9 TTBB snippet's SBI (0–489.9 m,
// +3.8 K) carries Δθ = 294.59 − 286.01 = 8.58 K [D] and ΔDPD = 7.0 − 6.0 =
// +1.0 K (DPD 6.0 → 5.0 → 7.0 K, METHODS §9). At night (launch 2016-01-15
// 11 UTC at an invented station at 38.98 N 77.49 W, sun below the horizon
// by the Almanac formulas) with a 2 m/s surface wind it is a radiation
// inversion (METHODS §9: "the expected class is radiation or nocturnal").
func TestInversionProperties(t *testing.T) {
	s := ttbb()
	s.LatitudeDeg, s.LongitudeDeg = 38.98, -77.49
	s.LaunchTime = time.Date(2016, 1, 15, 11, 0, 0, 0, time.UTC)
	s.Levels[0].WindSpeedMS, s.Levels[0].WindDirectionDeg = 2, 180
	r := Analyze(s, DefaultConfig())
	if r.SunClass != sun.Night || len(r.Inversions) != 1 {
		t.Fatalf("sun %q (%.1f°), inversions %d", r.SunClass, r.SunElevationDeg, len(r.Inversions))
	}
	v := r.SBI
	near(t, "dtheta", v.ThetaDeltaK, 8.58, 0.01)
	near(t, "dDPD", v.DewpointDepressionDeltaK, 1.0, 1e-9)
	if !v.SurfaceBased || v.Class != ClassRadiation || r.LowestElevated.Present || v.TopIndex != r.Inversions[0].TopIndex {
		t.Errorf("SBI %+v, elevated %v", v, r.LowestElevated.Present)
	}
	// RH falls and w rises slightly through the layer: w at 962 hPa from
	// Td 11.2 °C exceeds w at 1019 hPa from Td 8.4 °C (METHODS §1.4).
	if !(v.RelHumidityDeltaPct < 0 && v.MixingRatioDeltaKgKg > 0) || !math.IsNaN(v.WindTurningDeg) {
		t.Errorf("humidity/wind deltas %+v", v)
	}
	// The same sounding by day (17 UTC, about noon local) is not radiation.
	s.LaunchTime = time.Date(2016, 1, 15, 17, 0, 0, 0, time.UTC)
	if r := Analyze(s, DefaultConfig()); r.SunClass != sun.Day || r.SBI.Class != ClassUnclassified {
		t.Errorf("day: %q %q", r.SunClass, r.SBI.Class)
	}
	// Unknown position: sun class unknown, radiation rule cannot hold.
	s.LatitudeDeg = nan
	if r := Analyze(s, DefaultConfig()); r.SunClass != sun.Unknown || !math.IsNaN(r.SunElevationDeg) || r.SBI.Class != ClassUnclassified {
		t.Errorf("unknown: %q %v %q", r.SunClass, r.SunElevationDeg, r.SBI.Class)
	}
}

// TestClassifyInversion walks the documented rules (METHODS §3.3 decision
// rule, thresholds proposals there) with constructed inversions.
func TestClassifyInversion(t *testing.T) {
	cfg := DefaultConfig().Inversion.Classes
	sbi := Inversion{Present: true, SurfaceBased: true, BaseAGLM: 0}
	ei := func(dDPD, dRH, dw, turn, base float64) Inversion {
		return Inversion{Present: true, BaseAGLM: base, DewpointDepressionDeltaK: dDPD, RelHumidityDeltaPct: dRH,
			MixingRatioDeltaKgKg: dw, WindTurningDeg: turn}
	}
	mlTops := []float64{800}
	tests := []struct {
		name     string
		v        Inversion
		sunClass sun.Class
		lastH    float64
		windMS   float64
		want     InversionClass
	}{
		{"radiation at night", sbi, sun.Night, 3, 3, ClassRadiation},
		{"radiation at low morning sun", sbi, sun.LowSun, 6.5, 5, ClassRadiation},
		{"low evening sun", sbi, sun.LowSun, 18, 3, ClassUnclassified},
		{"radiation in evening civil twilight", sbi, sun.CivilTwilight, 18.3, 3, ClassRadiation},
		{"windy night", sbi, sun.Night, 3, 5.1, ClassUnclassified},
		{"missing surface wind", sbi, sun.Night, 3, nan, ClassUnclassified},
		{"day SBI", sbi, sun.Day, 12, 1, ClassUnclassified},
		{"subsidence by DPD", ei(5, -10, -0.001, 0, 1500), sun.Day, 12, 3, ClassSubsidence},
		{"subsidence by RH", ei(2, -25, 0, 0, 1500), sun.Day, 12, 3, ClassSubsidence},
		{"drying but moister w", ei(5, -30, 0.0005, 0, 1500), sun.Day, 12, 3, ClassUnclassified},
		{"frontal", ei(-1, 10, 0.001, 45, 1500), sun.Day, 12, 3, ClassFrontal},
		{"backing is not frontal", ei(-1, 10, 0.001, -45, 1500), sun.Day, 12, 3, ClassUnclassified},
		{"capping", ei(1, -5, 0, 10, 850), sun.Day, 12, 3, ClassCapping},
		{"capping beyond tolerance", ei(1, -5, 0, 10, 950), sun.Day, 12, 3, ClassUnclassified},
		// Subsidence wins over capping: rules are evaluated in order.
		{"subsidence capping a mixed layer", ei(5, -30, -0.002, 0, 800), sun.Day, 12, 3, ClassSubsidence},
		{"missing humidity", ei(nan, nan, nan, 50, 1500), sun.Day, 12, 3, ClassUnclassified},
		{"absent", Inversion{}, sun.Day, 12, 3, ""},
	}
	for _, tt := range tests {
		if got := ClassifyInversion(tt.v, tt.sunClass, tt.lastH, tt.windMS, mlTops, cfg); got != tt.want {
			t.Errorf("%s: %q, want %q", tt.name, got, tt.want)
		}
	}
}

// TestTurningDeg: shortest signed angle, veering (clockwise) positive.
func TestTurningDeg(t *testing.T) {
	tests := []struct{ from, to, want float64 }{
		{180, 270, 90}, {350, 10, 20}, {10, 350, -20}, {0, 180, 180}, {270, 90, 180}, {90, 60, -30},
	}
	for _, tt := range tests {
		near(t, "turning", TurningDeg(tt.from, tt.to), tt.want, 1e-12)
	}
	if !math.IsNaN(TurningDeg(nan, 10)) {
		t.Error("NaN direction gives a number")
	}
	// Direction of the components of a west wind (from 270°): u = +s.
	l := sounding.NewLevel()
	l.WindSpeedMS, l.WindDirectionDeg = 10, 270
	u, v, _ := levelWind(&l)
	near(t, "u", u, 10, 1e-12)
	near(t, "v", v, 0, 1e-12)
	near(t, "dir", windDirection(u, v), 270, 1e-9)
}

// TestInversionAtTop: the METHODS §9 inversion profile cut at 1200 m ends
// inside the 1000–1200 m inversion: it is reported with TopAtCeiling.
func TestInversionAtTop(t *testing.T) {
	z := []float64{0, 50, 150, 220, 300, 400, 600, 1000, 1200}
	tc := []float64{-20, -18, -15, -15.5, -13, -14, -16, -18, -17}
	s := &sounding.Sounding{StationID: "XQ0011", ElevationM: 0}
	for i := range z {
		s.Levels = append(s.Levels, lvl(sounding.KindSignificant, thermo.StandardPressure(z[i])/100, z[i], tc[i], nan))
	}
	s.Levels[0].Kind = sounding.KindSurface
	r := Analyze(s, DefaultConfig())
	if len(r.Inversions) != 2 {
		t.Fatalf("inversions = %+v", r.Inversions)
	}
	e := r.Inversions[1]
	if !e.TopAtCeiling || r.Inversions[0].TopAtCeiling || e.SurfaceBased || r.LowestElevated.BaseIndex != e.BaseIndex {
		t.Errorf("top inversion %+v", e)
	}
	near(t, "EI base", r.LowestElevated.BaseAGLM, 1000, 1e-9) // METHODS §9: EI 1000–1200 m
	near(t, "EI strength", e.StrengthK, 1.0, 1e-9)
	if m, _ := r.MixingHeight(MethodElevatedBase); m.Status != MixingHeightOK || m.HeightAGLM != 1000 {
		t.Errorf("elevated_inversion_base = %+v", m)
	}
	if m, _ := r.MixingHeight(MethodSBITop); m.Status != MixingHeightOK || m.HeightAGLM != 300 {
		t.Errorf("sbi_top = %+v", m) // METHODS §9: SBI 0–300 m with the 100 m merge
	}
}

// profileOf builds an analysis profile from heights (m AGL), θ (K) and w
// (kg/kg), with pressures at the USSA76 pressure altitude of each height
// (METHODS §1.7) and θv from θ and w (METHODS §1.5).
func profileOf(z, theta, w []float64) profile {
	c := thermo.CODATA2018()
	n := len(z)
	pr := profile{idx: make([]int, n), p: make([]float64, n), t: make([]float64, n), z: z, theta: theta,
		thetav: make([]float64, n), w: w, td: make([]float64, n), u: make([]float64, n), v: make([]float64, n)}
	for i := range z {
		pr.idx[i], pr.p[i] = i, thermo.StandardPressure(z[i])
		pr.t[i] = thermo.TemperatureFromPotentialTemperature(theta[i], pr.p[i], c.Kappa, c.P0Pa)
		pr.thetav[i] = thermo.VirtualPotentialTemperature(theta[i], w[i], c.Epsilon)
	}
	return pr
}

// TestMixedLayers: two well-mixed layers separated by a stable one, the
// lower with a superadiabatic surface layer (invented scaffolding; the
// expected layers follow by hand from the METHODS §2 default thresholds:
// θv range ≤ 1 K, w range ≤ 1 g/kg, ≥ 3 levels, ≥ 200 m).
func TestMixedLayers(t *testing.T) {
	z := []float64{0, 50, 100, 200, 400, 600, 800, 900, 1000, 1200, 1400, 1600, 1800, 2000}
	th := []float64{302.5, 301.6, 301.0, 301.1, 301.2, 301.3, 301.4, 303, 305, 305.2, 305.4, 305.5, 305.6, 310}
	w := make([]float64, len(z)) // dry: θv = θ
	pr := profileOf(z, th, w)
	cfg := DefaultConfig().MixedLayer
	// Without the superadiabatic allowance the range from the surface
	// (302.5 − 301.0 = 1.5 K) breaks at 100 m: no layer from the ground; the
	// lowest layer then starts at 50 m (301.6 down to 301.0, up to 800 m:
	// range 0.6 K).
	got := pr.mixedLayers(0, len(z), cfg, false)
	if len(got) != 2 || got[0].BaseAGLM != 50 || got[0].TopAGLM != 800 || !math.IsNaN(got[0].SuperadiabaticTopAGLM) {
		t.Fatalf("no allowance: %+v", got)
	}
	// With it (by day): θv decreases 302.5 → 301.6 → 301.0 up to 100 m,
	// within 200 m, so the layer is 0–800 m with the superadiabatic part
	// 0–100 m; the spread test runs from 100 m (301.0–301.4 K).
	got = pr.mixedLayers(0, len(z), cfg, true)
	if len(got) != 2 {
		t.Fatalf("layers = %+v", got)
	}
	a, b := got[0], got[1]
	if a.BaseAGLM != 0 || a.TopAGLM != 800 || a.SuperadiabaticTopAGLM != 100 || a.Levels != 7 {
		t.Errorf("lower layer %+v", a)
	}
	near(t, "theta range incl. superadiabatic", a.ThetaRangeK, 1.5, 1e-9)
	near(t, "thetav range tested", a.ThetaVRangeK, 0.4, 1e-9)
	// Upper layer 1000–1800 m (305.0–305.6 K), capped by 310 K at 2000 m;
	// 900 m (303 K) belongs to neither.
	if b.BaseAGLM != 1000 || b.TopAGLM != 1800 || b.Levels != 5 {
		t.Errorf("upper layer %+v", b)
	}
	if !(b.ThetaK > 305 && b.ThetaK < 305.6) {
		t.Errorf("upper mean θ %v outside the layer's range", b.ThetaK)
	}
	// One level only, or a start at the top: nothing.
	if got := pr.mixedLayers(len(z)-1, len(z), cfg, true); len(got) != 0 {
		t.Errorf("from the top: %+v", got)
	}
}

// TestVentilation checks METHODS §9 "Ventilation" [D]: MH = 1500 m, U =
// 5 m/s → 7500 m²/s = 47 831 kt·ft → NC VIS category 3 (45 000–59 999,
// METHODS §5 category table).
func TestVentilation(t *testing.T) {
	vi := VentilationIndex(1500, 5)
	near(t, "VI", vi, 7500, 0)
	near(t, "VI kt ft", vi*KtFtPerM2S, 47831, 0.5)
	// METHODS §5 prints 6.37745 [D]; the exact value from the unit
	// definitions is 6.3774426, so the printed figure is off by 7e-6 in
	// its last digit: compare to 1e-5.
	near(t, "conversion", KtFtPerM2S, 6.37745, 1e-5)
	if c := NCVISTable().Category(vi); c != "3" {
		t.Errorf("NC VIS category %q, want 3", c)
	}
	if c := GenericVentilationTable().Category(vi); c != "good" {
		t.Errorf("generic category %q", c)
	}
	// NC VIS edges in kt·ft: 33 499 → 1, 33 500 → 2, 112 000 → 5.
	for _, tt := range []struct {
		ktft float64
		want string
	}{{33499, "1"}, {33500, "2"}, {59999, "3"}, {60000, "4"}, {112000, "5"}, {0, "1"}} {
		if c := NCVISTable().Category(tt.ktft / KtFtPerM2S * (1 + 1e-12)); c != tt.want {
			t.Errorf("%v kt·ft: %q, want %q", tt.ktft, c, tt.want)
		}
	}
	if NCVISTable().Category(nan) != "" || NCVISTable().Category(-1) != "" || (VentilationTable{Unit: "x"}).Category(1) != "" {
		t.Error("NaN, negative or unknown unit categorised")
	}
	if !math.IsNaN(VentilationIndex(nan, 5)) || !math.IsNaN(VentilationIndex(1000, -1)) {
		t.Error("NaN or negative input gives a number")
	}
}

// TestTransportWind: height-weighted means by the trapezoid rule (METHODS
// §5), checked against hand integrals.
func TestTransportWind(t *testing.T) {
	z := []float64{0, 500, 1000, 2000}
	// Speed rising linearly 0 → 10 m/s over 0–1000 m, westerly: the mean to
	// 500 m is 2.5 m/s and to 1000 m 5 m/s, both conventions.
	u := []float64{0, 5, 10, 10}
	v := make([]float64, 4)
	for _, conv := range TransportConventions() {
		near(t, string(conv)+" 500", TransportWind(z, u, v, 500, conv), 2.5, 1e-12)
		near(t, string(conv)+" 1000", TransportWind(z, u, v, 1000, conv), 5, 1e-12)
		// 1500 m: (∫0..1000 = 5000) + 500·10 = 10000 m²/s over 1500 m.
		near(t, string(conv)+" 1500", TransportWind(z, u, v, 1500, conv), 10000.0/1500, 1e-12)
	}
	// Westerly 5 m/s to 500 m, easterly 5 m/s from 1000 m: the scalar speed
	// at the levels is 5 m/s throughout → 5 m/s; u integrates to
	// 500·5 + 500·0 = 2500 m²/s over 1000 m → vector mean 2.5 m/s.
	ur := []float64{5, 5, -5, -5}
	near(t, "scalar reversing", TransportWind(z, ur, v, 1000, TransportScalar), 5, 1e-12)
	near(t, "vector reversing", TransportWind(z, ur, v, 1000, TransportVector), 2.5, 1e-12)
	near(t, "top 0", TransportWind(z, ur, v, 0, TransportScalar), 5, 0)
	if !math.IsNaN(TransportWind(z, u, v, 2500, TransportScalar)) || !math.IsNaN(TransportWind(z, []float64{0, nan, 1, 1}, v, 1000, TransportScalar)) ||
		!math.IsNaN(TransportWind(z, u, v, 500, "holzworth")) || !math.IsNaN(TransportWind(nil, nil, nil, 0, TransportScalar)) {
		t.Error("beyond the profile, NaN wind, unknown convention or empty input gives a number")
	}
}

// TestAfternoon checks METHODS §9 "Mixing height" on the TTAA example:
// T_max = 30 °C at 1019 hPa → θ0 = 301.52 K → ≈ 3211 m AGL [D]; and the
// pairing of a morning with an afternoon sounding by local solar day.
func TestAfternoon(t *testing.T) {
	r := Analyze(ttaa(), DefaultConfig())
	mh := AfternoonMixingHeight(r.Profile, 30+273.15)
	if mh.Status != MixingHeightOK || mh.Note != "theta0=301.52K" {
		t.Fatalf("afternoon = %+v", mh)
	}
	near(t, "afternoon MH", mh.HeightAGLM, 3211, 0.5)
	if m := AfternoonMixingHeight(r.Profile, nan); m.Status != MixingHeightUndefined || m.Note != "no_tmax" {
		t.Errorf("NaN Tmax: %+v", m)
	}
	if m := AfternoonMixingHeight(ParcelProfile{}, 300); m.Status != MixingHeightUndefined {
		t.Errorf("empty profile: %+v", m)
	}

	// Invented station at 77.49 W: 12 UTC on 1 July is 06:50 local mean
	// solar time (morning); 00 UTC on 2 July is 18:50 on 1 July (afternoon).
	prof := r.Profile
	aft := prof
	aft.SurfaceTemperatureK = 30 + 273.15
	ds := []DaySounding{
		{StationID: "XQ0020", LaunchTime: time.Date(2016, 7, 1, 12, 0, 0, 0, time.UTC), LongitudeDeg: -77.49, Profile: prof},
		{StationID: "XQ0020", LaunchTime: time.Date(2016, 7, 2, 0, 0, 0, 0, time.UTC), LongitudeDeg: -77.49, Profile: aft},
		{StationID: "XQ0020", LaunchTime: time.Date(2016, 7, 2, 12, 0, 0, 0, time.UTC), LongitudeDeg: -77.49, Profile: prof},
		{StationID: "XQ0021", LaunchTime: time.Date(2016, 7, 1, 12, 0, 0, 0, time.UTC), LongitudeDeg: nan, Profile: prof},
	}
	maxima := DailyMaxima{{"XQ0020", time.Date(2016, 7, 2, 0, 0, 0, 0, time.UTC)}: 30 + 273.15}
	got := PairAfternoon(ds, maxima, DefaultPairingConfig())
	if len(got) != 2 {
		t.Fatalf("estimates = %+v", got)
	}
	a, b := got[0], got[1]
	if a.Morning != 0 || a.Afternoon != 1 || a.TmaxSource != TmaxFromLaterSounding || a.LocalDate != time.Date(2016, 7, 1, 0, 0, 0, 0, time.UTC) {
		t.Errorf("first %+v", a)
	}
	near(t, "paired MH", a.MixingHeight.HeightAGLM, 3211, 0.5) // same θ0 as above
	if b.Morning != 2 || b.Afternoon != -1 || b.TmaxSource != TmaxFromDailyMaxima {
		t.Errorf("second %+v", b)
	}
	near(t, "CSV Tmax", b.TmaxK, 303.15, 1e-9)
	// No maximum at all: undefined, not dropped.
	got = PairAfternoon(ds[2:3], nil, DefaultPairingConfig())
	if len(got) != 1 || got[0].MixingHeight.Note != "no_tmax" || got[0].TmaxSource != "" {
		t.Errorf("no maximum: %+v", got)
	}
}

// TestAnalyzeOneLevel: a sounding with one level is not analysable; every
// method is present and undefined, and the sun fields are still set.
func TestAnalyzeOneLevel(t *testing.T) {
	s := ttbb()
	s.Levels = s.Levels[:1]
	s.LatitudeDeg, s.LongitudeDeg, s.LaunchTime = 38.98, -77.49, time.Date(2016, 7, 1, 17, 0, 0, 0, time.UTC)
	r := Analyze(s, DefaultConfig())
	if r.Status != StatusTooFewLevels || len(r.MixingHeights) != len(MethodNames()) || r.SunClass != sun.Day {
		t.Fatalf("%q %d %q", r.Status, len(r.MixingHeights), r.SunClass)
	}
	for _, m := range r.MixingHeights {
		if m.Status != MixingHeightUndefined || !math.IsNaN(m.HeightAGLM) {
			t.Errorf("%+v", m)
		}
	}
	if r.MixingHeightConsensus.Status != MixingHeightUndefined || !math.IsNaN(r.Ventilation.IndexM2S) || len(r.Inversions) != 0 {
		t.Errorf("consensus %+v ventilation %+v", r.MixingHeightConsensus, r.Ventilation)
	}
}
