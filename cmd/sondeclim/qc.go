package main

import (
	"context"
	"fmt"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("qc", "summarise the quality control of a store: findings by check and month, excluded soundings, worst soundings",
		func(e env) command { return &qcCmd{env: e} })
}

// qcCmd prints the quality-control summary of a store.
type qcCmd struct {
	env
}

// qcTables are the summaries qcCmd can print, in print order.
var qcTables = []struct {
	name, title string
}{
	{"checks", "Findings by check"},
	{"months", "Soundings and findings by month (excluded = insufficient or rejected)"},
	{"worst", "Worst soundings and their findings"},
}

func (c *qcCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("qc", "--store DIR [--table all|checks|months|worst] [--worst N] [--format text|csv|json]", `
Summarise the quality control of a store's soundings:
  checks  per station, check and severity: findings, soundings affected and
          their share of the station's soundings;
  months  per station and month: soundings by status (ok, suspect,
          insufficient, rejected), the fraction excluded from statistics,
          and findings by severity;
  worst   the soundings with the most bad, then suspect findings, with every
          finding (level, variable, value, message).
Values the archive itself removed (upstream_removed) and humidity at very
cold temperatures (cold_humidity) are routine: listed under checks, not
counted elsewhere. Text prints all three; csv and json print one (--table).`,
		`  sondeclim qc --store ./store
  sondeclim qc --store ./store --table worst --worst 20
  sondeclim qc --store ./store --table months --format csv > qc-months.csv`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	format := fs.String("format", "text", "output `format`: text, csv or json")
	table := fs.String("table", "all", "summary to print, by `name`: all (text only), checks, months or worst")
	worst := fs.Int("worst", 10, "number of soundings `N` listed by the worst summary")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("qc: --store is required: %w", errUsage)
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("qc: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	if *worst < 1 {
		return fmt.Errorf("qc: --worst must be at least 1: %w", errUsage)
	}
	write, err := tableWriter(*format)
	if err != nil {
		return fmt.Errorf("qc: %w", err)
	}
	var names []string
	switch *table {
	case "all":
		if *format != "text" {
			return fmt.Errorf("qc: --format %s prints one summary: choose --table checks, months or worst: %w", *format, errUsage)
		}
		for _, t := range qcTables {
			names = append(names, t.name)
		}
	case "checks", "months", "worst":
		names = []string{*table}
	default:
		return fmt.Errorf("qc: unknown --table %q (all, checks, months or worst): %w", *table, errUsage)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("qc: %w", err)
	}
	defer db.Close()
	for i, name := range names {
		var t *queries.Table
		switch name {
		case "checks":
			t, err = queries.QCByCheck(ctx, db)
		case "months":
			t, err = queries.QCMonthly(ctx, db)
		case "worst":
			t, err = queries.QCWorst(ctx, db, *worst)
		}
		if err != nil {
			return fmt.Errorf("qc: %w", err)
		}
		if *format == "text" {
			if i > 0 {
				fmt.Fprintln(c.stdout)
			}
			fmt.Fprintf(c.stdout, "%s\n\n", qcTitle(name))
		}
		if err := write(c.stdout, t); err != nil {
			return err
		}
	}
	return nil
}

// qcTitle returns the heading of summary name.
func qcTitle(name string) string {
	for _, t := range qcTables {
		if t.name == name {
			return t.title
		}
	}
	return name
}
