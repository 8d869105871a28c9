package queries

import (
	"context"
	"fmt"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

// TestGuidanceByHand: four invented winter mornings with surface
// inversions of none, 1, 3 and 6 K and Holzworth afternoon heights of
// 0 m (surface), 500 m, 700 m and undefined; classes 0,2,5 K and the
// heights 600 m. Worked by hand: every class holds one day; the 3 K day
// (700 m) is not below 600 m, the others with a height are; the 6 K day
// has no height (n 0, counted undefined). No afternoon sounding exists,
// so the later_sounding rows count every day as undefined.
func TestGuidanceByHand(t *testing.T) {
	yes, no := ptr(true), ptr(false)
	rows := []schema.SoundingRow{
		sounding("XG001", "DJF", 2016, 12, "ok", "surface", 0, no, nan, nan),
		sounding("XG001", "DJF", 2016, 12, "ok", "surface", 0, yes, 1, 100),
		sounding("XG001", "DJF", 2016, 12, "ok", "surface", 0, yes, 3, 200),
		sounding("XG001", "DJF", 2016, 12, "ok", "surface", 0, yes, 6, 300),
	}
	dir := writeStore(t, t.TempDir(), rows)
	var aft []schema.AfternoonRow
	for i, h := range []struct {
		status string
		m      float64
	}{{"surface", 0}, {"ok", 500}, {"ok", 700}, {"undefined", nan}} {
		// writeStore moves launch i by i seconds.
		launch := rows[i].LaunchTime.Add(time.Duration(i) * time.Second)
		aft = append(aft, schema.AfternoonRow{StationID: "XG001", Year: 2016,
			LocalDate: time.Date(2016, 1, 15+i, 0, 0, 0, 0, time.UTC), MorningLaunch: launch,
			TmaxC: float64(2 * i), TmaxSource: "daily_maxima", HeightAGLM: h.m, Status: h.status})
	}
	if _, err := schema.WriteTable(dir, schema.TableAfternoon, aft); err != nil {
		t.Fatal(err)
	}
	db := openStore(t, dir)
	g, err := GuidanceOf(context.Background(), db, GuidanceOptions{BelowM: []float64{600}})
	if err != nil {
		t.Fatal(err)
	}
	a := g.Afternoon
	want := []struct {
		class, source string
		n, und, below int64
		p             float64
	}{
		{"none", "holzworth", 1, 0, 1, 1},
		{"none", "later_sounding", 0, 1, 0, nan},
		{"0-2 K", "holzworth", 1, 0, 1, 1},
		{"0-2 K", "later_sounding", 0, 1, 0, nan},
		{"2-5 K", "holzworth", 1, 0, 0, 0},
		{"2-5 K", "later_sounding", 0, 1, 0, nan},
		{">=5 K", "holzworth", 0, 1, 0, nan},
		{">=5 K", "later_sounding", 0, 1, 0, nan},
	}
	if len(a.Rows) != len(want) {
		t.Fatalf("%d rows, want %d: %v", len(a.Rows), len(want), a.Rows)
	}
	for i, w := range want {
		r := a.Rows[i]
		if cell(a, r, "sbi_class") != w.class || cell(a, r, "source") != w.source || cell(a, r, "n") != w.n ||
			cell(a, r, "n_undefined") != w.und || cell(a, r, "n_below_600m") != w.below || !sameFloat(cell(a, r, "p_below_600m"), w.p) {
			t.Errorf("row %d = %v, want %+v", i, r, w)
		}
	}
	// Holzworth lookup, 5 °C bins: Tmax 0, 2 and 4 °C fall in [0, 5) with
	// heights 0, 500 and 700 m (median 500); Tmax 6 °C in [5, 10) has no
	// height (undefined).
	h := g.Holzworth
	if len(h.Rows) != 2 || cell(h, h.Rows[0], "tmax_from_c") != 0.0 || cell(h, h.Rows[0], "n") != int64(3) ||
		!sameFloat(cell(h, h.Rows[0], "p50_m"), 500) || cell(h, h.Rows[1], "n_undefined") != int64(1) {
		t.Errorf("holzworth lookup: %q %v", h.Columns, h.Rows)
	}
	if _, err := GuidanceOf(context.Background(), db, GuidanceOptions{SBIClassesK: []float64{5, 2}}); err == nil {
		t.Error("descending SBI classes accepted")
	}
	// Only computes the tables it names: the same rows as above, the
	// others absent (scaffolding: compared with the full computation).
	only, err := GuidanceOf(context.Background(), db, GuidanceOptions{BelowM: []float64{600}, Only: []string{"holzworth"}})
	if err != nil {
		t.Fatal(err)
	}
	if o, err := only.Table("holzworth"); err != nil || fmt.Sprint(o.Rows) != fmt.Sprint(h.Rows) {
		t.Errorf("Only holzworth: %v, %v; want %v", o, err, h.Rows)
	}
	for _, v := range []string{"afternoon", "ventilation", "persistence"} {
		if _, err := only.Table(v); err == nil {
			t.Errorf("Only holzworth: table %s computed", v)
		}
	}
	// Matches: holzworth has rows, so the filter matches; years without
	// soundings match no table, the ones not computed included.
	if ok, err := only.Matches(context.Background(), db); !ok || err != nil {
		t.Errorf("Matches with rows: %v, %v", ok, err)
	}
	later, err := GuidanceOf(context.Background(), db, GuidanceOptions{FirstYear: 2030, LastYear: 2040, Only: []string{"holzworth"}})
	if err != nil {
		t.Fatal(err)
	}
	if ok, err := later.Matches(context.Background(), db); ok || err != nil {
		t.Errorf("Matches for 2030-2040: %v, %v", ok, err)
	}
	if _, err := GuidanceOf(context.Background(), db, GuidanceOptions{Only: []string{"holzwort"}}); err == nil {
		t.Error("unknown table in Only accepted")
	}
}
