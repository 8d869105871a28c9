package queries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"math/rand"
	"testing"
	"time"

	_ "github.com/duckdb/duckdb-go/v2"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/schema"
)

// TestRuleMatchesSQL checks the episode rules' per-day answers against
// DuckDB's SQL (the reference for three-valued NULL logic): random days,
// written as rows of the days table (dayRow, the table's own conversion),
// and random rule conditions, whose canonical text is valid SQL over that
// table. A day the rule finds met must be TRUE in SQL, failed FALSE,
// unknown NULL. It also shows that every column a rule can name is a
// column of the days table with the same value. The one documented
// difference (morning_sbi_strength_k is 0 on a morning without an SBI in
// a rule) is written into the SQL view.
func TestRuleMatchesSQL(t *testing.T) {
	ctx := context.Background()
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	r := rand.New(rand.NewSource(18))
	tri := func() analyze.Tri { return analyze.Tri(r.Intn(3)) }
	num := func(scale float64) float64 {
		if r.Intn(4) == 0 {
			return math.NaN()
		}
		return math.Round(r.Float64()*scale*4) / 4 // quarter steps, so "=" and "!=" meet equal values
	}
	var days []analyze.DayRecord
	for i := 0; i < 400; i++ {
		d := analyze.DayRecord{StationID: "R", Date: time.Date(2020, 1, 1, 0, 0, 0, 0, time.UTC).AddDate(0, 0, i),
			Soundings: r.Intn(4), Morning: r.Intn(2) - 1, Afternoon: r.Intn(2) - 1,
			MorningSBI: tri(), MorningSBIStrengthK: num(8), AfternoonSBI: tri(),
			MorningHeatDeficitJ: num(8) * 1e6, AfternoonHeatDeficitJ: num(8) * 1e6, MaxHeatDeficitJ: num(8) * 1e6,
			StableFraction: num(1), DeepStable: tri(), AfternoonMHM: num(2000), AfternoonWindMS: num(8), VentilationM2S: num(8000)}
		if d.MorningSBI != analyze.Yes {
			d.MorningSBIStrengthK = math.NaN()
		}
		days = append(days, d)
	}
	rows := make([]schema.DayRow, len(days))
	for i, d := range days {
		rows[i] = dayRow(d)
	}
	if err := materialize(ctx, db, t.TempDir(), schema.TableDays, rows); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec(`CREATE VIEW rule_days AS SELECT * REPLACE (
		CASE WHEN morning_sbi = false THEN 0 ELSE morning_sbi_strength_k END AS morning_sbi_strength_k) FROM days`); err != nil {
		t.Fatal(err)
	}
	cols := analyze.RuleColumns()
	var leaf func() string
	var expr func(depth int) string
	used := map[string]bool{}
	leaf = func() string {
		c := cols[r.Intn(len(cols))]
		used[c.Name] = true
		if c.Flag {
			return c.Name
		}
		ops := []string{"<", "<=", ">", ">=", "=", "!="}
		scale := map[string]float64{"afternoon_mixing_height_m": 2000, "afternoon_ventilation_m2s": 8000, "stable_layer_fraction": 1, "soundings": 3}[c.Name]
		if scale == 0 {
			scale = 8
		}
		return fmt.Sprintf("%s %s %g", c.Name, ops[r.Intn(len(ops))], math.Round(r.Float64()*scale*4)/4)
	}
	expr = func(depth int) string {
		if depth > 3 || r.Intn(3) == 0 {
			return leaf()
		}
		switch r.Intn(4) {
		case 0:
			return "not " + expr(depth+1)
		case 1:
			return "(" + expr(depth+1) + " or " + expr(depth+1) + ")"
		case 2:
			return expr(depth+1) + " or " + expr(depth+1)
		}
		return expr(depth+1) + " and " + expr(depth+1)
	}
	seen := map[analyze.Tri]int{}
	for k := 0; k < 300; k++ {
		text := expr(0)
		c, err := analyze.ParseRule("t: " + text)
		if err != nil {
			t.Fatalf("%q: %v", text, err)
		}
		q := `SELECT local_date, CASE WHEN (` + c.Condition.String() + `) IS NULL THEN 0 WHEN (` + c.Condition.String() +
			`) THEN 2 ELSE 1 END FROM rule_days ORDER BY local_date`
		res, err := db.QueryContext(ctx, q)
		if err != nil {
			t.Fatalf("%q as SQL: %v", c.Condition.String(), err)
		}
		i := 0
		for res.Next() {
			var d time.Time
			var v int
			if err := res.Scan(&d, &v); err != nil {
				t.Fatal(err)
			}
			got := c.Evaluate(days[i])
			seen[got]++
			if int(got) != v || !d.UTC().Equal(days[i].Date) {
				t.Fatalf("%q on %s: rule %v, SQL %v", c.Condition.String(), d.Format("2006-01-02"), got, analyze.Tri(v))
			}
			i++
		}
		res.Close()
		if i != len(days) {
			t.Fatalf("%d rows, want %d", i, len(days))
		}
	}
	if seen[analyze.Yes] == 0 || seen[analyze.No] == 0 || seen[analyze.Unknown] == 0 {
		t.Errorf("answers seen %v: want all three", seen)
	}
	// Every rule column was named (so each is a days column: the SQL ran).
	for _, c := range cols {
		if !used[c.Name] {
			t.Errorf("rule column %s never drawn", c.Name)
		}
	}
}

// TestEpisodeClimatologyByHand: a constructed list of days (invented, not
// observations) through the derived tables and the episode climatology,
// with every figure worked out by hand: January has two deep-stable-layer
// episodes, February has no morning sounding, so the rule cannot be judged
// there and its counts are null rather than 0.
func TestEpisodeClimatologyByHand(t *testing.T) {
	ctx := context.Background()
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, m := range macros() { // as Open does
		if _, err := db.Exec(m); err != nil {
			t.Fatalf("%s: %v", m, err)
		}
	}
	Y, N, U := analyze.Yes, analyze.No, analyze.Unknown
	var days []analyze.DayRecord
	add := func(m time.Month, d int, dsl analyze.Tri) {
		nan := math.NaN()
		rec := analyze.DayRecord{StationID: "V", Date: time.Date(2020, m, d, 0, 0, 0, 0, time.UTC), Soundings: 1, Morning: 0, Afternoon: -1,
			MorningSBI: N, MorningSBIStrengthK: nan, MorningHeatDeficitJ: nan, AfternoonHeatDeficitJ: nan, MaxHeatDeficitJ: nan,
			StableFraction: 0.5, DeepStable: dsl, AfternoonMHM: nan, AfternoonWindMS: nan, VentilationM2S: nan}
		if dsl == U {
			rec.Morning, rec.StableFraction, rec.MorningSBI = -1, nan, U
		}
		days = append(days, rec)
	}
	for i, s := range []analyze.Tri{Y, Y, Y, N, Y, Y, U, Y, N, N} { // 1-10 January
		add(time.January, i+1, s)
	}
	for d := 1; d <= 5; d++ { // 1-5 February: no morning sounding
		add(time.February, d, U)
	}
	var dsl analyze.Criterion
	for _, c := range analyze.BuiltinCriteria() {
		if c.Name == analyze.CriterionDeepStable {
			dsl = c
		}
	}
	if _, err := writeDayTables(ctx, db, days, []analyze.Criterion{dsl}, EpisodeCounts{}); err != nil {
		t.Fatal(err)
	}
	var met, failed, unknown int
	if err := db.QueryRow("SELECT days_met, days_failed, days_unknown FROM rule_months WHERE month = 1").Scan(&met, &failed, &unknown); err != nil {
		t.Fatal(err)
	}
	if met != 6 || failed != 3 || unknown != 1 {
		t.Errorf("January: met %d failed %d unknown %d, want 6, 3, 1", met, failed, unknown)
	}
	tab, err := EpisodeClimatology(ctx, db, ClimatologyOptions{By: ByMonth}, []analyze.Criterion{dsl})
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Rows) != 2 {
		t.Fatalf("%d rows, want January and February", len(tab.Rows))
	}
	// January: episodes 1-3 (3 days, open start: the record begins there)
	// and 5-8 (3 met, 7 missing, length 4). Lengths 3 and 4: median 3.5,
	// type-7 p90 3 + 0.9 × 1 = 3.9. Days in episodes 6 of 10: 0.6.
	want := map[string]any{"n_days": 10, "n_days_judged": 9, "n_episodes": 2, "days_in_episodes": 6, "share_of_days": 0.6,
		"length_median_days": 3.5, "length_p90_days": 3.9, "longest_days": 4, "days_missing": 1, "n_open_ended": 1,
		"rule": "deep_stable_layer; min_days=2; max_gap=1"}
	for col, w := range want {
		got := fmt.Sprint(cell(tab, tab.Rows[0], col))
		if got != fmt.Sprint(w) {
			t.Errorf("January %s = %s, want %v", col, got, w)
		}
	}
	for _, col := range []string{"n_episodes", "episodes_per_year", "days_in_episodes", "share_of_days"} {
		if v := cell(tab, tab.Rows[1], col); v != nil {
			t.Errorf("February (rule not judged on any day) %s = %v, want null", col, v)
		}
	}
	if v := fmt.Sprint(cell(tab, tab.Rows[1], "n_days_judged")); v != "0" {
		t.Errorf("February n_days_judged = %s, want 0", v)
	}
}
