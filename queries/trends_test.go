package queries

import (
	"context"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/schema"
)

// trendStore writes invented JJA 00 UTC soundings: for each station, one
// year per value, three soundings a year with that consensus height (so
// the yearly median is the value), and level counts from levels(year).
func trendStore(t *testing.T, series map[string][]float64, firstYear map[string]int, skip map[string]int,
	levels func(year int) int32) string {
	t.Helper()
	var rows []schema.SoundingRow
	for st, vals := range series {
		year := firstYear[st]
		for _, v := range vals {
			if year == skip[st] {
				year++
			}
			for range 3 {
				r := sounding(st, "JJA", int32(year), 0, "ok", "ok", v, ptr(false), nan, nan)
				r.LevelCount = levels(year)
				rows = append(rows, r)
			}
			year++
		}
	}
	return writeStore(t, t.TempDir(), rows)
}

// TestTrendsCheckValues runs the trend statistics end to end on series
// whose results METHODS.md §9 states:
//   - Mann–Kendall on [1, 2, 3, 4, 5]: S = 10, Z = 2.2045, p = 0.0275,
//     Theil–Sen slope 1.0 (per year) [D];
//   - Mann–Kendall on [2, 1, 4, 3, 6, 5, 8, 7, 10, 9]: S = 35,
//     Z = 3.0411, p = 0.00236, Sen slope 1.0 [D].
//
// The first series is scaled by 100 m (Mann–Kendall is unchanged by
// scaling; the slope scales: 100 m/yr = 1000 m per decade).
func TestTrendsCheckValues(t *testing.T) {
	series := map[string][]float64{
		"XT001": {100, 200, 300, 400, 500},
		"XT002": {2, 1, 4, 3, 6, 5, 8, 7, 10, 9},
		"XT003": {100, 200, 300, 400, 500},
	}
	first := map[string]int{"XT001": 2001, "XT002": 2001, "XT003": 2001}
	skip := map[string]int{"XT003": 2003} // a gap in the record
	// Levels per sounding jump from 30 to 60 in 2006 (invented).
	dir := trendStore(t, series, first, skip, func(y int) int32 {
		if y >= 2006 {
			return 60
		}
		return 30
	})
	db := openStore(t, dir)
	tt, err := Trends(context.Background(), db, TrendOptions{MinPerYear: 3})
	if err != nil {
		t.Fatal(err)
	}
	tab := tt.Trends
	if len(tab.Rows) != 3 {
		t.Fatalf("%d rows, want 3:\n%v", len(tab.Rows), tab.Rows)
	}
	tests := []struct {
		station            string
		s, z, p, slope     float64
		tolZ, tolP         float64
		years              int64
		noteHas, noteLacks string
	}{
		{"XT001", 10, 2.2045, 0.0275, 1000, 5e-5, 5e-5, 5, "only 5 years", "gap"},
		{"XT002", 35, 3.0411, 0.00236, 10, 5e-5, 5e-6, 10, "levels per sounding 30 -> 60 in 2006", "only"},
		// XT003: the same values in 2001, 2002, 2004, 2005, 2006. Mann–Kendall
		// depends only on the order; the Sen slope uses the years: the ten
		// pairwise slopes (m/yr) are 100, 66.67, 75, 80, 50, 66.67, 75, 100,
		// 100, 100, median (75 + 80)/2 = 77.5 → 775 m per decade (by hand).
		{"XT003", 10, 2.2045, 0.0275, 775, 5e-5, 5e-5, 5, "gap: 2003", "below coverage"},
	}
	for i, tc := range tests {
		r := tab.Rows[i]
		if cell(tab, r, "station_id") != tc.station {
			t.Fatalf("row %d is %v, want %s", i, r[0], tc.station)
		}
		if g := cell(tab, r, "years"); g != tc.years {
			t.Errorf("%s: years %v, want %d", tc.station, g, tc.years)
		}
		for _, c := range []struct {
			col       string
			want, tol float64
		}{{"mk_s", tc.s, 0}, {"mk_z", tc.z, tc.tolZ}, {"mk_p", tc.p, tc.tolP}, {"slope_per_decade", tc.slope, 1e-9}} {
			g, ok := cell(tab, r, c.col).(float64)
			if !ok || math.Abs(g-c.want) > c.tol {
				t.Errorf("%s: %s = %v, want %v ± %v (METHODS §9)", tc.station, c.col, cell(tab, r, c.col), c.want, c.tol)
			}
		}
		note, _ := cell(tab, r, "note").(string)
		if !strings.Contains(note, tc.noteHas) || strings.Contains(note, tc.noteLacks) {
			t.Errorf("%s: note %q, want it to contain %q and not %q", tc.station, note, tc.noteHas, tc.noteLacks)
		}
	}

	// The coverage rule: 3 soundings against 92 expected days of JJA keep
	// no year at 70 %, so no trend is computed.
	tt, err = Trends(context.Background(), db, TrendOptions{Stations: []string{"XT001"}})
	if err != nil {
		t.Fatal(err)
	}
	r := tt.Trends.Rows[0]
	if cell(tt.Trends, r, "years") != int64(0) || cell(tt.Trends, r, "mk_p") != nil ||
		!strings.Contains(cell(tt.Trends, r, "note").(string), "years below coverage: 2001,2002,2003,2004,2005") {
		t.Errorf("coverage rule: %v", r)
	}
	if i := slices.Index(tt.Yearly.Columns, "expected"); tt.Yearly.Rows[0][i] != int64(92) {
		t.Errorf("expected JJA soundings %v, want 92 (30 + 31 + 31 days)", tt.Yearly.Rows[0][i])
	}
	if _, err := Trends(context.Background(), db, TrendOptions{Metric: "nonsense"}); err == nil {
		t.Error("unknown metric accepted")
	}
}

func TestSeasonDays(t *testing.T) {
	// Calendar facts: DJF 2016 holds 29 February 2016 (31+31+29).
	for _, c := range []struct {
		s    string
		y, n int
	}{{"DJF", 2016, 91}, {"DJF", 2015, 90}, {"MAM", 2015, 92}, {"JJA", 2015, 92}, {"SON", 2015, 91}, {"XYZ", 2015, 0}} {
		if got := seasonDays(c.s, c.y); got != c.n {
			t.Errorf("seasonDays(%s, %d) = %d, want %d", c.s, c.y, got, c.n)
		}
	}
}
