package analyze

import (
	"math"
	"sort"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
)

// quantile returns the q-quantile of x by linear interpolation between
// order statistics (the definition of DuckDB's quantile_cont); NaN for none.
func quantile(x []float64, q float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	h := q * float64(len(s)-1)
	lo := int(math.Floor(h))
	if lo+1 >= len(s) {
		return s[lo]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}

// TestSterlingPublishedClimatology checks the regime-aware consensus and
// the bulk Richardson method (Ric 0.25) on the real Sterling, Virginia
// 2016 file (PROVENANCE.md; the station elevation from the archive's
// station list, so that the autumn soundings are analysed) against two
// published climatologies. Both figures were confirmed in the papers'
// abstracts (UCAR OpenSky / Hindawi pages); the method details are not.
//
// Seidel et al. 2012 (JGR 117, doi:10.1029/2012JD018143), bulk Richardson
// heights over the US and Europe 1981–2005: "Climatological heights are
// typically <1 km during daytime and <0.5 km at night … daytime heights
// are larger in summer than winter, but nighttime heights are larger in
// winter". For the US, 00 UTC is the late-afternoon (day) and 12 UTC the
// early-morning (night) sounding (our reading: the abstract says the US
// sampling times capture the diurnal cycle poorly). Checked: medians
// 00 UTC < 1000 m and 12 UTC < 500 m; by sun class, day and low sun
// < 1000 m, civil twilight and night < 500 m; JJA > DJF at 00 UTC and
// DJF > JJA at 12 UTC. The abstract gives medians only, no percentiles.
//
// Advances in Meteorology 2017, article 6841239 (Hindawi), 00 UTC "afternoon" depths at 67 US sites 1991–2015: median
// about 750 m in winter and 1000 m in summer for the Cfa, Dfa and Dfb
// climate types. Sterling is Cfa (humid subtropical; from memory). One
// station-year with a different method cannot match a 25-year, many-site
// median, so the check is the order of magnitude: the 00 UTC consensus
// median within a factor of two of each figure (winter 375–1500 m, summer
// 500–2000 m) and summer deeper than winter.
//
// Why the winter figure is lower than 750 m. The paper calls its 00 UTC
// depths "afternoon PBL depths" estimated by "a recently developed
// technique" (abstract; the method section was not read): it seeks the
// layer mixed during the day. At Sterling (77.49° W) the nominal 00 UTC
// winter launches are released at 23:01–23:46 UTC (the file's release
// times), 18:01–18:46 EST, about 17:50–18:35 local mean solar time, while
// sunset at 39° N is at about 16:50 EST in late December and 17:55 EST at
// the end of February (from memory; the Almanac sun elevations of the
// analysis agree: every DJF 00 UTC launch has the sun below the horizon,
// civil twilight or night). So no DJF 00 UTC sounding is in the convective
// regime (sun above the horizon is required, regime.go), and the consensus
// uses the stable methods (SBI top, bulk Richardson, Liu–Liang) where a
// surface inversion or the Liu–Liang SBL is seen, and bulk Richardson and
// Liu–Liang in the neutral regime otherwise: it measures the layer still
// mixed from the ground after sunset, not the afternoon's. The afternoon
// layer is left aloft as the residual layer, whose top (residual_layer_top)
// is deeper. Checked: every DJF 00 UTC launch has the sun below the horizon
// and none is convective, and the published 750 m lies between the
// consensus median (current mixing) and the residual-layer-top median (the
// day's mixed layer left aloft). Measured: 60 DJF 00 UTC soundings, 18
// stable and 42 neutral; consensus median 465 m; residual-layer top median
// about 1280 m (58 found); bulk Richardson 0.25 median 399 m, 0.5 median 693 m;
// Heffter 1249 m where found (44; 16 surface). The numbers are not tuned
// toward 750 m: the method choice follows the regime rules.
//
// Measured (go test -v): regime consensus medians 00 UTC DJF 465 m, JJA
// 1167 m; 12 UTC DJF 294 m, JJA 246 m; sun below the horizon median
// 310 m, p90 1181 m; above it 415 m, p90 1873 m. Before the regimes
// (every method in every regime) the night p90 was about 1380 m and the
// 00 UTC DJF median about 640 m. Margins, not these figures, are asserted.
func TestSterlingPublishedClimatology(t *testing.T) {
	all := readSterling(t)
	elev := sterlingElevation(t)
	cfg := DefaultConfig()
	key := func(h int, season string) string { return string(rune('0'+h/12)) + season }
	cons, rib := map[string][]float64{}, map[string][]float64{}
	bySun := map[string][]float64{}
	regimes := map[BLRegime]int{}
	var winterEvening struct {
		n, sunUp, convective int
		residualTops         []float64
	}
	for _, s := range all {
		c := *s
		c.ElevationM = elev
		r := Analyze(&c, cfg)
		h := s.NominalHour()
		if r.Status != StatusOK || (h != 0 && h != 12) {
			continue
		}
		season := "other"
		switch s.NominalTime.Month() {
		case time.December, time.January, time.February:
			season = "DJF"
		case time.June, time.July, time.August:
			season = "JJA"
		}
		regimes[r.Regime]++
		if h == 0 && season == "DJF" {
			winterEvening.n++
			if !sun.Below(r.SunClass) {
				winterEvening.sunUp++
			}
			if r.Regime == BLConvective {
				winterEvening.convective++
			}
			if !math.IsNaN(r.ResidualTopAGLM) {
				winterEvening.residualTops = append(winterEvening.residualTops, r.ResidualTopAGLM)
			}
		}
		if mc := r.MixingHeightConsensus; mc.Status != MixingHeightUndefined {
			for _, k := range []string{key(h, season), key(h, "all")} {
				cons[k] = append(cons[k], mc.HeightAGLM)
			}
			dn := "day"
			if sun.Below(r.SunClass) {
				dn = "night"
			}
			bySun[dn] = append(bySun[dn], mc.HeightAGLM)
		}
		if m, _ := r.MixingHeight(MethodRichardson); m.Status == MixingHeightOK {
			for _, k := range []string{key(h, season), key(h, "all")} {
				rib[k] = append(rib[k], m.HeightAGLM)
			}
		}
	}
	t.Logf("regimes %v", regimes)
	for _, k := range []string{"0all", "0DJF", "0JJA", "1all", "1DJF", "1JJA"} {
		t.Logf("%s UTC %s: consensus median %.0f m p90 %.0f m (n=%d); Richardson median %.0f m (n=%d)", map[byte]string{'0': "00", '1': "12"}[k[0]], k[1:],
			median(cons[k]), quantile(cons[k], 0.9), len(cons[k]), median(rib[k]), len(rib[k]))
	}
	for _, dn := range []string{"day", "night"} {
		t.Logf("%s (sun class): consensus median %.0f m p90 %.0f m (n=%d)", dn, median(bySun[dn]), quantile(bySun[dn], 0.9), len(bySun[dn]))
	}
	if regimes[BLStable] == 0 || regimes[BLConvective] == 0 || regimes[BLUnknown] != 0 {
		t.Errorf("regimes %v: want stable and convective soundings, none unknown (the file has positions)", regimes)
	}
	for name, set := range map[string]map[string][]float64{"consensus": cons, "Richardson": rib} {
		// Seidel 2012: day < 1 km, night < 0.5 km.
		if m := median(set["0all"]); !(m < 1000) {
			t.Errorf("%s 00 UTC (day) median %.0f m, Seidel 2012: typically < 1 km", name, m)
		}
		if m := median(set["1all"]); !(m < 500) {
			t.Errorf("%s 12 UTC (night) median %.0f m, Seidel 2012: typically < 0.5 km", name, m)
		}
		// Seidel 2012: day heights larger in summer, night heights in winter.
		if !(median(set["0JJA"]) > median(set["0DJF"])) {
			t.Errorf("%s 00 UTC: JJA median %.0f m not above DJF %.0f m (Seidel 2012)", name, median(set["0JJA"]), median(set["0DJF"]))
		}
		if !(median(set["1DJF"]) > median(set["1JJA"])) {
			t.Errorf("%s 12 UTC: DJF median %.0f m not above JJA %.0f m (Seidel 2012)", name, median(set["1DJF"]), median(set["1JJA"]))
		}
	}
	if m := median(bySun["day"]); !(m < 1000) {
		t.Errorf("day and low-sun consensus median %.0f m, Seidel 2012: typically < 1 km", m)
	}
	if m := median(bySun["night"]); !(m < 500) {
		t.Errorf("civil-twilight and night consensus median %.0f m, Seidel 2012: typically < 0.5 km", m)
	}
	// Adv. Meteorol. 2017: 00 UTC Cfa about 750 m in winter, 1000 m in summer.
	if m := median(cons["0DJF"]); !(m >= 375 && m <= 1500) {
		t.Errorf("00 UTC DJF consensus median %.0f m, not within a factor 2 of 750 m (Adv. Meteorol. 2017)", m)
	}
	if m := median(cons["0JJA"]); !(m >= 500 && m <= 2000) {
		t.Errorf("00 UTC JJA consensus median %.0f m, not within a factor 2 of 1000 m (Adv. Meteorol. 2017)", m)
	}
	// Why winter is below the published afternoon figure (see above): the
	// launch is after sunset, so current mixing is measured, and the
	// afternoon's layer is the residual layer aloft.
	we := winterEvening
	rlt := median(we.residualTops)
	t.Logf("00 UTC DJF: %d soundings, %d with the sun up, %d convective; residual-layer top median %.0f m (n=%d)",
		we.n, we.sunUp, we.convective, rlt, len(we.residualTops))
	if we.n < 45 || we.sunUp != 0 || we.convective != 0 {
		t.Errorf("00 UTC DJF: %d soundings, %d with the sun above the horizon, %d convective: want about 60, all after sunset, none convective", we.n, we.sunUp, we.convective)
	}
	if m := median(cons["0DJF"]); !(m < 750 && 750 < rlt) {
		t.Errorf("00 UTC DJF: consensus median %.0f m and residual-layer top median %.0f m do not bracket the published afternoon 750 m (Adv. Meteorol. 2017)", m, rlt)
	}
}
