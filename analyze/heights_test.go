package analyze

import (
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// TestFillHeightsTTBB checks METHODS §9 TTBB snippet heights [D]: 983 →
// 320.3 m, 962 → 504.9 m, 850 → 1555.0 m MSL (Bolton, Rd 287.04749,
// trapezoid Tv), to ±0.05 m (§9 tolerance rule).
func TestFillHeightsTTBB(t *testing.T) {
	s := ttbb()
	h := FillHeights(s.Levels, s.ElevationM, thermo.CODATA2018(), thermo.Bolton)
	want := []float64{15, 320.3, 504.9, 1555.0}
	for i, w := range want {
		near(t, "height", h.HeightM[i], w, 0.05)
		if h.Derived[i] != (i > 0) {
			t.Errorf("level %d derived = %v", i, h.Derived[i])
		}
	}
	if h.StartIndex != 0 || len(h.Anchors) != 0 || h.StandardAnchor {
		t.Errorf("start %d anchors %v standard %v", h.StartIndex, h.Anchors, h.StandardAnchor)
	}
}

// TestFillHeightsTTAAResiduals checks that the TTAA example of METHODS §9,
// whose heights were generated hydrostatically from its temperatures, is
// re-anchored at every standard level with |mismatch| ≤ 10 m ("every layer
// residual must be ≤ 10 m", METHODS §9 hydrostatic check).
func TestFillHeightsTTAAResiduals(t *testing.T) {
	s := ttaa()
	h := FillHeights(s.Levels, s.ElevationM, thermo.CODATA2018(), thermo.Bolton)
	if len(h.Anchors) != len(s.Levels)-1 {
		t.Fatalf("anchors = %d, want %d", len(h.Anchors), len(s.Levels)-1)
	}
	for _, a := range h.Anchors {
		if math.Abs(a.MismatchM) > 10 || a.MismatchM != a.ReportedM-a.IntegratedM {
			t.Errorf("level %d (%.0f Pa): mismatch %.2f m", a.Index, a.PressurePa, a.MismatchM)
		}
	}
	for i, d := range h.Derived {
		if d || h.HeightM[i] != s.Levels[i].HeightM {
			t.Errorf("level %d: reported height changed or marked derived", i)
		}
	}
	// A wrong reported height shows up as a mismatch of the same size at
	// that level (invented error of +100 m on 850 hPa).
	s.Levels[3].HeightM += 100
	h = FillHeights(s.Levels, s.ElevationM, thermo.CODATA2018(), thermo.Bolton)
	if a := h.Anchors[2]; a.Index != 3 || math.Abs(a.MismatchM-100) > 10 {
		t.Errorf("850 hPa anchor = %+v, want mismatch ≈ +100 m", a)
	}
}

// TestFillHeightsAwkwardLevels uses the TTBB snippet (METHODS §9) with the
// situations real archives produce: a wind-only surface line without
// pressure, levels shuffled out of pressure order, a level without
// temperature, and a wind-only level by height.
func TestFillHeightsAwkwardLevels(t *testing.T) {
	c := thermo.CODATA2018()
	windSfc := lvl(sounding.KindWindOnly, nan, 15, nan, nan)
	windUp := lvl(sounding.KindWindOnly, nan, 900, nan, nan)
	noT := lvl(sounding.KindSignificant, 900, nan, nan, nan)
	b := ttbb().Levels
	// Surface line carries no pressure: the 1019 hPa level becomes a
	// significant level with a height (as in late-2016 archive files).
	b[0].Kind = sounding.KindSignificant
	levels := []sounding.Level{windSfc, b[2], b[0], noT, b[1], windUp, b[3]}
	h := FillHeights(levels, 15, c, thermo.Bolton)
	// METHODS §9 TTBB heights [D] must come out the same whatever the order.
	near(t, "983", h.HeightM[4], 320.3, 0.05)
	near(t, "962", h.HeightM[1], 504.9, 0.05)
	near(t, "850", h.HeightM[6], 1555.0, 0.05)
	// The 900 hPa level without T lies between 962 and 850 hPa; with Tv
	// linear in ln p its height is between theirs, and splitting the layer
	// there leaves the 850 hPa height above unchanged (the trapezoid is
	// exact for Tv linear in ln p).
	if !(h.HeightM[3] > 504.9 && h.HeightM[3] < 1555.0 && h.Derived[3]) {
		t.Errorf("900 hPa height = %v derived %v", h.HeightM[3], h.Derived[3])
	}
	if h.HeightM[0] != 15 || h.HeightM[5] != 900 || h.Derived[0] || h.Derived[5] {
		t.Errorf("wind-only heights changed: %v %v", h.HeightM[0], h.HeightM[5])
	}
	if h.StartIndex != 2 {
		t.Errorf("start = %d, want 2 (1019 hPa level)", h.StartIndex)
	}

	// No height anywhere: the start is placed at its USSA76 pressure
	// altitude (METHODS §1.7) and thicknesses are unchanged: 983 hPa is
	// 305.3 m above 1019 hPa (METHODS §9 TTBB: 320.3 − 15).
	nb := ttbb().Levels
	nb[0].HeightM = nan
	h = FillHeights(nb, nan, c, thermo.Bolton)
	if !h.StandardAnchor {
		t.Fatal("StandardAnchor not set")
	}
	near(t, "std anchor", h.HeightM[0], thermo.StandardHeight(101900), 1e-9)
	near(t, "thickness 1019-983", h.HeightM[1]-h.HeightM[0], 305.3, 0.05)

	// Edge cases: empty, no pressure at all.
	if h := FillHeights(nil, 0, c, thermo.Bolton); h.StartIndex != -1 || len(h.HeightM) != 0 {
		t.Errorf("empty: %+v", h)
	}
	if h := FillHeights([]sounding.Level{windSfc}, 15, c, thermo.Bolton); h.StartIndex != -1 || h.HeightM[0] != 15 {
		t.Errorf("wind-only: %+v", h)
	}
}

// TestFillHeightsWithoutAnchors: the analysis' own height filling, which
// neither records anchors nor integrates up to levels with a reported
// height, gives the heights, derived marks, start and standard-anchor
// flag of FillHeights (checked against METHODS §9 above) on the METHODS
// §9 snippets, the same with heights removed, and every real Sterling
// 2016 sounding (PROVENANCE.md) with and without some heights.
func TestFillHeightsWithoutAnchors(t *testing.T) {
	c := thermo.CODATA2018()
	var cases []*sounding.Sounding
	for _, s := range []*sounding.Sounding{ttbb(), ttaa()} {
		cases = append(cases, s)
		holes := &sounding.Sounding{ElevationM: s.ElevationM, Levels: append([]sounding.Level(nil), s.Levels...)}
		holes.Levels[len(holes.Levels)/2].HeightM = math.NaN()
		cases = append(cases, holes)
	}
	if testing.Short() {
		t.Log("short: Sterling soundings skipped")
	} else {
		for k, s := range readSterling(t) {
			cases = append(cases, s)
			if k%7 == 0 && len(s.Levels) > 3 {
				holes := &sounding.Sounding{ElevationM: s.ElevationM, Levels: append([]sounding.Level(nil), s.Levels...)}
				holes.Levels[3].HeightM = math.NaN()
				cases = append(cases, holes)
			}
		}
	}
	for k, s := range cases {
		want := FillHeights(s.Levels, s.ElevationM, c, thermo.Bolton)
		got := fillHeights(s.Levels, s.ElevationM, c, thermo.Bolton, nil, false, nil)
		if got.StartIndex != want.StartIndex || got.StandardAnchor != want.StandardAnchor || len(got.Anchors) != 0 {
			t.Fatalf("case %d: start %d standard %v anchors %d, FillHeights: start %d standard %v",
				k, got.StartIndex, got.StandardAnchor, len(got.Anchors), want.StartIndex, want.StandardAnchor)
		}
		for i := range want.HeightM {
			if math.Float64bits(got.HeightM[i]) != math.Float64bits(want.HeightM[i]) || got.Derived[i] != want.Derived[i] {
				t.Fatalf("case %d level %d: height %v derived %v, FillHeights %v %v",
					k, i, got.HeightM[i], got.Derived[i], want.HeightM[i], want.Derived[i])
			}
		}
	}
}
