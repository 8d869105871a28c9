package queries

import (
	"database/sql"
	"testing"

	_ "github.com/duckdb/duckdb-go/v2"

	"github.com/sondeclim/sondeclim/analyze"
)

// TestMethodRank checks that the method_rank macro sorts 'consensus'
// first, then the registered methods in the registry's order, then any
// other name: the order the method registry documents (analyze.Method).
func TestMethodRank(t *testing.T) {
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, m := range macros() {
		if _, err := db.Exec(m); err != nil {
			t.Fatalf("%s: %v", m, err)
		}
	}
	names := append([]string{"consensus"}, analyze.MethodNames()...)
	names = append(names, "zz_unknown", "aa_unknown")
	prev := -1
	for i, name := range names {
		var rank int
		if err := db.QueryRow(`SELECT method_rank(?)`, name).Scan(&rank); err != nil {
			t.Fatal(err)
		}
		switch {
		case i < len(names)-1 && rank <= prev:
			t.Errorf("method_rank(%q) = %d, not after %d", name, rank, prev)
		case i == len(names)-1 && rank != prev:
			t.Errorf("unknown names rank %d and %d, want equal", prev, rank)
		}
		prev = rank
	}
}

// TestSeasonAndSunMacros checks the season and sun-class macros: DJF to
// SON in calendar order, names flipped for lat < 0 (METHODS §8: "for
// southern-hemisphere stations (lat < 0), label DJF summer and JJA winter"),
// and the sun classes from day to night, unknown and anything else after.
func TestSeasonAndSunMacros(t *testing.T) {
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, m := range macros() {
		if _, err := db.Exec(m); err != nil {
			t.Fatalf("%s: %v", m, err)
		}
	}
	var got string
	err = db.QueryRow(`SELECT string_agg(s || ':' || season_name(s, 45.0) || '/' || season_name(s, -33.9), ' ' ORDER BY season_rank(s))
		FROM (VALUES ('JJA'), ('XYZ'), ('SON'), ('DJF'), ('MAM')) t(s) WHERE s <> 'XYZ'`).Scan(&got)
	if want := "DJF:winter/summer MAM:spring/autumn JJA:summer/winter SON:autumn/spring"; err != nil || got != want {
		t.Errorf("seasons %q (%v), want %q", got, err, want)
	}
	var unknown, djf int
	if err := db.QueryRow(`SELECT season_rank('XYZ'), season_rank('DJF')`).Scan(&unknown, &djf); err != nil || unknown <= djf+3 {
		t.Errorf("season_rank: unknown %d, DJF %d (%v)", unknown, djf, err)
	}
	var null sql.NullString
	if err := db.QueryRow(`SELECT season_name(NULL, 10)`).Scan(&null); err != nil || null.Valid {
		t.Errorf("season_name(NULL) = %v (%v)", null, err)
	}
	err = db.QueryRow(`SELECT string_agg(c, ' ' ORDER BY sun_class_rank(c), c)
		FROM (VALUES ('night'), ('zz'), ('unknown'), ('day'), ('civil_twilight'), ('low_sun')) t(c)`).Scan(&got)
	if want := "day low_sun civil_twilight night unknown zz"; err != nil || got != want {
		t.Errorf("sun classes %q (%v), want %q", got, err, want)
	}
}

// TestStatusMacros checks the status macros against the values the store's
// schema documents for those columns (sondeclim schema: analysis_status ok,
// mixing-height status ok, surface or undefined with 0 m for surface,
// episode_days.status met or missing; qc_findings.severity suspect, bad
// or corrected; the routine checks the qc_findings doc and
// queries/qc_by_check.sql name, upstream_removed and cold_humidity). Scaffolding in part: the values are
// the Go constants the macros are built from.
func TestStatusMacros(t *testing.T) {
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, m := range macros() {
		if _, err := db.Exec(m); err != nil {
			t.Fatalf("%s: %v", m, err)
		}
	}
	for _, c := range []struct{ expr, want string }{
		{"analysed('ok')", "true"}, {"analysed('no_levels')", "false"}, {"analysed('qc_rejected:x')", "false"},
		{"qc_ok('ok')", "true"}, {"qc_suspect('suspect')", "true"}, {"qc_ok('insufficient:shallow')", "false"},
		{"mh_ok('ok')", "true"}, {"mh_surface('surface')", "true"}, {"mh_undefined('undefined')", "true"},
		{"mh_defined('ok') AND mh_defined('surface') AND NOT mh_defined('undefined')", "true"},
		{"mixing_height_m('ok', 812.5)", "812.5"}, {"mixing_height_m('surface', 812.5)", "0.0"},
		{"coalesce(mixing_height_m('undefined', 812.5)::VARCHAR, 'null')", "null"},
		{"day_met('met')", "true"}, {"day_met('missing')", "false"},
		{"severity_bad('bad') AND severity_suspect('suspect') AND severity_corrected('corrected')", "true"},
		{"severity_bad('suspect')", "false"},
		{"qc_routine('upstream_removed') AND qc_routine('cold_humidity') AND NOT qc_routine('hydrostatic')", "true"},
	} {
		var got string
		if err := db.QueryRow("SELECT (" + c.expr + ")::VARCHAR").Scan(&got); err != nil {
			t.Fatalf("%s: %v", c.expr, err)
		}
		if got != c.want {
			t.Errorf("%s = %s, want %s", c.expr, got, c.want)
		}
	}
}
