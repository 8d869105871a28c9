package main

import (
	"context"
	"fmt"
	"sort"
	"strings"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("trends", "Theil-Sen slopes and Mann-Kendall tests of yearly medians per station, season and hour",
		func(e env) command { return &trendsCmd{env: e} })
}

// trendsCmd prints trends of yearly statistics.
type trendsCmd struct {
	env
}

func (c *trendsCmd) Run(ctx context.Context, args []string) error {
	var metrics []string
	for m := range queries.TrendMetrics {
		metrics = append(metrics, m)
	}
	sort.Strings(metrics)
	fs := newFlags("trends", "--store DIR [--metric M] [--station ID]... [--years Y1-Y2] [--min-per-year N | --coverage F] [--yearly] [--format F]", `
Trends per station, season and nominal hour: the Theil-Sen slope per
decade (and in % of the period median) and the two-sided Mann-Kendall
p-value (tie-corrected variance, continuity correction) of the yearly
medians of a metric (the yearly fraction for sbi_frequency). Years are
season years (December counts with the following DJF). A year counts only
if it has enough valid soundings: --min-per-year N, or else --coverage of
the expected soundings (one a day at the hour). The note warns about gaps
in the record and about years in which the station's median number of
levels per sounding jumps by more than 30 %: a sign of an instrument or
reporting change that can pass for a trend. The test assumes independent
years. --yearly prints the yearly values the trends are computed from.
Metrics (--metric):
`+wrapList(metrics, 74, "  "),
		`  sondeclim trends --store ./store
  sondeclim trends --store ./store --metric sbi_frequency --station USM00072403 --years 1991-2020
  sondeclim trends --store ./store --min-per-year 60 --format csv > trends.csv
  sondeclim trends --store ./store --yearly`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	metric := fs.String("metric", "mixing_height", "per-sounding `metric` to follow")
	var stations stationList
	fs.Var(&stations, "station", "station `ID` to include (repeat or comma-separate; default all)")
	years := fs.String("years", "", "`range` of season years to include, e.g. 1991-2020")
	minPer := fs.Int("min-per-year", 0, "valid soundings (`N`) a year needs in a cell (overrides --coverage)")
	coverage := fs.Float64("coverage", queries.DefaultTrendCoverage, "`fraction` of the expected soundings a year needs")
	minYears := fs.Int("min-years", queries.DefaultMinTrendYears, "years (`N`) below which a trend is noted")
	yearly := fs.Bool("yearly", false, "print the yearly values instead of the trends")
	format := fs.String("format", "text", "output `format`: text, csv, json or markdown")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("trends: --store is required: %w", errUsage)
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("trends: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	if _, ok := queries.TrendMetrics[*metric]; !ok {
		return fmt.Errorf("trends: unknown --metric %q (%s): %w", *metric, strings.Join(metrics, ", "), errUsage)
	}
	if !(*coverage > 0 && *coverage <= 1) || *minPer < 0 || *minYears < 0 {
		return fmt.Errorf("trends: --coverage must be in (0, 1], counts not negative: %w", errUsage)
	}
	first, last, err := parseYears(*years)
	if err != nil {
		return fmt.Errorf("trends: %w", err)
	}
	write, _, err := reportWriter(*format)
	if err != nil {
		return fmt.Errorf("trends: %w", err)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("trends: %w", err)
	}
	defer db.Close()
	tt, err := queries.Trends(ctx, db, queries.TrendOptions{Stations: stations, FirstYear: first, LastYear: last,
		Metric: *metric, MinPerYear: *minPer, Coverage: *coverage, MinYears: *minYears})
	if err != nil {
		return fmt.Errorf("trends: %w", err)
	}
	if len(tt.Yearly.Rows) == 0 {
		return noMatch(ctx, db, "trends", stations, *years)
	}
	t := tt.Trends
	if *yearly {
		t = tt.Yearly
	}
	if err := write(c.stdout, t); err != nil {
		return err
	}
	if *format == "text" || *format == "markdown" {
		rule := fmt.Sprintf("%.0f %% of the expected soundings", 100*tt.Options.Coverage)
		if tt.Options.MinPerYear > 0 {
			rule = fmt.Sprintf("%d valid soundings", tt.Options.MinPerYear)
		}
		fmt.Fprintf(c.stdout, "\nYearly value: median (type 7) of %s; a year counts with at least %s.\n"+
			"Slope: Theil-Sen, per decade. p: Mann-Kendall, two-sided, assumes independent years.\n%s\n",
			*metric, rule, caution)
	}
	return nil
}
