package analyze

import (
	"math"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// TestClassifyRegime checks the documented rule (ClassifyRegime, METHODS
// §4.6a): a surface-based inversion or a Liu–Liang SBL makes the regime
// stable whatever the sun; otherwise the sun above the horizon gives
// convective and below it neutral; without a sun class the Liu–Liang
// regime decides.
func TestClassifyRegime(t *testing.T) {
	for _, c := range []struct {
		sun  sun.Class
		sbi  bool
		ll   LiuLiangRegime
		want BLRegime
	}{
		{sun.Night, true, RegimeNeutral, BLStable},
		{sun.Day, true, RegimeConvective, BLStable}, // an SBI by day is still a stable layer at the ground
		{sun.CivilTwilight, false, RegimeStable, BLStable},
		{sun.Day, false, RegimeNeutral, BLConvective}, // a well-mixed layer is NRL by Liu–Liang's θ test
		{sun.LowSun, false, RegimeConvective, BLConvective},
		{sun.Night, false, RegimeNeutral, BLNeutral},
		{sun.CivilTwilight, false, "", BLNeutral},
		{sun.Unknown, false, RegimeConvective, BLConvective},
		{sun.Unknown, false, RegimeNeutral, BLNeutral},
		{sun.Unknown, false, "", BLUnknown},
	} {
		if got := ClassifyRegime(c.sun, c.sbi, c.ll); got != c.want {
			t.Errorf("ClassifyRegime(%q, %v, %q) = %q, want %q", c.sun, c.sbi, c.ll, got, c.want)
		}
	}
	// METHODS §4.6a: stable-layer methods at night, convective ones by day.
	for _, c := range []struct {
		method string
		regime BLRegime
		ll     LiuLiangRegime
		fits   bool
	}{
		{MethodSBITop, BLStable, RegimeStable, true},
		{MethodSBITop, BLConvective, RegimeNeutral, false},
		{MethodHeffter, BLStable, RegimeStable, false},
		{MethodElevatedBase, BLStable, RegimeNeutral, false},
		{MethodElevatedBase, BLNeutral, RegimeNeutral, false},
		{MethodHeffter, BLConvective, RegimeNeutral, true},
		{MethodParcel, BLConvective, RegimeConvective, true},
		{MethodParcel, BLNeutral, RegimeNeutral, false},
		{MethodRichardson, BLStable, RegimeStable, true},
		{MethodRichardson, BLNeutral, RegimeNeutral, true},
		{MethodLiuLiang, BLStable, RegimeStable, true},
		{MethodLiuLiang, BLStable, RegimeNeutral, false}, // its CBL/NRL construction in a stable regime
		{MethodLiuLiang, BLConvective, RegimeStable, false},
		{MethodLiuLiang, BLConvective, RegimeNeutral, true},
		{MethodHeffter, BLUnknown, "", true},
	} {
		m, _ := LookupMethod(c.method)
		if got := fitsRegime(m, c.regime, c.ll); got != c.fits {
			t.Errorf("fitsRegime(%s, %q, %q) = %v, want %v", c.method, c.regime, c.ll, got, c.fits)
		}
	}
}

// thetaSounding builds a sounding at Sterling's position (38.98 N,
// 77.49 W) launched at launch, with levels every 50 m from the ground to
// 3000 m whose potential temperature (K) and wind speed (m/s) are given
// by theta and wind; pressures from the U.S. Standard Atmosphere 1976 at
// each height, dewpoints missing. Station identity invented.
func thetaSounding(launch time.Time, theta, wind func(z float64) float64) *sounding.Sounding {
	c := thermo.CODATA2018()
	s := &sounding.Sounding{StationID: "XQ0020", ElevationM: 0, LatitudeDeg: 38.98, LongitudeDeg: -77.49,
		LaunchTime: launch, NominalTime: launch}
	for z := 0.0; z <= 3000; z += 50 {
		p := thermo.StandardPressure(z)
		tk := thermo.TemperatureFromPotentialTemperature(theta(z), p, c.Kappa, c.P0Pa)
		l := lvl(sounding.KindSignificant, p/100, z, tk-273.15, nan)
		l.WindSpeedMS, l.WindDirectionDeg = wind(z), 270
		s.Levels = append(s.Levels, l)
	}
	s.Levels[0].Kind = sounding.KindSurface
	return s
}

// ramp is x0 below z0, x1 above z1 and linear between.
func ramp(z, z0, z1, x0, x1 float64) float64 {
	switch {
	case z <= z0:
		return x0
	case z >= z1:
		return x1
	}
	return x0 + (x1-x0)*(z-z0)/(z1-z0)
}

// TestRegimeNocturnalAndDaytime checks the regime consensus and the
// residual-layer top on the two textbook layer structures of a fair-weather
// day over land (Stull 1988, An Introduction to Boundary Layer
// Meteorology, Fig. 1.7, from memory): at night a stable layer at the
// ground (here a 200 m surface inversion, θ +6 K) under the residual layer
// (θ constant to 1300 m) and the previous afternoon's capping inversion
// (1300–1450 m, θ +5 K); by day a mixed layer from the ground to the
// capping inversion at 1500 m.
//
//   - Night (09 UTC in January, sun far below the horizon): regime stable;
//     the consensus is the nocturnal layer (≤ 250 m: SBI top 200 m,
//     Richardson and Liu–Liang SBL heights inside it) and its spread stays
//     inside it; the residual-layer top is the capping inversion's base,
//     1300 m. With ByRegime off the median over every method takes in the
//     EI base at 1300 m (the residual top), spread > 1000 m — the leak the
//     regime rule removes (METHODS §4.6a).
//   - Day (18 UTC in July, 14 EDT): regime convective; every method that
//     fits finds the cap, 1500–1600 m; no residual-layer top.
func TestRegimeNocturnalAndDaytime(t *testing.T) {
	nightTheta := func(z float64) float64 {
		th := 280 + ramp(z, 0, 200, 0, 6) + ramp(z, 1300, 1450, 0, 5)
		if z > 1450 {
			th += 0.004 * (z - 1450)
		}
		return th
	}
	night := thetaSounding(time.Date(2016, 1, 15, 9, 0, 0, 0, time.UTC), nightTheta,
		func(z float64) float64 { return ramp(z, 0, 200, 1, 6) + ramp(z, 200, 1500, 0, 2) })
	cfg := DefaultConfig()
	r := Analyze(night, cfg)
	if r.Status != StatusOK || r.SunClass != sun.Night || !r.SBI.Present {
		t.Fatalf("night: status %q, sun %q, SBI %v", r.Status, r.SunClass, r.SBI.Present)
	}
	c := r.MixingHeightConsensus
	t.Logf("night: regime %s (Liu–Liang %s), consensus %.0f m (spread %.0f, %d ok), residual top %.0f m, SBI top %.0f m",
		r.Regime, r.LiuLiangRegime, c.HeightAGLM, c.SpreadM, c.OK, r.ResidualTopAGLM, r.SBI.TopAGLM)
	if r.Regime != BLStable {
		t.Errorf("night regime %q, want stable", r.Regime)
	}
	if c.Status != MixingHeightOK || !(c.HeightAGLM <= 250) || !(c.SpreadM <= 250) {
		t.Errorf("night consensus %+v, want within the 200 m nocturnal layer", c)
	}
	near(t, "night residual-layer top", r.ResidualTopAGLM, 1300, 50)
	all := cfg
	all.MixingHeight.ByRegime = false
	if ra := Analyze(night, all); !(ra.MixingHeightConsensus.SpreadM > 1000) {
		t.Errorf("ByRegime off: consensus %+v, want the residual top among its methods", ra.MixingHeightConsensus)
	}

	dayTheta := func(z float64) float64 {
		th := 302 - ramp(z, 0, 50, 0, 1) + ramp(z, 1500, 1600, 0, 4)
		if z > 1600 {
			th += 0.004 * (z - 1600)
		}
		return th
	}
	day := thetaSounding(time.Date(2016, 7, 15, 18, 0, 0, 0, time.UTC), dayTheta, func(float64) float64 { return 4 })
	r = Analyze(day, cfg)
	c = r.MixingHeightConsensus
	t.Logf("day: sun %s, regime %s (Liu–Liang %s), consensus %.0f m (spread %.0f, %d ok), residual top %.0f m",
		r.SunClass, r.Regime, r.LiuLiangRegime, c.HeightAGLM, c.SpreadM, c.OK, r.ResidualTopAGLM)
	if r.Status != StatusOK || r.SunClass != sun.Day || r.Regime != BLConvective {
		t.Fatalf("day: status %q, sun %q, regime %q", r.Status, r.SunClass, r.Regime)
	}
	if c.Status != MixingHeightOK || !(c.HeightAGLM >= 1450 && c.HeightAGLM <= 1650) || c.OK < 3 {
		t.Errorf("day consensus %+v, want the 1500 m cap from at least 3 methods", c)
	}
	if !math.IsNaN(r.ResidualTopAGLM) {
		t.Errorf("day residual-layer top %.0f m, want none", r.ResidualTopAGLM)
	}
}
