package analyze

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"sync"
	"testing"
	"time"
	"unicode/utf8"
)

// TestParseRule: accepted rules and their canonical form, settings and
// defaults. The expected texts are written by hand from the grammar in
// rule.go (scaffolding for the parser's own contract).
func TestParseRule(t *testing.T) {
	for _, tc := range []struct {
		in, canon   string
		name        string
		minD, maxGp int
	}{
		{"lid_600: afternoon_mixing_height_m <= 600 and sbi_persists; min_days=3",
			"afternoon_mixing_height_m <= 600 and sbi_persists", "lid_600", 3, 1},
		{"  Calm :AFTERNOON_TRANSPORT_WIND_MS<2 OR not (morning_sbi and deep_stable_layer);max_gap = 0 ; min_days=1",
			"afternoon_transport_wind_ms < 2 or not (morning_sbi and deep_stable_layer)", "calm", 1, 0},
		{"hd: morning_heat_deficit_mj_m2 >= 4.04e0 and (afternoon_sbi or max_heat_deficit_mj_m2 > -1.5)",
			"morning_heat_deficit_mj_m2 >= 4.04 and (afternoon_sbi or max_heat_deficit_mj_m2 > -1.5)", "hd", 2, 1},
		{"n: not not has_morning and soundings != 2 and stable_layer_fraction = 1", "not not has_morning and soundings != 2 and stable_layer_fraction = 1", "n", 2, 1},
		{"o: (sbi_persists or deep_stable_layer) or has_afternoon", "sbi_persists or deep_stable_layer or has_afternoon", "o", 2, 1},
	} {
		c, err := ParseRule(tc.in)
		if err != nil {
			t.Errorf("%q: %v", tc.in, err)
			continue
		}
		if got := c.Condition.String(); got != tc.canon || c.Name != tc.name || c.MinDays != tc.minD || c.MaxGapDays != tc.maxGp {
			t.Errorf("%q: %s %q min %d gap %d, want %s %q min %d gap %d", tc.in, c.Name, got, c.MinDays, c.MaxGapDays, tc.name, tc.canon, tc.minD, tc.maxGp)
		}
		if err := c.Validate(); err != nil {
			t.Errorf("%q: %v", tc.in, err)
		}
		want := fmt.Sprintf("%s; min_days=%d; max_gap=%d", tc.canon, tc.minD, tc.maxGp)
		if d := c.Definition(); d != want {
			t.Errorf("%q: definition %q, want %q", tc.in, d, want)
		}
	}
}

// TestParseRuleErrors: every rejected rule names the position of the
// problem (1-based characters), counted by hand.
func TestParseRuleErrors(t *testing.T) {
	for _, tc := range []struct {
		in   string
		pos  int
		want string
	}{
		{"", 1, "name"},
		{"afternoon_mixing_height_m <= 600", 27, `":"`},
		{"r: afternoon_mixing_height_m <= ", 33, "finite number"},
		{"r: afternoon_mixing_height_m", 29, "is a number"},
		{"r: sbi_persists <= 1", 17, "true or false"},
		{"r: sbi_persist", 4, "unknown column"},
		{"r: (sbi_persists", 17, `")"`},
		{"r: sbi_persists)", 16, `"and", "or" or ";"`},
		{"r: sbi_persists and", 20, "want a column"},
		{"r: sbi_persists; min_days=0", 27, "1 to 366"},
		{"r: sbi_persists; min_days=2.5", 27, "whole number"},
		{"r: sbi_persists; max_gap=31", 26, "0 to 30"},
		{"r: sbi_persists; min_days=2; min_days=3", 30, "twice"},
		{"r: sbi_persists; length=3", 18, "setting"},
		{"r: soundings == 2", 15, "finite number"},
		{"r: soundings ! 2", 14, `"!"`},
		{"r: soundings > 1e999", 16, "finite number"},
		{"r: soundings > 1.2.3", 16, "finite number"},
		{"r: soundings > 2 ∧ has_morning", 18, "unexpected character"},
		{"ré: has_morning", 2, "unexpected character"},
		{"9r: has_morning", 1, "name"},
		{"persistent_inversion_whiteman2001: has_morning", 1, "built-in"},
		{"and: has_morning", 1, "keyword"},
		{"r: " + strings.Repeat("(", 40) + "has_morning" + strings.Repeat(")", 40), 36, "nested"},
		{"r: " + strings.Repeat("not ", 40) + "has_morning", 132, "nested"},
		{"r: " + strings.Repeat("has_morning and ", 200) + "has_morning", 0, "at most"},
	} {
		_, err := ParseRule(tc.in)
		var re *RuleError
		if !errors.As(err, &re) {
			t.Errorf("%q: error %v, want a RuleError", tc.in, err)
			continue
		}
		if re.Pos != tc.pos || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: %v (position %d), want position %d and %q", tc.in, err, re.Pos, tc.pos, tc.want)
		}
		if tc.pos > 0 && !strings.Contains(err.Error(), fmt.Sprintf("position %d:", tc.pos)) {
			t.Errorf("%q: message %q does not name position %d", tc.in, err, tc.pos)
		}
	}
}

// TestTriLogic: the three-valued connectives are the SQL ones (Kleene's
// strong logic; the SQL standard's truth tables for AND, OR and NOT with
// UNKNOWN, as in DuckDB's documentation of NULL logic). Written out by
// hand; queries' TestRuleMatchesSQL checks whole conditions against DuckDB.
func TestTriLogic(t *testing.T) {
	U, N, Y := Unknown, No, Yes
	and := [3][3]Tri{{U, N, U}, {N, N, N}, {U, N, Y}} // index: Unknown, No, Yes
	or := [3][3]Tri{{U, U, Y}, {U, N, Y}, {Y, Y, Y}}
	not := [3]Tri{U, Y, N}
	for a := Unknown; a <= Yes; a++ {
		if a.Not() != not[a] {
			t.Errorf("not %v = %v, want %v", a, a.Not(), not[a])
		}
		for b := Unknown; b <= Yes; b++ {
			if a.And(b) != and[a][b] || a.Or(b) != or[a][b] {
				t.Errorf("%v and/or %v = %v/%v, want %v/%v", a, b, a.And(b), a.Or(b), and[a][b], or[a][b])
			}
		}
	}
}

// TestRuleEpisodesByHand: a user rule on a small constructed list of
// days (invented values, not observations), with its episodes worked out
// by hand from the documented gap rule.
func TestRuleEpisodesByHand(t *testing.T) {
	c, err := ParseRule("shallow_lid: afternoon_mixing_height_m <= 600 and (sbi_persists or max_heat_deficit_mj_m2 >= 3); min_days=3; max_gap=2")
	if err != nil {
		t.Fatal(err)
	}
	mk := func(day int, mh float64, persists Tri, hdMJ float64) DayRecord {
		d := DayRecord{StationID: "C", Date: date(2, day), Soundings: 2, Morning: 0, Afternoon: 1, MorningSBI: Yes, MorningSBIStrengthK: 2,
			AfternoonSBI: persists, MorningHeatDeficitJ: nan, AfternoonHeatDeficitJ: nan, MaxHeatDeficitJ: hdMJ * 1e6, StableFraction: nan,
			AfternoonMHM: mh, AfternoonWindMS: 2, VentilationM2S: mh * 2}
		if persists == Unknown {
			d.Afternoon, d.Soundings = -1, 1
		}
		return d
	}
	days := []DayRecord{
		mk(1, 500, Yes, 1),       // met (persists)
		mk(2, 400, No, 3.5),      // met (heat deficit)
		mk(3, nan, Yes, 2),       // unknown (mixing height)
		mk(4, 550, Unknown, nan), // unknown: no afternoon sounding, no heat deficit
		mk(5, 300, No, 4),        // met: the 2-day gap stays inside
		mk(6, 700, Yes, 5),       // fails (deep): ends 1..5, 3 days met
		mk(7, 200, Yes, 1),       // met
		mk(8, 250, No, 1),        // fails (neither): 7..7 is 1 day, too short
		mk(9, 100, Yes, 0),       // met
		mk(10, 100, Yes, 0),      // met
		// 11, 12, 13 have no record: 3 unknown days, longer than max_gap 2
		mk(14, 100, Yes, 0),     // met
		mk(15, 100, Yes, 0),     // met
		mk(16, 100, Unknown, 9), // met: heat deficit alone answers "or" though persistence is unknown
	}
	eps, err := FindEpisodes(days, c)
	if err != nil {
		t.Fatal(err)
	}
	type want struct {
		first, last, length, met, missing, soundings int
		openStart, openEnd                           bool
		lowMH                                        float64
	}
	// 1..5: days 1, 2, 5 met, 3 and 4 missing; soundings 2+2+2+1+2 = 9.
	// 9..10 has only 2 met days (< 3) and ends before the 3-day gap.
	// 14..16: 3 met days, soundings 2+2+1, opening after the gap, open at the record's end.
	wants := []want{{1, 5, 5, 3, 2, 9, true, false, 300}, {14, 16, 3, 3, 0, 5, true, true, 100}}
	if len(eps) != len(wants) {
		t.Fatalf("%d episodes %+v, want %d", len(eps), eps, len(wants))
	}
	for i, w := range wants {
		e := eps[i]
		if !e.First.Equal(date(2, w.first)) || !e.Last.Equal(date(2, w.last)) || e.LengthDays != w.length || e.DaysMet != w.met ||
			e.DaysMissing != w.missing || e.Soundings != w.soundings || e.OpenStart != w.openStart || e.OpenEnd != w.openEnd ||
			e.LowestAfternoonMHM != w.lowMH || e.Criterion != "shallow_lid" {
			t.Errorf("episode %d = %s..%s len %d met %d missing %d soundings %d open %v/%v lowest %g, want %+v", i,
				e.First.Format("01-02"), e.Last.Format("01-02"), e.LengthDays, e.DaysMet, e.DaysMissing, e.Soundings,
				e.OpenStart, e.OpenEnd, e.LowestAfternoonMHM, w)
		}
	}
}

var (
	sterlingOnce    sync.Once
	sterlingDayList []DayRecord
)

// sterlingDays returns the local days of the real Sterling 2016 file
// (skipping when absent), analysed once per test binary.
func sterlingDays(t *testing.T) []DayRecord {
	t.Helper()
	all := readSterling(t) // skips without the file
	sterlingOnce.Do(func() {
		cfg := DefaultConfig()
		var obs []DayObs
		for _, s := range all {
			r := Analyze(s, cfg)
			if r.Status != StatusOK {
				continue
			}
			obs = append(obs, DayObs{StationID: s.StationID, LaunchTime: s.LaunchTime, LongitudeDeg: s.LongitudeDeg,
				SBIPresent: r.SBI.Present, SBIStrengthK: r.SBI.StrengthK, HeatDeficitJ: r.HeatDeficit.JPerM2,
				StableFraction: r.StableFraction, ParcelMHM: r.Parcel.HeightAGLM, TransportWindMS: r.Ventilation.TransportWindMS})
		}
		sterlingDayList = BuildDays(obs, nil, DefaultDayConfig())
	})
	return sterlingDayList
}

// TestRuleReproducesBuiltins: a user rule written by hand to say what a
// built-in says (from the built-in's documentation, BuiltinCriteria) finds
// exactly the built-in's episodes on the real Sterling 2016 days, and so
// does the built-in's recorded Definition parsed back as a rule.
func TestRuleReproducesBuiltins(t *testing.T) {
	days := sterlingDays(t)
	byHand := map[string]string{
		CriterionPersistentInversion: "sbi_persists",
		CriterionDeepStable:          "deep_stable_layer",
		CriterionHeatDeficit:         "morning_heat_deficit_mj_m2 >= 4.04 and afternoon_heat_deficit_mj_m2 >= 4.04",
		CriterionPollutionPotential:  "afternoon_mixing_height_m <= 1500 and afternoon_transport_wind_ms <= 4",
	}
	total := 0
	for _, b := range BuiltinCriteria() {
		want, err := FindEpisodes(days, b)
		if err != nil {
			t.Fatal(err)
		}
		total += len(want)
		for _, text := range []string{"mine: " + byHand[b.Name] + "; min_days=2; max_gap=1", "mine: " + b.Definition()} {
			r, err := ParseRule(text)
			if err != nil {
				t.Fatalf("%s: %q: %v", b.Name, text, err)
			}
			got, _ := FindEpisodes(days, r)
			if err := sameEpisodes(got, want); err != nil {
				t.Errorf("%s vs %q: %v", b.Name, text, err)
			}
		}
		// Day by day too, not only the runs.
		r, _ := ParseRule("mine: " + byHand[b.Name])
		for _, d := range days {
			if r.Evaluate(d) != b.Evaluate(d) {
				t.Errorf("%s %s: rule %v, built-in %v", b.Name, d.Date.Format("2006-01-02"), r.Evaluate(d), b.Evaluate(d))
				break
			}
		}
		t.Logf("%s: %d episodes; definition %q", b.Name, len(want), b.Definition())
	}
	if total < 10 {
		t.Errorf("%d episodes over all built-ins in Sterling 2016: too few for the comparison to mean much", total)
	}
	// A stronger morning inversion required: the built-in's field and the
	// rule's comparison agree too.
	for _, b := range BuiltinCriteria() {
		if b.Name != CriterionPersistentInversion {
			continue
		}
		b.MinMorningSBIStrengthK = 3
		r, err := ParseRule("mine: sbi_persists and morning_sbi_strength_k >= 3")
		if err != nil {
			t.Fatal(err)
		}
		want, _ := FindEpisodes(days, b)
		got, _ := FindEpisodes(days, r)
		if err := sameEpisodes(got, want); err != nil {
			t.Errorf("3 K persistent inversion: %v", err)
		}
	}
}

// TestHeatDeficitPoolKnownFailure: a morning heat deficit below the
// threshold fails the heat-deficit rule even when the afternoon sounding
// is missing (the rule needs both at least the threshold), so such a day
// ends an episode rather than bridging it as unknown.
func TestHeatDeficitPoolKnownFailure(t *testing.T) {
	var hd Criterion
	for _, b := range BuiltinCriteria() {
		if b.Name == CriterionHeatDeficit {
			hd = b
		}
	}
	d := DayRecord{MorningHeatDeficitJ: 2e6, AfternoonHeatDeficitJ: nan}
	if got := hd.Evaluate(d); got != No {
		t.Errorf("morning 2 MJ m-2, afternoon unknown: %v, want failed", got)
	}
	d.MorningHeatDeficitJ = 5e6
	if got := hd.Evaluate(d); got != Unknown {
		t.Errorf("morning 5 MJ m-2, afternoon unknown: %v, want unknown", got)
	}
}

func sameEpisodes(got, want []Episode) error {
	if len(got) != len(want) {
		return fmt.Errorf("%d episodes, want %d", len(got), len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.StationID != w.StationID || !g.First.Equal(w.First) || !g.Last.Equal(w.Last) || g.LengthDays != w.LengthDays ||
			g.DaysMet != w.DaysMet || g.DaysMissing != w.DaysMissing || g.Soundings != w.Soundings || g.OpenStart != w.OpenStart ||
			g.OpenEnd != w.OpenEnd || !sameFloat(g.PeakHeatDeficitJ, w.PeakHeatDeficitJ) ||
			!sameFloat(g.LowestAfternoonMHM, w.LowestAfternoonMHM) || !sameFloat(g.LowestVentilationM2S, w.LowestVentilationM2S) {
			return fmt.Errorf("episode %d: %s..%s, want %s..%s (or another field differs)", i,
				g.First.Format("2006-01-02"), g.Last.Format("2006-01-02"), w.First.Format("2006-01-02"), w.Last.Format("2006-01-02"))
		}
	}
	return nil
}

func sameFloat(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }

// FuzzParseRule: hostile rule text never panics, every rejection is a
// RuleError whose position lies inside the text (or 0), and every accepted
// rule's recorded definition parses back to the same definition and
// judges days the same way.
func FuzzParseRule(f *testing.F) {
	for _, s := range []string{
		"lid_600: afternoon_mixing_height_m <= 600 and sbi_persists; min_days=3",
		"calm: afternoon_transport_wind_ms<2 or not (morning_sbi and deep_stable_layer);max_gap=0",
		"x: ((((has_morning))))", "x: soundings >= -1e-3", "x: not", "x:", ":", "x: a <", "x: ;;", "x: soundings > 1e309",
		"x: " + strings.Repeat("(", 33) + "has_morning", "ré: ∧", "x: morning_sbi_strength_k != .5e+1; min_days=366; max_gap=30",
	} {
		f.Add(s)
	}
	probe := []DayRecord{
		{MorningSBI: Yes, MorningSBIStrengthK: 3, AfternoonSBI: Yes, MorningHeatDeficitJ: 5e6, AfternoonHeatDeficitJ: 4e6, MaxHeatDeficitJ: 5e6,
			StableFraction: 0.7, DeepStable: Yes, AfternoonMHM: 500, AfternoonWindMS: 2, VentilationM2S: 1000, Soundings: 2, Morning: 0, Afternoon: 1},
		{MorningSBIStrengthK: nan, MorningHeatDeficitJ: nan, AfternoonHeatDeficitJ: nan, MaxHeatDeficitJ: nan, StableFraction: nan,
			AfternoonMHM: nan, AfternoonWindMS: nan, VentilationM2S: nan, Morning: -1, Afternoon: -1},
		{MorningSBI: No, MorningSBIStrengthK: nan, AfternoonSBI: No, MorningHeatDeficitJ: 0, AfternoonHeatDeficitJ: 0.5e6, MaxHeatDeficitJ: 0.5e6,
			StableFraction: 0.1, DeepStable: No, AfternoonMHM: 2500, AfternoonWindMS: 8, VentilationM2S: 20000, Soundings: 3, Morning: 0, Afternoon: 2},
	}
	f.Fuzz(func(t *testing.T, s string) {
		c, err := ParseRule(s)
		if err != nil {
			var re *RuleError
			if !errors.As(err, &re) {
				t.Fatalf("%q: error %T %v, want a RuleError", s, err, err)
			}
			if re.Pos < 0 || re.Pos > utf8.RuneCountInString(s)+1 {
				t.Fatalf("%q: position %d outside the text", s, re.Pos)
			}
			return
		}
		if c.Validate() != nil || c.Condition == nil {
			t.Fatalf("%q: accepted but invalid", s)
		}
		def := c.Definition()
		again, err := ParseRule(c.Name + ": " + def)
		if err != nil {
			t.Fatalf("%q: definition %q does not parse: %v", s, def, err)
		}
		if again.Definition() != def {
			t.Fatalf("%q: definition %q parses back as %q", s, def, again.Definition())
		}
		for _, d := range probe {
			if c.Evaluate(d) != again.Evaluate(d) {
				t.Fatalf("%q: the definition judges a day differently", s)
			}
		}
		days := []DayRecord{probe[0], probe[2], probe[0]}
		for i := range days {
			days[i].StationID, days[i].Date = "F", time.Date(2020, 1, 1+i, 0, 0, 0, 0, time.UTC)
		}
		if _, err := FindEpisodes(days, c); err != nil {
			t.Fatal(err)
		}
	})
}
