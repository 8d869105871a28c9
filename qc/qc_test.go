package qc

import (
	"bytes"
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// lv builds a level from display units (hPa, gpm, °C, °C dewpoint); NaN
// means not reported. Unit scaffolding.
func lv(kind sounding.LevelKind, pHPa, zM, tC, tdC float64) sounding.Level {
	l := sounding.NewLevel()
	l.Kind = kind
	set := func(dst *float64, v sounding.Var, x float64) {
		if !math.IsNaN(x) {
			*dst = x
			l.Status[v] = sounding.Reported
		}
	}
	set(&l.PressurePa, sounding.VarPressure, pHPa*100)
	set(&l.HeightM, sounding.VarHeight, zM)
	set(&l.TemperatureK, sounding.VarTemperature, tC+c0)
	if !math.IsNaN(tdC) && !math.IsNaN(tC) {
		set(&l.DewpointDepressionK, sounding.VarDewpointDepression, tC-tdC)
		l.DewpointK = tdC + c0
	}
	return l
}

// tempProfile is the decoded synthetic TEMP message of METHODS.md §9
// ("TEMP decoding"): surface and standard levels of station 72208 at 15 m,
// whose heights were generated from these temperatures and dewpoints
// (Bolton, trapezoid Tv, Rd = 287.04749), so every layer residual must be
// within 10 m (coding rounds heights to metres or decametres).
func tempProfile() *sounding.Sounding {
	S, M := sounding.KindSurface, sounding.KindStandard
	s := &sounding.Sounding{StationID: "XQ015", ElevationM: 15, DeclaredLevels: -1, LatitudeDeg: 30, LongitudeDeg: -90}
	s.Levels = []sounding.Level{
		lv(S, 1019, 15, 21.4, 15.4),
		lv(M, 1000, 178, 20.6, 12.6),
		lv(M, 925, 848, 16.8, 10.8),
		lv(M, 850, 1563, 12.4, 6.4),
		lv(M, 700, 3152, -1.1, -9.1),
		lv(M, 500, 5750, -17.7, -31.7),
		lv(M, 400, 7380, -29.7, -41.7),
		lv(M, 300, 9370, -45.1, -55.1),
		lv(M, 250, 10560, -52.9, -59.9),
		lv(M, 200, 11980, -58.7, -65.7),
		lv(M, 150, 13780, -60.9, -76.9),
		lv(M, 100, 16270, -66.5, -85.5),
	}
	return s
}

func TestHydrostaticConsistentProfile(t *testing.T) {
	// Source: METHODS.md §9, synthetic TEMP message (hydrostatically
	// consistent by construction; residuals ≤ 10 m).
	s := tempProfile()
	st := newState(s, DefaultConfig())
	for i := 1; i < len(s.Levels); i++ {
		l := layer{a: i - 1, b: i}
		st.evaluate(&l, st.t, st.td)
		if !l.evaluated || math.Abs(l.residual) > 10 {
			t.Errorf("layer %.0f–%.0f hPa: residual %.2f m, want |r| ≤ 10 m", st.p[i-1]/100, st.p[i]/100, l.residual)
		}
	}
	r := Check(s, DefaultConfig())
	for _, f := range r.Findings {
		if f.Check == CheckHydrostatic {
			t.Errorf("hydrostatic finding on a consistent profile: %s", f.Message)
		}
	}
}

func TestIsothermalThickness(t *testing.T) {
	// Source: METHODS.md §9 item 15: isothermal Tv = 273.15 K from 1000 to
	// 500 hPa with Rd = 287.04749 gives 5541.91 m.
	s := &sounding.Sounding{DeclaredLevels: -1, ElevationM: math.NaN()}
	s.Levels = []sounding.Level{lv(sounding.KindSurface, 1000, 0, 0, math.NaN()), lv(sounding.KindStandard, 500, 5541.91, 0, math.NaN())}
	st := newState(s, DefaultConfig())
	if got := st.thickness(0, 1, st.t, st.td); math.Abs(got-5541.91) > 0.005 {
		t.Errorf("thickness %.3f m, want 5541.91 m", got)
	}
	// 80 m off (tolerance max(20 m, 1 %) = 55.4 m): one layer, no
	// neighbour to tell which value is wrong, so the upper height is
	// suspect.
	s.Levels[1].HeightM += 80
	r := Check(s, DefaultConfig())
	if got := findingsOf(r, CheckHydrostatic); len(got) != 1 || got[0].Level != 1 || got[0].Var != sounding.VarHeight || got[0].Severity != Suspect {
		t.Errorf("findings %+v, want one suspect height at level 1", got)
	}
}

func findingsOf(r Report, check CheckName) []Finding {
	var out []Finding
	for _, f := range r.Findings {
		if f.Check == check {
			out = append(out, f)
		}
	}
	return out
}

// TestResidualPatterns injects single faults into the METHODS.md §9
// synthetic TEMP profile and checks the blame of the residual pattern
// described in METHODS.md §6 (after Collins 2001): opposite signs in the
// two layers sharing a level blame its height; equal signs blame its
// temperature, corrected when reversing the sign removes both residuals.
func TestResidualPatterns(t *testing.T) {
	tests := []struct {
		name   string
		damage func(s *sounding.Sounding)
		level  int
		v      sounding.Var
		sev    Flag
		newC   float64 // corrected value in °C, NaN if none
	}{
		{"height 700 hPa +100 m", func(s *sounding.Sounding) { s.Levels[4].HeightM += 100 }, 4, sounding.VarHeight, Bad, math.NaN()},
		{"height 400 hPa −80 m", func(s *sounding.Sounding) { s.Levels[6].HeightM -= 80 }, 6, sounding.VarHeight, Bad, math.NaN()},
		{"temperature 700 hPa +15 K", func(s *sounding.Sounding) { s.Levels[4].TemperatureK += 15 }, 4, sounding.VarTemperature, Bad, math.NaN()},
		{"temperature 500 hPa sign", func(s *sounding.Sounding) { s.Levels[5].TemperatureK = c0 + 17.7 }, 5, sounding.VarTemperature, Corrected, -17.7},
		// +45.1 °C is within the gross limits, so only the hydrostatic
		// pattern can catch it; the dewpoint follows the corrected value
		// through the reported depression.
		{"temperature 300 hPa sign", func(s *sounding.Sounding) {
			s.Levels[7].TemperatureK = c0 + 45.1
			s.Levels[7].DewpointK = s.Levels[7].TemperatureK - s.Levels[7].DewpointDepressionK
		}, 7, sounding.VarTemperature, Corrected, -45.1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := tempProfile()
			tt.damage(s)
			r := Check(s, DefaultConfig())
			var got []Finding
			for _, f := range r.Findings {
				if !routine(f.Check) {
					got = append(got, f)
				}
			}
			if len(got) != 1 {
				t.Fatalf("%d findings, want 1: %+v", len(got), got)
			}
			f := got[0]
			if f.Level != tt.level || f.Var != tt.v || f.Severity != tt.sev || f.Check != CheckHydrostatic {
				t.Errorf("got level %d %s %s %s, want level %d %s %s hydrostatic (%s)", f.Level, f.VariableName(), f.Severity, f.Check,
					tt.level, tt.v, tt.sev, f.Message)
			}
			if !math.IsNaN(tt.newC) && math.Abs(f.NewValue-(tt.newC+c0)) > 1e-9 {
				t.Errorf("corrected to %.2f °C, want %.2f °C", f.NewValue-c0, tt.newC)
			}
			if r.Status != StatusSuspect {
				t.Errorf("status %q, want suspect", r.Status)
			}
		})
	}
}

func TestSurfacePressure(t *testing.T) {
	// Source: METHODS.md §1.7 / §9 item 16, USSA76: 1000 m geometric =
	// 999.84 gpm → 89876.3 Pa. A station at 999.84 gpm reporting 900 hPa is
	// consistent; 820 hPa is 78.8 hPa off (> 60 hPa) and suspect.
	for _, c := range []struct {
		pHPa    float64
		suspect bool
	}{{898.763, false}, {900, false}, {838.8, false}, {820, true}, {960, true}} {
		s := &sounding.Sounding{ElevationM: 999.84, DeclaredLevels: -1}
		s.Levels = []sounding.Level{lv(sounding.KindSurface, c.pHPa, 999.84, 10, math.NaN())}
		r := Check(s, DefaultConfig())
		got := len(findingsOf(r, CheckSurfPressure)) == 1
		if got != c.suspect {
			t.Errorf("surface %.1f hPa at 999.84 gpm: suspect %v, want %v (USSA76 %.1f hPa)", c.pHPa, got, c.suspect,
				thermo.StandardPressure(999.84)/100)
		}
	}
}

// TestGrossLimits checks one value at a time against the limits of
// METHODS.md §6 (invented values around each threshold; unit scaffolding).
func TestGrossLimits(t *testing.T) {
	tests := []struct {
		name    string
		edit    func(l *sounding.Level)
		v       sounding.Var
		check   CheckName
		flagged bool
	}{
		{"T −95 °C accepted", func(l *sounding.Level) { l.TemperatureK = c0 - 95 }, sounding.VarTemperature, CheckGross, false},
		{"T −95.1 °C", func(l *sounding.Level) { l.TemperatureK = c0 - 95.1 }, sounding.VarTemperature, CheckGross, true},
		{"T +60.1 °C", func(l *sounding.Level) { l.TemperatureK = c0 + 60.1 }, sounding.VarTemperature, CheckGross, true},
		{"DPD 70 accepted", func(l *sounding.Level) { l.DewpointDepressionK = 70 }, sounding.VarDewpointDepression, CheckGross, false},
		{"DPD 70.5", func(l *sounding.Level) { l.DewpointDepressionK = 70.5 }, sounding.VarDewpointDepression, CheckGross, true},
		{"Td = T + 0.1 accepted", func(l *sounding.Level) { l.DewpointDepressionK = -0.1 }, sounding.VarDewpointDepression, CheckDewpoint, false},
		{"Td = T + 0.2", func(l *sounding.Level) { l.DewpointDepressionK = -0.2 }, sounding.VarDewpointDepression, CheckDewpoint, true},
		{"RH 105 accepted", func(l *sounding.Level) { l.RelHumidityPct = 105 }, sounding.VarRelHumidity, CheckGross, false},
		{"RH 105.5", func(l *sounding.Level) { l.RelHumidityPct = 105.5 }, sounding.VarRelHumidity, CheckGross, true},
		{"RH −1", func(l *sounding.Level) { l.RelHumidityPct = -1 }, sounding.VarRelHumidity, CheckGross, true},
		{"speed 120 accepted", func(l *sounding.Level) { l.WindSpeedMS = 120 }, sounding.VarWindSpeed, CheckGross, false},
		{"speed 121", func(l *sounding.Level) { l.WindSpeedMS = 121 }, sounding.VarWindSpeed, CheckGross, true},
		{"direction 361", func(l *sounding.Level) { l.WindDirectionDeg = 361 }, sounding.VarWindDirection, CheckGross, true},
		{"pressure 0", func(l *sounding.Level) { l.PressurePa = 0 }, sounding.VarPressure, CheckGross, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := tempProfile()
			l := &s.Levels[6] // 400 hPa, away from the surface
			l.RelHumidityPct, l.WindSpeedMS, l.WindDirectionDeg = 30, 20, 270
			tt.edit(l)
			r := Check(s, DefaultConfig())
			got := false
			for _, f := range findingsOf(r, tt.check) {
				if f.Level == 6 && f.Var == tt.v && f.Severity == Bad {
					got = true
				}
			}
			if got != tt.flagged {
				t.Errorf("flagged %v, want %v; findings %+v", got, tt.flagged, r.Findings)
			}
		})
	}
}

func TestNearSurfaceWind(t *testing.T) {
	// Source: METHODS.md §6 "Gross wind": > 33.5 m/s below 50 m above the
	// station is treated as missing (confirmed there as a national
	// laboratory's practice).
	for _, c := range []struct {
		zM, speed float64
		bad       bool
	}{{15, 33.5, false}, {15, 34, true}, {64, 34, true}, {66, 34, false}} {
		s := tempProfile()
		w := sounding.NewLevel()
		w.Kind = sounding.KindWindOnly
		w.HeightM, w.WindSpeedMS, w.WindDirectionDeg = c.zM, c.speed, 180
		w.Status[sounding.VarHeight], w.Status[sounding.VarWindSpeed] = sounding.Reported, sounding.Reported
		s.Levels = append(s.Levels, w)
		r := Check(s, DefaultConfig())
		if got := len(findingsOf(r, CheckNearSurfWind)) == 1; got != c.bad {
			t.Errorf("%.1f m/s at %.0f gpm (station 15 m): bad %v, want %v", c.speed, c.zM, got, c.bad)
		}
	}
}

func TestStructureAndCoverage(t *testing.T) {
	cut := tempProfile()
	cut.Levels = cut.Levels[:4] // up to 850 hPa
	few := tempProfile()
	few.Levels = append(few.Levels[:1:1], few.Levels[4:]...) // surface, then 700 hPa up
	noSfc := tempProfile()
	noSfc.Levels = noSfc.Levels[1:]
	count := tempProfile()
	count.DeclaredLevels = 20
	tests := []struct {
		name   string
		s      *sounding.Sounding
		cfg    func(*Config)
		status Status
	}{
		// Sources for the coverage rule: METHODS.md §6 "Depth / coverage"
		// (≥ 500 hPa or 3 km, ≥ 3 levels below 700 hPa).
		{"complete", tempProfile(), nil, StatusOK},
		{"nil", nil, nil, "rejected:empty"},
		{"no levels", &sounding.Sounding{DeclaredLevels: -1}, nil, "rejected:empty"},
		{"level count", count, nil, "rejected:level_count"},
		{"no surface, default", noSfc, nil, StatusSuspect},
		{"no surface, required", noSfc, func(c *Config) { c.RequireSurface = true }, "rejected:no_surface"},
		{"ends at 850 hPa", cut, nil, "insufficient:shallow"},
		{"ends at 850 hPa, 1 km asked", cut, func(c *Config) { c.CoverageTopAGLM = 1000 }, StatusOK},
		{"one level below 700 hPa", few, nil, "insufficient:few_low_levels"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cfg := DefaultConfig()
			if tt.cfg != nil {
				tt.cfg(&cfg)
			}
			r := Check(tt.s, cfg)
			if r.Status != tt.status {
				t.Errorf("status %q, want %q; findings %+v", r.Status, tt.status, r.Findings)
			}
			if want := tt.status == StatusOK || tt.status == StatusSuspect; r.Usable() != want {
				t.Errorf("Usable %v, want %v", r.Usable(), want)
			}
		})
	}
}

func TestApply(t *testing.T) {
	s := tempProfile()
	s.Levels[5].TemperatureK = c0 + 17.7 // sign error at 500 hPa: corrected
	s.Levels[3].RelHumidityPct = 103     // accepted, clipped
	s.Levels[3].Status[sounding.VarRelHumidity] = sounding.Reported
	s.Levels[6].DewpointDepressionK = -2 // dewpoint above T: bad
	s.Levels[6].DewpointK = s.Levels[6].TemperatureK + 2
	r := Check(s, DefaultConfig())
	before := clone(s)
	a := Apply(s, r, false)
	if len(a.Levels) != len(s.Levels) {
		t.Fatalf("%d levels, want %d", len(a.Levels), len(s.Levels))
	}
	if math.Abs(a.Levels[5].TemperatureK-(c0-17.7)) > 1e-9 || a.Levels[5].Status[sounding.VarTemperature] != sounding.Derived {
		t.Errorf("500 hPa: T %.2f °C status %s, want −17.7 °C derived", a.Levels[5].TemperatureK-c0, a.Levels[5].Status[sounding.VarTemperature])
	}
	if want := c0 - 17.7 - 14; math.Abs(a.Levels[5].DewpointK-want) > 1e-9 {
		t.Errorf("500 hPa dewpoint %.2f, want T − DPD = %.2f", a.Levels[5].DewpointK-c0, want-c0)
	}
	if !math.IsNaN(a.Levels[6].DewpointK) || !math.IsNaN(a.Levels[6].DewpointDepressionK) || math.IsNaN(a.Levels[6].TemperatureK) {
		t.Errorf("400 hPa: Td %v DPD %v T %v; want humidity removed, T kept", a.Levels[6].DewpointK, a.Levels[6].DewpointDepressionK, a.Levels[6].TemperatureK)
	}
	if a.Levels[3].RelHumidityPct != 100 {
		t.Errorf("RH %v, want clipped to 100", a.Levels[3].RelHumidityPct)
	}
	for i := range s.Levels { // the input is untouched
		for v := range sounding.NumVars {
			if !sameFloat(value(&s.Levels[i], v), value(&before.Levels[i], v)) {
				t.Fatalf("Apply modified its input at level %d %s", i, v)
			}
		}
	}
	// Suspect values: dropped unless asked for.
	s2 := tempProfile()
	s2.Levels[1].HeightM = 2000 // single bad anchor at the bottom: ...
	r2 := Check(s2, DefaultConfig())
	var susp *Finding
	for i := range r2.Findings {
		if r2.Findings[i].Severity == Suspect && r2.Findings[i].Level >= 0 {
			susp = &r2.Findings[i]
		}
	}
	if susp == nil {
		t.Fatalf("no suspect finding: %+v", r2.Findings)
	}
	keep, drop := Apply(s2, r2, true), Apply(s2, r2, false)
	if math.IsNaN(value(&keep.Levels[susp.Level], susp.Var)) || !math.IsNaN(value(&drop.Levels[susp.Level], susp.Var)) {
		t.Errorf("suspect %s at level %d: kept %v / dropped %v", susp.Var, susp.Level,
			value(&keep.Levels[susp.Level], susp.Var), value(&drop.Levels[susp.Level], susp.Var))
	}
	if Apply(nil, Report{}, false) != nil {
		t.Error("Apply(nil) not nil")
	}
}

// TestIndependentOfOtherSoundings checks that the report of one real
// sounding (Sterling 2016, PROVENANCE.md) read on its own equals its report
// when the whole file is processed.
func TestIndependentOfOtherSoundings(t *testing.T) {
	data := realdata.Text(t, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	all := readAll(t, bytes.NewReader(data), "whole")
	var starts []int
	for i := 0; i < len(data); i++ {
		if data[i] == '#' && (i == 0 || data[i-1] == '\n') {
			starts = append(starts, i)
		}
	}
	if len(starts) != len(all) {
		t.Fatalf("%d headers, %d soundings", len(starts), len(all))
	}
	for _, n := range []int{0, 331, 600, len(all) - 1} { // winter, summer, autumn (wind-only surface), last
		end := len(data)
		if n+1 < len(starts) {
			end = starts[n+1]
		}
		alone := readAll(t, bytes.NewReader(data[starts[n]:end]), "alone")
		if len(alone) != 1 {
			t.Fatalf("sounding %d alone: %d soundings", n, len(alone))
		}
		a, b := Check(alone[0], DefaultConfig()), Check(all[n], DefaultConfig())
		added, removed := diff(b.Findings, a.Findings)
		if a.Status != b.Status || len(added)+len(removed) > 0 || len(a.Flags) != len(b.Flags) {
			t.Errorf("sounding %d: alone %q, in file %q; +%v −%v", n, a.Status, b.Status, added, removed)
			continue
		}
		for i := range a.Flags {
			if a.Flags[i] != b.Flags[i] {
				t.Errorf("sounding %d level %d flags differ: %v vs %v", n, i, a.Flags[i], b.Flags[i])
			}
		}
	}
}

func TestChooseDuplicate(t *testing.T) {
	// The precedence is this package's documented choice (common practice,
	// no source); invented candidates.
	base := Candidate{LowLevels: 30, BadFindings: 1, Format: "wmo-temp", File: "a.txt", Line: 10}
	with := func(f func(*Candidate)) Candidate { c := base; f(&c); return c }
	tests := []struct {
		name   string
		a, b   Candidate
		keep   int
		reason string
	}{
		{"more low levels", base, with(func(c *Candidate) { c.LowLevels = 31; c.BadFindings = 9 }), 1, "more_low_levels"},
		{"fewer bad", with(func(c *Candidate) { c.BadFindings = 0 }), base, 0, "fewer_bad_findings"},
		{"format", base, with(func(c *Candidate) { c.Format = "archive-v2" }), 1, "preferred_format"},
		{"unknown format last", with(func(c *Candidate) { c.Format = "other" }), base, 1, "preferred_format"},
		{"later line (correction)", with(func(c *Candidate) { c.Line = 99 }), base, 0, "later_source"},
		{"later file", base, with(func(c *Candidate) { c.File = "b.txt"; c.Line = 1 }), 1, "later_source"},
		{"identical", base, base, 0, "identical_first_kept"},
	}
	for _, tt := range tests {
		keep, reason := ChooseDuplicate(tt.a, tt.b)
		if keep != tt.keep || reason != tt.reason {
			t.Errorf("%s: (%d, %s), want (%d, %s)", tt.name, keep, reason, tt.keep, tt.reason)
		}
		// Swapping the arguments swaps the answer (except for a tie).
		if tt.reason != "identical_first_kept" {
			if k2, r2 := ChooseDuplicate(tt.b, tt.a); k2 != 1-tt.keep || r2 != tt.reason {
				t.Errorf("%s swapped: (%d, %s)", tt.name, k2, r2)
			}
		}
	}
	s := tempProfile()
	r := Check(s, DefaultConfig())
	if c := CandidateOf(s, r); c.LowLevels != 6 || c.BadFindings != 0 {
		t.Errorf("CandidateOf: %+v, want 6 levels at ≥ 500 hPa (1019…500) and no bad findings", c)
	}
}
