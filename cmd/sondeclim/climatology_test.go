package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/analyze/stats"
	"github.com/sondeclim/sondeclim/queries"
)

// climDemoStore runs the demo (invented, seeded data; two years) and returns
// its store directory.
func climDemoStore(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "2", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	return filepath.Join(dir, "store")
}

// climRowWhere returns the first row of tab whose columns equal the values.
func climRowWhere(t *testing.T, tab *queries.Table, kv ...any) []any {
	t.Helper()
	for _, r := range tab.Rows {
		ok := true
		for i := 0; i < len(kv); i += 2 {
			if r[slices.Index(tab.Columns, kv[i].(string))] != kv[i+1] {
				ok = false
			}
		}
		if ok {
			return r
		}
	}
	t.Fatalf("no row with %v in %q", kv, tab.Columns)
	return nil
}

func climNum(tab *queries.Table, r []any, col string) float64 {
	v, ok := r[slices.Index(tab.Columns, col)].(float64)
	if !ok {
		return math.NaN()
	}
	return v
}

// TestCommandsOnDemo checks climatology, guidance and trends on the demo
// store: golden text output, the demo scenario, and the SQL statistics
// against Go computations on the raw rows.
func TestCommandsOnDemo(t *testing.T) {
	store := climDemoStore(t)
	for _, c := range []struct {
		golden string
		args   []string
	}{
		{"climatology.txt", []string{"climatology", "--store", store}},
		{"climatology-inversions-month.md", []string{"climatology", "--store", store, "--by", "month", "--time", "sun", "--table", "inversions", "--format", "markdown"}},
		{"guidance.txt", []string{"guidance", "--store", store}},
		{"trends.txt", []string{"trends", "--store", store, "--min-per-year", "30"}},
		{"trends-yearly.txt", []string{"trends", "--store", store, "--metric", "sbi_frequency", "--yearly"}},
	} {
		code, out, errs := runCmd(t, c.args...)
		if code != exitOK {
			t.Fatalf("%v: exit %d\n%s", c.args, code, errs)
		}
		golden(t, c.golden, out)
	}
	// CSV carries every column: the wide view with per-method columns.
	code, out, _ := runCmd(t, "climatology", "--store", store, "--format", "csv")
	if code != exitOK || !strings.Contains(strings.SplitN(out, "\n", 2)[0], "mh_liu_liang_p90_m") {
		t.Errorf("csv climatology: exit %d, header %q", code, strings.SplitN(out, "\n", 2)[0])
	}
	// --out writes one file per view.
	outDir := t.TempDir()
	if code, _, errs := runCmd(t, "guidance", "--store", store, "--format", "csv", "--out", outDir); code != exitOK {
		t.Fatalf("guidance --out: exit %d\n%s", code, errs)
	}
	for _, v := range queries.GuidanceViews {
		if b, err := os.ReadFile(filepath.Join(outDir, "guidance-"+v+".csv")); err != nil || len(b) == 0 {
			t.Errorf("guidance-%s.csv: %v", v, err)
		}
	}

	ctx := context.Background()
	db, err := queries.Open(ctx, store)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ct, err := queries.ClimatologyOf(ctx, db, queries.ClimatologyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	cells := ct.Cells

	// The scenario (ingest/synth/doc.go): 00 UTC is late afternoon and
	// 12 UTC just before dawn at the invented station; the afternoon mixed
	// layer grows from 400-850 m in winter to 1600-3000 m in summer, and
	// morning inversions fall from 85 % in mid-winter to 40 % in
	// mid-summer.
	djf00, jja00 := climRowWhere(t, cells, "season", "DJF", "nominal_hour", int64(0)), climRowWhere(t, cells, "season", "JJA", "nominal_hour", int64(0))
	djf12, jja12 := climRowWhere(t, cells, "season", "DJF", "nominal_hour", int64(12)), climRowWhere(t, cells, "season", "JJA", "nominal_hour", int64(12))
	if w, s := climNum(cells, djf00, "mixing_height_p50_m"), climNum(cells, jja00, "mixing_height_p50_m"); !(s > w) {
		t.Errorf("afternoon median mixing height: summer %v m, winter %v m; want summer > winter", s, w)
	}
	if w, s := climNum(cells, djf12, "sbi_frequency"), climNum(cells, jja12, "sbi_frequency"); !(w > s) {
		t.Errorf("morning SBI frequency: winter %v, summer %v; want winter > summer", w, s)
	}
	g, err := queries.GuidanceOf(ctx, db, queries.GuidanceOptions{})
	if err != nil {
		t.Fatal(err)
	}
	hz := g.Holzworth
	var w, s []float64
	for _, r := range hz.Rows {
		switch r[slices.Index(hz.Columns, "season")] {
		case "DJF":
			w = append(w, climNum(hz, r, "p50_m"))
		case "JJA":
			s = append(s, climNum(hz, r, "p50_m"))
		}
	}
	if len(w) == 0 || len(s) == 0 || !(slices.Min(s) > slices.Max(w)) {
		t.Errorf("Holzworth medians by Tmax bin: summer %v, winter %v; want every summer bin above every winter bin", s, w)
	}

	// Independent computation: plain rows, grouped and summarised in Go
	// (stats.Quantile type 7, the definition METHODS §8 fixes).
	type key struct {
		season string
		hour   int64
	}
	heights, sbiN, validN := map[key][]float64{}, map[key]int{}, map[key]int{}
	raw, err := queries.Query(ctx, db, `SELECT season, nominal_hour, analysis_status, mixing_height_consensus_status,
		mixing_height_consensus_m, sbi_present FROM soundings`)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range raw.Rows {
		k := key{r[0].(string), r[1].(int64)}
		if r[2] != "ok" {
			continue
		}
		validN[k]++
		if r[5] == true {
			sbiN[k]++
		}
		switch r[3] {
		case "surface":
			heights[k] = append(heights[k], 0)
		case "ok":
			heights[k] = append(heights[k], r[4].(float64))
		}
	}
	for k, h := range heights {
		r := climRowWhere(t, cells, "season", k.season, "nominal_hour", k.hour)
		for _, p := range []float64{0.1, 0.25, 0.5, 0.75, 0.9} {
			col := fmt.Sprintf("mixing_height_p%02.0f_m", 100*p)
			if got, want := climNum(cells, r, col), stats.Quantile(h, p, stats.Type7); math.Abs(got-want) > 1e-9 {
				t.Errorf("%v %s: SQL %v, Go %v", k, col, got, want)
			}
		}
		if got, want := climNum(cells, r, "sbi_frequency"), float64(sbiN[k])/float64(validN[k]); math.Abs(got-want) > 1e-12 {
			t.Errorf("%v sbi_frequency: SQL %v, Go %v", k, got, want)
		}
	}

	// Guidance probabilities against the raw afternoon_mixing rows: winter
	// mornings with an SBI of at least 5 K, Holzworth heights below 600 m.
	raw, err = queries.Query(ctx, db, `SELECT a.status, a.height_agl_m FROM afternoon_mixing a
		JOIN soundings s ON s.station_id = a.station_id AND s.launch_time = a.morning_launch_time
		WHERE s.analysis_status = 'ok' AND s.season = 'DJF' AND s.sbi_present AND s.sbi_strength_k >= 5`)
	if err != nil {
		t.Fatal(err)
	}
	var n, below int
	var hs []float64
	for _, r := range raw.Rows {
		h := math.NaN()
		switch r[0] {
		case "surface":
			h = 0
		case "ok":
			h = r[1].(float64)
		}
		if !math.IsNaN(h) {
			n++
			hs = append(hs, h)
			if h < 600 {
				below++
			}
		}
	}
	af := g.Afternoon
	r := climRowWhere(t, af, "season", "DJF", "sbi_class", ">=5 K", "source", "holzworth")
	if got := r[slices.Index(af.Columns, "n")]; got != int64(n) || n == 0 {
		t.Errorf("winter >=5 K Holzworth days: SQL %v, Go %d", got, n)
	}
	if got := r[slices.Index(af.Columns, "n_below_600m")]; got != int64(below) {
		t.Errorf("winter >=5 K below 600 m: SQL %v, Go %d", got, below)
	}
	if got, want := climNum(af, r, "p_below_600m"), float64(below)/float64(n); math.Abs(got-want) > 1e-12 {
		t.Errorf("winter >=5 K p_below_600m: SQL %v, Go %v", got, want)
	}
	if got, want := climNum(af, r, "p50_m"), stats.Quantile(hs, 0.5, stats.Type7); math.Abs(got-want) > 1e-9 {
		t.Errorf("winter >=5 K median: SQL %v, Go %v", got, want)
	}
}

// TestSterlingMonthlyMedians compares Sterling 2016 (real soundings,
// ../shared/validation, PROVENANCE.md) with published climatologies
// (METHODS.md §4.3 and §4.7):
//   - US Cfa/Dfa afternoon (00 UTC) boundary-layer depth, 1991-2015
//     medians about 750 m in winter and 1000 m in summer [C: Advances in
//     Meteorology 2017, article 6841239, abstract];
//   - Seidel et al. 2012 (bulk Richardson, US and Europe): daytime heights
//     typically < 1 km, night < 0.5 km, daytime larger in summer than
//     winter [C: abstract].
//
// One year at one station is not a 25-year class median, so the check is
// a band: every monthly 00 UTC median of the consensus and of the bulk
// Richardson height lies within a factor of 2.5 of the published value of
// its season (winter 300-1875 m, summer 400-2500 m); every 12 UTC (about
// 07 local, pre-dawn to early morning) bulk Richardson median is below
// 500 m; and the summer 00 UTC medians exceed the winter ones. Measured
// when written: 00 UTC consensus Jan 540, Feb 484, Jun 1342, Jul 1429,
// Aug 1147 m; bulk Richardson Jan 329, Feb 436, Jun 852, Jul 1058,
// Aug 783 m; 12 UTC bulk Richardson 38-308 m. The summer consensus sits
// above the published 1000 m (it is the median of several methods, most
// of them deeper than the bulk Richardson height); the bulk Richardson
// summer medians (783-1058 m) match it.
func TestSterlingMonthlyMedians(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, "--workers", "2",
		filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip"))
	if code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	ctx := context.Background()
	db, err := queries.Open(ctx, store)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ct, err := queries.ClimatologyOf(ctx, db, queries.ClimatologyOptions{By: queries.ByMonth})
	if err != nil {
		t.Fatal(err)
	}
	m := ct.Methods
	median := func(month, hour int64, method string) float64 {
		return climNum(m, climRowWhere(t, m, "month", month, "nominal_hour", hour, "method", method), "p50_m")
	}
	winter, summer := []int64{1, 2}, []int64{6, 7, 8} // the file has no December 2016
	for _, method := range []string{"consensus", "bulk_richardson"} {
		var w, s []float64
		for _, mo := range winter {
			h := median(mo, 0, method)
			w = append(w, h)
			if !(h >= 750/2.5 && h <= 750*2.5) {
				t.Errorf("%s month %d 00 UTC median %.0f m outside 300-1875 m (published winter ~750 m)", method, mo, h)
			}
		}
		for _, mo := range summer {
			h := median(mo, 0, method)
			s = append(s, h)
			if !(h >= 1000/2.5 && h <= 1000*2.5) {
				t.Errorf("%s month %d 00 UTC median %.0f m outside 400-2500 m (published summer ~1000 m)", method, mo, h)
			}
		}
		if !(slices.Min(s) > slices.Max(w)) {
			t.Errorf("%s: summer 00 UTC medians %v not above winter %v (Seidel 2012: daytime larger in summer)", method, s, w)
		}
	}
	for mo := int64(1); mo <= 11; mo++ {
		if h := median(mo, 12, "bulk_richardson"); !(h < 500) {
			t.Errorf("month %d 12 UTC bulk Richardson median %.0f m, want < 500 m (Seidel 2012: night < 0.5 km)", mo, h)
		}
	}
}

// Special launch hours: the Sterling file holds 662 soundings, 321 at 00
// UTC, 321 at 12 UTC and 20 at other hours (PROVENANCE.md). Pooled (the
// default), the seasonal table has rows for 00 and 12 UTC and an "other"
// row (null hour) per season, and the 20 special soundings are all in
// pooled or "other" cells; with --all-hours each hour has its own row.
func TestSterlingSpecialHours(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, "--workers", "2",
		filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip"))
	if code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	ctx := context.Background()
	db, err := queries.Open(ctx, store)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	count := func(all bool) (total, special int64, hours map[any]bool) {
		ct, err := queries.ClimatologyOf(ctx, db, queries.ClimatologyOptions{AllHours: all})
		if err != nil {
			t.Fatal(err)
		}
		tab, _ := ct.Table("summary")
		ih, in, inote := slices.Index(tab.Columns, "nominal_hour"), slices.Index(tab.Columns, "n_soundings"), slices.Index(tab.Columns, "note")
		hours = map[any]bool{}
		for _, r := range tab.Rows {
			n := r[in].(int64)
			total += n
			hours[r[ih]] = true
			h, _ := r[ih].(int64)
			if r[ih] == nil || (h != 0 && h != 12) {
				special += n
			}
			if note, _ := r[inote].(string); r[ih] == nil && !strings.Contains(note, "other hours: ") {
				t.Errorf("other row without its note: %v", r)
			}
		}
		return total, special, hours
	}
	total, special, hours := count(false)
	if total != 662 || len(hours) != 3 || !hours[int64(0)] || !hours[int64(12)] || !hours[nil] {
		t.Errorf("pooled: %d soundings (want 662) in hours %v (want 0, 12 and other)", total, hours)
	}
	if special > 20 {
		t.Errorf("pooled: %d soundings in the other rows, but only 20 are special", special)
	}
	total, special, hours = count(true)
	if total != 662 || special != 20 || len(hours) <= 3 || hours[nil] {
		t.Errorf("--all-hours: %d soundings, %d at special hours (want 662, 20), hours %v", total, special, hours)
	}
}

func TestClimatologyUsage(t *testing.T) {
	for _, args := range [][]string{
		{"climatology", "--store", "x", "--by", "week"},
		{"climatology", "--store", "x", "--years", "2020-1991"},
		{"climatology", "--store", "x", "--table", "nope"},
		{"climatology", "--store", "x", "--format", "xml"},
		{"guidance", "--store", "x", "--below", "600,abc"},
		{"guidance"},
		{"trends", "--store", "x", "--metric", "nope"},
		{"trends", "--store", "x", "--coverage", "1.5"},
	} {
		if code, _, errs := runCmd(t, args...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, exitUsage, errs)
		}
	}
	// Station lists: repeated and comma-separated.
	var s stationList
	s.Set("A1, B2")
	s.Set("C3")
	if got := strings.Join(s, "|"); got != "A1|B2|C3" {
		t.Errorf("station list %q", got)
	}
}

// TestClimatologyVentilationKtFt: the ventilation view gives the index in
// kt·ft beside m²/s, and its median is the median of the soundings' own
// kt·ft values (real Wien soundings, ../shared/validation, PROVENANCE.md;
// conversion checked against NIST SP 811 in analyze), and an ingest with
// --ventilation-table of a file records that table's name and categories.
func TestClimatologyVentilationKtFt(t *testing.T) {
	v := sharedDir(t)
	dir := t.TempDir()
	table := filepath.Join(dir, "smoke.txt")
	if err := os.WriteFile(table, []byte("# invented\nname: county_smoke\nunit: kt*ft\nsource: invented\n0 poor\n33500 marginal\n60000 good\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	store := filepath.Join(dir, "store")
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, "--ventilation-table", table,
		filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz")); code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	code, out, errs := runCmd(t, "climatology", "--store", store, "--table", "ventilation", "--format", "csv")
	if code != exitOK {
		t.Fatalf("climatology: exit %d\n%s", code, errs)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(rows) < 2 {
		t.Fatalf("csv: %v\n%s", err, out)
	}
	col := func(name string) int { return slices.Index(rows[0], name) }
	if col("ventilation_index_p50_ktft") < 0 || col("ventilation_table") < 0 {
		t.Fatalf("columns %v", rows[0])
	}
	checked := 0
	for _, r := range rows[1:] {
		if r[col("season")] != "JJA" || r[col("nominal_hour")] != "12" {
			continue
		}
		checked++
		code, q, errs := runCmd(t, "query", "--store", store, "--format", "csv",
			"select round(median(ventilation_index_ktft)) from soundings where season = 'JJA' and nominal_hour = 12 and analysis_status = 'ok'")
		if code != exitOK {
			t.Fatalf("query: exit %d\n%s", code, errs)
		}
		want := strings.TrimSpace(strings.Split(q, "\n")[1])
		if got := r[col("ventilation_index_p50_ktft")]; strings.TrimSuffix(want, ".0") != got {
			t.Errorf("JJA 12 UTC median %s kt·ft, soundings' own median %s", got, want)
		}
		if r[col("ventilation_table")] != "county_smoke" {
			t.Errorf("table %q", r[col("ventilation_table")])
		}
	}
	if checked != 1 {
		t.Errorf("%d JJA 12 UTC rows checked, want 1", checked)
	}
	if !strings.Contains(out, "marginal") {
		t.Errorf("no category of the table's own in\n%s", out)
	}
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", filepath.Join(dir, "s2"), "--ventilation-table", "no_such_table",
		filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz")); code != exitUsage || !strings.Contains(errs, "generic, nc_vis") {
		t.Errorf("unknown table: exit %d, %s", code, errs)
	}
}
