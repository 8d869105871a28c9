package sun

import (
	"fmt"
	"math"
	"testing"
	"time"
)

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6f, want %.6f ± %g", name, got, want, tol)
	}
}

// TestWorkedExample reproduces the worked example printed with the
// Astronomical Almanac 1996 p. C24 formulas for 1997-08-07 11:00 UT
// (stargazing.net/kepler/sun.html, computed there on an 8-figure
// calculator): d = −877.04167, L = 136.00716°, g = 213.11547°,
// λ = 134.97925°, ε = 23.439351°. Declination: sin δ = sin ε sin λ gives
// 16.3422° [D from those values].
func TestWorkedExample(t *testing.T) {
	p := At(time.Date(1997, 8, 7, 11, 0, 0, 0, time.UTC))
	near(t, "d", p.DaysSinceJ2000, -877.04167, 5e-6)
	near(t, "L", p.MeanLongitudeDeg, 136.00716, 5e-6)
	near(t, "g", p.MeanAnomalyDeg, 213.11547, 5e-6)
	near(t, "lambda", p.EclipticLongitudeDeg, 134.97925, 5e-6)
	near(t, "epsilon", p.ObliquityDeg, 23.439351, 5e-7)
	want := math.Asin(math.Sin(23.439351*deg)*math.Sin(134.97925*deg)) / deg
	near(t, "declination", p.DeclinationDeg, want, 1e-5)
	near(t, "declination value", p.DeclinationDeg, 16.3422, 5e-4)
}

// TestSolsticesAndEquinoxes: at the 2016 solstices the declination equals
// ± the obliquity (23.437° in 2016, from ε = 23.439° − 0.0000004° d) and at
// the equinoxes it is zero. Instants of the 2016 solstices and equinoxes
// from memory (20 Mar 04:30, 20 Jun 22:34, 22 Sep 14:21, 21 Dec 10:44
// UTC); the tolerance 0.02° covers the formula's stated 0.01° and minute
// rounding (δ changes by at most 0.0003° per minute near an equinox).
func TestSolsticesAndEquinoxes(t *testing.T) {
	tests := []struct {
		name string
		t    time.Time
		want float64
	}{
		{"March equinox", time.Date(2016, 3, 20, 4, 30, 0, 0, time.UTC), 0},
		{"June solstice", time.Date(2016, 6, 20, 22, 34, 0, 0, time.UTC), 23.437},
		{"September equinox", time.Date(2016, 9, 22, 14, 21, 0, 0, time.UTC), 0},
		{"December solstice", time.Date(2016, 12, 21, 10, 44, 0, 0, time.UTC), -23.437},
	}
	for _, tt := range tests {
		near(t, tt.name, At(tt.t).DeclinationDeg, tt.want, 0.02)
	}
}

// TestEquationOfTimeExtremes: the equation of time has its yearly minimum
// of about −14.2 min around 11–12 February and its maximum of about
// +16.4 min around 3 November (from memory; the issue text gives ≈ −14 min
// mid-February and +16 min early November).
func TestEquationOfTimeExtremes(t *testing.T) {
	minV, maxV := math.Inf(1), math.Inf(-1)
	var minDay, maxDay time.Time
	for d := time.Date(2016, 1, 1, 12, 0, 0, 0, time.UTC); d.Year() == 2016; d = d.AddDate(0, 0, 1) {
		e := At(d).EquationOfTimeMin
		if e < minV {
			minV, minDay = e, d
		}
		if e > maxV {
			maxV, maxDay = e, d
		}
	}
	near(t, "EoT minimum", minV, -14.2, 0.3)
	near(t, "EoT maximum", maxV, 16.4, 0.3)
	if minDay.Month() != time.February || minDay.Day() < 8 || minDay.Day() > 16 {
		t.Errorf("EoT minimum on %v, want about 11–12 Feb", minDay)
	}
	if maxDay.Month() != time.November || maxDay.Day() > 7 {
		t.Errorf("EoT maximum on %v, want about 3 Nov", maxDay)
	}
}

// TestElevation checks the elevation against spherical geometry [D]: at
// local apparent noon the sun's elevation is 90° − |φ − δ|, and at the
// equinox on the equator it is overhead at noon and on the horizon 6 h
// later. Also the day/night class of the METHODS §8 thresholds.
func TestElevation(t *testing.T) {
	// Find apparent noon at 77.49° W on the 2016 June solstice by bisection
	// on LocalApparentSolarTime, then compare with 90 − |φ − δ|.
	lat, lon := 38.98, -77.49
	lo, hi := time.Date(2016, 6, 20, 15, 0, 0, 0, time.UTC), time.Date(2016, 6, 20, 19, 0, 0, 0, time.UTC)
	for i := 0; i < 40; i++ {
		mid := lo.Add(hi.Sub(lo) / 2)
		if LocalApparentSolarTime(mid, lon) < 12 {
			lo = mid
		} else {
			hi = mid
		}
	}
	dec := At(lo).DeclinationDeg
	near(t, "noon elevation", ElevationDeg(lo, lat, lon), 90-math.Abs(lat-dec), 1e-6)
	near(t, "noon elevation value", ElevationDeg(lo, lat, lon), 74.46, 0.02)

	eq := time.Date(2016, 3, 20, 4, 30, 0, 0, time.UTC)
	// Longitude where it is apparent noon at that instant.
	noonLon := -15 * (LocalApparentSolarTime(eq, 0) - 12)
	near(t, "overhead", ElevationDeg(eq, 0, noonLon), 90, 0.03)
	near(t, "horizon 6 h later", ElevationDeg(eq.Add(6*time.Hour), 0, noonLon), 0, 0.1)

	th := DefaultThresholds()
	tests := []struct {
		h    float64
		want Class
	}{{45, Day}, {10.5, Day}, {10, LowSun}, {0, LowSun}, {-0.1, CivilTwilight}, {-6, CivilTwilight},
		{-6.1, Night}, {math.NaN(), Unknown}}
	for _, tt := range tests {
		if got := th.Classify(tt.h); got != tt.want {
			t.Errorf("Classify(%v) = %q, want %q", tt.h, got, tt.want)
		}
	}
	// A US east-coast 11 UTC launch in January is before dawn (about
	// 05:50 local mean time): night. Position unknown → NaN → unknown.
	jan := time.Date(2016, 1, 15, 11, 0, 0, 0, time.UTC)
	if c := th.Classify(ElevationDeg(jan, lat, lon)); c != Night {
		t.Errorf("January 11 UTC at Sterling: %q", c)
	}
	if c := th.Classify(ElevationDeg(jan, math.NaN(), lon)); c != Unknown {
		t.Errorf("NaN latitude: %q", c)
	}
	if !math.IsNaN(ElevationDeg(time.Time{}, lat, lon)) {
		t.Error("zero time gives a number")
	}
}

// TestLocalSolarDate: 00 UTC at 77.49° W is 18:50 local mean time of the
// previous day; 23 UTC at 150° E is 09:00 of the next day (λ/15 h, METHODS §8).
func TestLocalSolarDate(t *testing.T) {
	d, ok := LocalSolarDate(time.Date(2016, 7, 2, 0, 0, 0, 0, time.UTC), -77.49)
	if !ok || d != time.Date(2016, 7, 1, 0, 0, 0, 0, time.UTC) {
		t.Errorf("west: %v %v", d, ok)
	}
	near(t, "LMST west", LocalMeanSolarTime(time.Date(2016, 7, 2, 0, 0, 0, 0, time.UTC), -77.49), 24-77.49/15, 1e-9)
	d, ok = LocalSolarDate(time.Date(2016, 7, 1, 23, 0, 0, 0, time.UTC), 150)
	if !ok || d != time.Date(2016, 7, 2, 0, 0, 0, 0, time.UTC) {
		t.Errorf("east: %v %v", d, ok)
	}
	if _, ok := LocalSolarDate(time.Date(2016, 7, 1, 23, 0, 0, 0, time.UTC), math.NaN()); ok {
		t.Error("NaN longitude accepted")
	}
}

// The class of a 12 UTC launch at an invented station at 38.98 N,
// 77.49 W in January (07:00 local standard time, before sunrise at about
// 07:25 in mid-January and after the start of civil twilight about half an
// hour earlier, both from memory) and in July (about two hours after
// sunrise).
func ExampleThresholds_Classify() {
	th := DefaultThresholds()
	for _, t := range []time.Time{
		time.Date(2016, 1, 15, 12, 0, 0, 0, time.UTC),
		time.Date(2016, 7, 15, 12, 0, 0, 0, time.UTC),
	} {
		h := ElevationDeg(t, 38.98, -77.49)
		fmt.Printf("%s %.1f° %s\n", t.Format("2006-01-02 15:04"), h, th.Classify(h))
	}
	// Output:
	// 2016-01-15 12:00 -5.7° civil_twilight
	// 2016-07-15 12:00 21.6° day
}
