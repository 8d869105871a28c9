package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("query", "run SQL over a store's tables", func(e env) command { return &queryCmd{env: e} })
}

// queryCmd runs SQL over a store.
type queryCmd struct {
	env
}

func (c *queryCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("query", "--store DIR [--format text|csv|json] \"SQL\"", `
Run one SQL statement (DuckDB dialect) over a store. Each table of the store
is visible as a view of the same name: soundings (one row per sounding) and
levels (one row per level), and so on (sondeclim schema lists them). The
tables days, episodes, episode_days and rule_months are computed over
each station's whole record when the SQL names them. Use "-" as the SQL
to read it from stdin.

The SQL is yours and runs with your own file access: like any DuckDB
session it can read and write files you can (COPY ... TO, read_csv), so run
only SQL you trust. It stays offline: extensions are neither installed nor
loaded automatically, INSTALL cannot download, and the settings that
allow it are locked.

Numbers are written at the precision of the data, chosen by the unit at
the end of the column name (heights in m to 1 m, K and °C to 0.1, g/kg
to 0.01, frequencies to 0.01; sondeclim schema lists all); --exact
writes them in full.

`+ruleHelp,
		`  sondeclim query --store ./store "select count(*) from soundings"
  sondeclim query --store ./store "select criterion, count(*), max(length_days) from episodes group by 1"
  sondeclim query --store ./store --format csv \
    "select station_id, launch_time, sbi_strength_k from soundings where sbi_present order by 3 desc limit 10"
  sondeclim query --store ./store --rule 'lid_500: afternoon_mixing_height_m <= 500; min_days=3' \
    "select first_day, length_days, rule from episodes where criterion = 'lid_500'"`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	format := fs.String("format", "text", "output `format`: text, csv or json")
	rules := ruleFlag(fs)
	exactOut := fs.Bool("exact", false, "write numbers in full float64 precision instead of at the precision of the column's unit (see sondeclim schema)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("query: --store is required: %w", errUsage)
	}
	if fs.NArg() != 1 {
		return fmt.Errorf("query: give exactly one SQL statement (quote it): %w", errUsage)
	}
	sql := fs.Arg(0)
	if sql == "-" {
		b, err := io.ReadAll(c.stdin)
		if err != nil {
			return fmt.Errorf("query: read stdin: %w", err)
		}
		sql = string(b)
	}
	write, err := tableWriter(*format)
	if err != nil {
		return fmt.Errorf("query: %w", err)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("query: %w", err)
	}
	defer db.Close()
	if len(*rules) > 0 && !queries.MentionsEpisodeTables(sql) {
		return fmt.Errorf("query: --rule makes episodes; name the episodes, episode_days or rule_months table in the SQL: %w", errUsage)
	}
	if queries.MentionsEpisodeTables(sql) {
		if _, err := queries.AttachEpisodes(ctx, db, rules.episodeOptions()); err != nil {
			return fmt.Errorf("query: %w", err)
		}
	}
	t, err := queries.Query(ctx, db, strings.TrimSpace(sql))
	if err != nil {
		return fmt.Errorf("query: %w", err)
	}
	t.Exact = *exactOut
	return write(c.stdout, t)
}

// tableWriter returns the writer for an output format name.
func tableWriter(format string) (func(io.Writer, *queries.Table) error, error) {
	switch format {
	case "text":
		return queries.WriteText, nil
	case "csv":
		return queries.WriteCSV, nil
	case "json":
		return queries.WriteJSON, nil
	}
	return nil, fmt.Errorf("unknown --format %q (text, csv or json): %w", format, errUsage)
}
