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
