package queries

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"github.com/sondeclim/sondeclim/analyze/stats"
	"github.com/sondeclim/sondeclim/schema"
)

// type7 is the Hyndman & Fan type-7 sample quantile as written in
// METHODS.md §8: h = (n−1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]) on
// 0-based sorted x. It returns NaN for empty x.
func type7(x []float64, p float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := slices.Clone(x)
	slices.Sort(s)
	h := float64(len(s)-1) * p
	lo := int(math.Floor(h))
	if lo+1 >= len(s) {
		return s[lo]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}

// gonumType7 computes the type-7 quantile with gonum. gonum's stat.Quantile
// with stat.LinInterp is Hyndman & Fan type 4 (position n·p, 1-based; see
// its source and doc), not type 7, so it is evaluated at the shifted
// probability p' = ((n−1)p + 1)/n, whose type-4 position n·p' equals the
// type-7 position (n−1)p + 1 (algebra, from the two definitions).
func gonumType7(x []float64, p float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	return stat.Quantile(((n-1)*p+1)/n, stat.LinInterp, s, nil)
}

func TestType7Reference(t *testing.T) {
	x := []float64{10, 1, 9, 2, 8, 3, 7, 4, 6, 5} // 1..10, unsorted
	// Source: METHODS.md §9 "Percentiles of 1..10: type 7 → p10 = 1.9,
	// p50 = 5.5, p90 = 9.1" [D].
	for _, c := range []struct{ p, want float64 }{{0.1, 1.9}, {0.5, 5.5}, {0.9, 9.1}} {
		if got := type7(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("type7(1..10, %v) = %v, want %v", c.p, got, c.want)
		}
		if got := gonumType7(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("gonumType7(1..10, %v) = %v, want %v", c.p, got, c.want)
		}
	}
	// The pitfall the shift avoids: plain LinInterp at p = 0.1 gives
	// position n·p = 1, the smallest value, not 1.9 (type 4 vs type 7).
	if got := stat.Quantile(0.1, stat.LinInterp, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, nil); got == 1.9 {
		t.Errorf("gonum LinInterp now agrees with type 7 (%v); revisit gonumType7", got)
	}
}

// climRow is one expected row of the climatology; NaN stands for NULL.
type climRow struct {
	station, season         string
	hour                    int64
	n, valid, ok, surf, und int64
	p                       [5]float64 // p10, p25, p50, p75, p90 in m
	freq, strength, top     float64
	eiFreq                  float64
	note                    string
}

// cell returns the value of column name in row r of t.
func cell(t *Table, r []any, name string) any {
	i := slices.Index(t.Columns, name)
	if i < 0 {
		return fmt.Sprintf("<no column %s>", name)
	}
	return r[i]
}

// sameFloat reports whether got (a Table value) is want; NaN wants NULL.
func sameFloat(got any, want float64) bool {
	f, ok := got.(float64)
	if math.IsNaN(want) {
		return got == nil
	}
	return ok && math.Abs(f-want) <= 1e-9*math.Max(1, math.Abs(want))
}

// checkRow compares one result row with the expectation.
func checkRow(t *testing.T, tab *Table, got []any, want climRow) {
	t.Helper()
	id := fmt.Sprintf("%s %s %02d", want.station, want.season, want.hour)
	if cell(tab, got, "station_id") != want.station || cell(tab, got, "season") != want.season {
		t.Errorf("row %s: got %v", id, got)
	}
	ints := map[string]int64{"nominal_hour": want.hour, "n_soundings": want.n, "n_valid": want.valid,
		"n_consensus_ok": want.ok, "n_consensus_surface": want.surf, "n_consensus_undefined": want.und}
	for c, w := range ints {
		if g := cell(tab, got, c); g != w {
			t.Errorf("%s: %s = %v, want %d", id, c, g, w)
		}
	}
	floats := map[string]float64{"sbi_frequency": want.freq, "sbi_median_strength_k": want.strength,
		"sbi_median_depth_m": want.top, "ei_frequency": want.eiFreq, "ei_subsidence_frequency": want.eiFreq}
	for k, name := range []string{"mixing_height_p10_m", "mixing_height_p25_m", "mixing_height_p50_m", "mixing_height_p75_m", "mixing_height_p90_m"} {
		floats[name] = want.p[k]
	}
	for c, w := range floats {
		if g := cell(tab, got, c); !sameFloat(g, w) {
			t.Errorf("%s: %s = %v, want %v (NaN = NULL)", id, c, g, w)
		}
	}
	if g := cell(tab, got, "note"); g != want.note {
		t.Errorf("%s: note = %q, want %q", id, g, want.note)
	}
}

func TestClimatologyByHand(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	ct, err := ClimatologyOf(context.Background(), db, ClimatologyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	tab := ct.Cells
	// Hand computation, type 7 (METHODS.md §8: h = (n−1)p on 0-based sorted x).
	// The consensus mirrors the parcel height in this scaffolding.
	//
	// XA001 DJF 00: valid heights {0 (surface), 100, 200, 300}, n = 4,
	// h = 3p: p10 h=0.3 → 0+0.3·100 = 30; p25 h=0.75 → 75; p50 h=1.5 →
	// 100+0.5·100 = 150; p75 h=2.25 → 200+0.25·100 = 225; p90 h=2.7 → 270.
	// SBI in 2 of 5 valid → 0.4; median strength (2+5)/2 = 3.5 K, depth
	// (150+350)/2 = 250 m. The invalid sounding (9999 m, SBI 99 K) is only
	// counted in n_soundings. One elevated subsidence inversion (the first
	// sounding, see writeStore) → 1/5 = 0.2. All invented soundings fall in
	// January, so two months of DJF are empty → "month n<10".
	//
	// XA001 DJF 12: one surface sounding → every percentile 0; SBI 1/1.
	//
	// XA001 MAM 00: no valid sounding → statistics NULL.
	//
	// XA001 JJA 12: sorted {600, 900, 1200, 1500, 2100}, n = 5, h = 4p:
	// p10 h=0.4 → 600+0.4·300 = 720; p25 h=1 → 900; p50 h=2 → 1200;
	// p75 h=3 → 1500; p90 h=3.6 → 1500+0.6·600 = 1860. No SBI → 0, medians NULL.
	//
	// XB002 SON 00: all three undefined → percentiles NULL; SBI 1/3.
	const thin = "n_valid<45; p10/p90 n<25; month n<10"
	want := []climRow{
		{"XA001", "DJF", 0, 6, 5, 3, 1, 1, [5]float64{30, 75, 150, 225, 270}, 0.4, 3.5, 250, 0.2, thin},
		{"XA001", "DJF", 12, 1, 1, 0, 1, 0, [5]float64{0, 0, 0, 0, 0}, 1, 3, 40, 0, thin},
		{"XA001", "MAM", 0, 1, 0, 0, 0, 0, [5]float64{nan, nan, nan, nan, nan}, nan, nan, nan, nan, thin},
		{"XA001", "JJA", 12, 5, 5, 5, 0, 0, [5]float64{720, 900, 1200, 1500, 1860}, 0, nan, nan, 0, thin},
		{"XB002", "SON", 0, 3, 3, 0, 0, 3, [5]float64{nan, nan, nan, nan, nan}, 1.0 / 3, 1.25, 80, 0, thin},
	}
	if len(tab.Rows) != len(want) {
		t.Fatalf("%d rows, want %d", len(tab.Rows), len(want))
	}
	for i, w := range want {
		checkRow(t, tab, tab.Rows[i], w)
	}
	// Season names: latitude 45° N (the scaffolding) → northern names.
	if g := cell(tab, tab.Rows[3], "season_name"); g != "summer" {
		t.Errorf("JJA at 45° N named %v, want summer", g)
	}
	// Lower thresholds clear the notes: 5 valid ≥ 5 and 4 values ≥ 4.
	ct, err = ClimatologyOf(context.Background(), db, ClimatologyOptions{MinSoundings: 5, MinTail: 4})
	if err != nil {
		t.Fatal(err)
	}
	if g := cell(ct.Cells, ct.Cells.Rows[0], "note"); g != "month n<10" {
		t.Errorf("note with minimums 5 and 4 = %q, want only the month rule", g)
	}
}

// TestClimatologyOptions: month and sun cells, the station and year
// filters, and the southern-hemisphere season names (METHODS §8: lat < 0
// labels DJF summer and JJA winter, the code stays). Invented soundings.
func TestClimatologyOptions(t *testing.T) {
	rows := handRows()
	south := sounding("XS009", "DJF", 2016, 0, "ok", "ok", 500, ptr(false), nan, nan)
	south.LatitudeDeg, south.SunClass = -12.4, "day"
	// A station without position (a TEMP message read without a station
	// list): no hemisphere, so no season name (METHODS §8 names seasons by
	// hemisphere; the code DJF stays).
	nowhere := sounding("XU010", "DJF", 2016, 0, "ok", "ok", 500, ptr(false), nan, nan)
	nowhere.LatitudeDeg, nowhere.LongitudeDeg, nowhere.SunClass = nan, nan, "unknown"
	rows = append(rows, nowhere, south)
	for i := range rows[:len(rows)-2] {
		rows[i].SunClass = "night"
	}
	db := openStore(t, writeStore(t, t.TempDir(), rows))
	ctx := context.Background()

	ct, err := ClimatologyOf(ctx, db, ClimatologyOptions{Stations: []string{"XS009"}})
	if err != nil {
		t.Fatal(err)
	}
	if len(ct.Cells.Rows) != 1 || cell(ct.Cells, ct.Cells.Rows[0], "season") != "DJF" ||
		cell(ct.Cells, ct.Cells.Rows[0], "season_name") != "summer" {
		t.Errorf("southern station: %v %v", ct.Cells.Columns, ct.Cells.Rows)
	}
	ct, err = ClimatologyOf(ctx, db, ClimatologyOptions{Stations: []string{"XU010"}})
	if err != nil {
		t.Fatal(err)
	}
	if len(ct.Cells.Rows) != 1 || cell(ct.Cells, ct.Cells.Rows[0], "season") != "DJF" ||
		cell(ct.Cells, ct.Cells.Rows[0], "season_name") != nil {
		t.Errorf("station without position: season_name %v, want null", cell(ct.Cells, ct.Cells.Rows[0], "season_name"))
	}

	ct, err = ClimatologyOf(ctx, db, ClimatologyOptions{By: ByMonth, Time: BySun, Stations: []string{"XA001", "XB002"}})
	if err != nil {
		t.Fatal(err)
	}
	wantCols := []string{"station_id", "month", "sun_class", "n_soundings"}
	if !slices.Equal(ct.Cells.Columns[:4], wantCols) {
		t.Errorf("month/sun columns start %q, want %q", ct.Cells.Columns[:4], wantCols)
	}
	// XA001: January (DJF rows, 7), April (MAM, 1), July (JJA, 5); XB002
	// October (3); all night.
	var got []string
	for _, r := range ct.Cells.Rows {
		got = append(got, fmt.Sprintf("%v/%v/%v/%v", r[0], r[1], r[2], r[3]))
	}
	if s := strings.Join(got, " "); s != "XA001/1/night/7 XA001/4/night/1 XA001/7/night/5 XB002/10/night/3" {
		t.Errorf("month × sun cells: %s", s)
	}
	if g := cell(ct.Cells, ct.Cells.Rows[0], "note"); g != "n_valid<15; p10/p90 n<25" {
		t.Errorf("monthly note %q (METHODS §8: 15 per month)", g)
	}

	// Years: 2015 only keeps the two XA001 DJF 00 soundings of 2015.
	ct, err = ClimatologyOf(ctx, db, ClimatologyOptions{FirstYear: 2015, LastYear: 2015})
	if err != nil {
		t.Fatal(err)
	}
	if len(ct.Cells.Rows) != 1 || cell(ct.Cells, ct.Cells.Rows[0], "n_soundings") != int64(2) {
		t.Errorf("year filter: %v", ct.Cells.Rows)
	}
	if _, err := ClimatologyOf(ctx, db, ClimatologyOptions{By: "week"}); err == nil {
		t.Error("period week accepted")
	}
}

// TestClimatologyAgainstGo compares the SQL percentiles and frequencies
// with two independent Go type-7 computations (stats.Quantile and gonum
// with the shifted probability) on a larger invented sample.
func TestClimatologyAgainstGo(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	seasons := []string{"DJF", "MAM", "JJA", "SON"}
	heights := make(map[string][]float64)
	sbi := make(map[string][2]int)
	var rows []schema.SoundingRow
	for i := range 400 {
		season := seasons[i%4]
		year := int32(2000 + i%7)
		has := rng.Float64() < 0.4
		c := sbi[season]
		c[1]++
		if has {
			c[0]++
		}
		sbi[season] = c
		switch r := rng.Float64(); {
		case r < 0.1:
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "undefined", nan, ptr(has), 1, 100))
		case r < 0.25:
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "surface", 0, ptr(has), 1, 100))
			heights[season] = append(heights[season], 0)
		default:
			h := math.Round(rng.ExpFloat64()*800*10) / 10
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "ok", h, ptr(has), 1, 100))
			heights[season] = append(heights[season], h)
		}
	}
	db := openStore(t, writeStore(t, t.TempDir(), rows))
	ct, err := ClimatologyOf(context.Background(), db, ClimatologyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ct.Cells.Rows) != 4 {
		t.Fatalf("%d rows, want 4", len(ct.Cells.Rows))
	}
	ps := []float64{0.10, 0.25, 0.50, 0.75, 0.90}
	for i, r := range ct.Cells.Rows {
		season := seasons[i]
		if r[1] != season {
			t.Fatalf("row %d season %v, want %s (order DJF, MAM, JJA, SON)", i, r[1], season)
		}
		for _, p := range ps {
			name := fmt.Sprintf("mixing_height_p%02.0f_m", p*100)
			got, _ := cell(ct.Cells, r, name).(float64)
			a, b := stats.Quantile(heights[season], p, stats.Type7), gonumType7(heights[season], p)
			if math.Abs(got-a) > 1e-9 || math.Abs(got-b) > 1e-9 {
				t.Errorf("%s %s: SQL %v, Go type 7 %v, gonum shifted %v", season, name, got, a, b)
			}
		}
		c := sbi[season]
		if got := cell(ct.Cells, r, "sbi_frequency"); !sameFloat(got, float64(c[0])/float64(c[1])) {
			t.Errorf("%s sbi_frequency %v, want %d/%d", season, got, c[0], c[1])
		}
	}
	// The per-method table (parcel = consensus here) agrees too.
	mix, _ := ct.Table("mixing")
	for _, r := range mix.Rows {
		season := fmt.Sprint(cell(mix, r, "season"))
		if got := cell(mix, r, "p50_m"); !sameFloat(got, stats.Quantile(heights[season], 0.5, stats.Type7)) {
			t.Errorf("%s %v p50 %v", season, cell(mix, r, "method"), got)
		}
	}
	// Every view renders, and "all" carries the per-method columns.
	for _, v := range ClimatologyViews {
		tv, err := ct.Table(v)
		if err != nil || len(tv.Rows) == 0 {
			t.Errorf("view %s: %v, %d rows", v, err, len(tv.Rows))
		}
	}
	all, _ := ct.Table("all")
	if !slices.Contains(all.Columns, "mh_parcel_p90_m") || !slices.Contains(all.Columns, "mh_consensus_n_undefined") {
		t.Errorf("all lacks per-method columns: %q", all.Columns)
	}
}

func BenchmarkClimatology(b *testing.B) {
	var rows []schema.SoundingRow
	seasons := []string{"DJF", "MAM", "JJA", "SON"}
	for i := range 20_000 {
		rows = append(rows, sounding("XD004", seasons[i%4], int32(1990+i%30), int32(12*(i%2)),
			"ok", "ok", float64(i%3000), ptr(i%3 == 0), 2, 200))
	}
	db := openStore(b, writeStore(b, b.TempDir(), rows))
	b.ResetTimer()
	for range b.N {
		if _, err := Climatology(context.Background(), db); err != nil {
			b.Fatal(err)
		}
	}
}

// TestClimatologyForViews checks that computing only the tables of some
// views gives those views exactly as computing every table does (the
// single-statement path reads the store, the several-statement path a
// stored sample), and that a view left out is an error, not an empty table.
func TestClimatologyForViews(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	ctx := context.Background()
	full, err := ClimatologyOf(ctx, db, ClimatologyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, views := range [][]string{{"summary"}, {"mixing"}, {"ventilation"}, {"inversions", "mixing"}} {
		part, err := ClimatologyFor(ctx, db, ClimatologyOptions{}, views...)
		if err != nil {
			t.Fatalf("%v: %v", views, err)
		}
		for _, v := range ClimatologyViews {
			want, _ := full.Table(v)
			got, err := part.Table(v)
			computed := slices.Contains(views, v) || (v != "mixing" && v != "ventilation" && v != "all" && part.Cells != nil)
			if !computed {
				if err == nil {
					t.Errorf("%v: view %s not computed, but Table gave no error", views, v)
				}
				continue
			}
			if err != nil {
				t.Errorf("%v: view %s: %v", views, v, err)
				continue
			}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%v: view %s differs from ClimatologyOf's:\n%v\nwant\n%v", views, v, got.Rows, want.Rows)
			}
		}
	}
	if _, err := ClimatologyFor(ctx, db, ClimatologyOptions{}, "weekly"); err == nil {
		t.Error("unknown view: no error")
	}
}
