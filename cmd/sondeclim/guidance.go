package main

import (
	"context"
	"fmt"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("guidance", "forecasters' tables: afternoon mixing height by morning inversion, Holzworth lookup, ventilation by month and hour",
		func(e env) command { return &guidanceCmd{env: e} })
}

// guidanceCmd prints conditional tables for forecasters.
type guidanceCmd struct {
	env
}

func (c *guidanceCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("guidance", "--store DIR [--station ID]... [--years Y1-Y2] [--sbi-classes K,K,...] [--below M,M,...] [--tmax-step C] [--table T] [--format F] [--out DIR]", `
Conditional tables a forecaster can read rules of thumb from, with the
counts beside every probability:
  afternoon    afternoon mixing height by season and by the strength class
               of the morning surface-based inversion (none, then the
               classes of --sbi-classes), with percentiles and, for each
               height of --below, the days staying below it (n_below_Hm)
               and their share (p_below_Hm). Two sources, one row each:
               holzworth (morning profile lifted from the day's maximum
               temperature) and later_sounding (consensus height of the
               same local day's later sounding, 12-20 h local mean solar
               time: for US 00 UTC launches early evening, so below the
               afternoon maximum).
  holzworth    afternoon mixing height (Holzworth) by bins of the day's
               maximum temperature (--tmax-step °C), per season.
  ventilation  ventilation category counts and frequencies by month and
               nominal hour (UTC).
  persistence  probability that a morning surface-based inversion is still
               present on the same local day's afternoon/evening sounding,
               by season and morning strength class (--sbi-classes), with
               the median afternoon mixing height of those days and how
               many lay inside persistent-inversion episodes.
Read a row such as "winter, >=5 K, later_sounding, n 104,
n_below_600m 58, p_below_600m 0.558" as: on winter mornings with a surface
inversion of at least 5 K, the afternoon mixing height stayed below 600 m
on 58 of 104 days (56 %). Rows with fewer days than --min-days are noted.
Percentiles: Hyndman-Fan type 7; surface counts as 0 m.`,
		`  sondeclim guidance --store ./store
  sondeclim guidance --store ./store --sbi-classes 0,3,6 --below 500,800 --table afternoon
  sondeclim guidance --store ./store --table holzworth --tmax-step 2 --format csv
  sondeclim guidance --store ./store --format markdown --out ./guidance`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	var stations stationList
	fs.Var(&stations, "station", "station `ID` to include (repeat or comma-separate; default all)")
	years := fs.String("years", "", "`range` of season years to include, e.g. 1991-2020")
	sbi := fs.String("sbi-classes", "0,2,5", "ascending SBI strength class `limits` in K")
	below := fs.String("below", "600,1000,1500", "`heights` in m above ground whose probability of not being reached is shown")
	step := fs.Float64("tmax-step", 5, "maximum-temperature bin width in `degC` for the Holzworth lookup")
	minDays := fs.Int("min-days", queries.MinTailSoundings, "days (`N`) below which a row is noted")
	view := fs.String("table", "all", "`table`: all, afternoon, holzworth, ventilation or persistence (csv and json: one table, default afternoon)")
	format := fs.String("format", "text", "output `format`: text, csv, json or markdown")
	out := fs.String("out", "", "write every table to files in `directory` instead of stdout")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("guidance: --store is required: %w", errUsage)
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("guidance: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	first, last, err := parseYears(*years)
	if err != nil {
		return fmt.Errorf("guidance: %w", err)
	}
	classes, err := parseFloats("--sbi-classes", *sbi)
	if err != nil {
		return fmt.Errorf("guidance: %w", err)
	}
	heights, err := parseFloats("--below", *below)
	if err != nil {
		return fmt.Errorf("guidance: %w", err)
	}
	write, ext, err := reportWriter(*format)
	if err != nil {
		return fmt.Errorf("guidance: %w", err)
	}
	people := *format == "text" || *format == "markdown"
	views := []string{*view}
	switch {
	case *view == "all" && people:
		views = queries.GuidanceViews
	case *view == "all":
		views = []string{"afternoon"}
	case !contains(queries.GuidanceViews, *view):
		return fmt.Errorf("guidance: unknown --table %q (all, %s): %w", *view, strings.Join(queries.GuidanceViews, ", "), errUsage)
	}
	opts := queries.GuidanceOptions{Stations: stations, FirstYear: first, LastYear: last,
		SBIClassesK: classes, BelowM: heights, TmaxStepC: *step, MinDays: *minDays}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("guidance: %w", err)
	}
	defer db.Close()
	if *out == "" && len(views) < len(queries.GuidanceViews) {
		opts.Only = views // what is printed; --out writes all four
	}
	g, err := queries.GuidanceOf(ctx, db, opts)
	if err != nil {
		return fmt.Errorf("guidance: %v: %w", err, errUsage)
	}
	matches, err := g.Matches(ctx, db)
	if err != nil {
		return fmt.Errorf("guidance: %v: %w", err, errUsage)
	}
	if !matches {
		return noMatch(ctx, db, "guidance", stations, *years)
	}
	if *out != "" {
		return writeViews(c.stdout, *out, "guidance", ext, queries.GuidanceViews, g.Table, write)
	}
	titles := map[string]string{
		"afternoon":   "Afternoon mixing height by season and morning surface-inversion strength (m above ground)",
		"holzworth":   "Holzworth afternoon mixing height by the day's maximum temperature (m above ground)",
		"ventilation": "Ventilation categories by month and nominal hour (UTC)",
		"persistence": "Morning surface-based inversion still present on the afternoon/evening sounding, by season and morning strength",
	}
	for i, v := range views {
		t, err := g.Table(v)
		if err != nil {
			return fmt.Errorf("guidance: %w", err)
		}
		if people {
			if i > 0 {
				fmt.Fprintln(c.stdout)
			}
			fmt.Fprintf(c.stdout, "%s\n\n", titles[v])
		}
		if err := write(c.stdout, t); err != nil {
			return err
		}
	}
	if people {
		fmt.Fprintf(c.stdout, "\nPercentiles: Hyndman-Fan type 7; surface = 0 m. Notes mark rows with fewer than %d days.\n%s\n",
			g.Options.MinDays, caution)
	}
	return nil
}

// parseFloats reads a comma-separated list of numbers given to flag.
func parseFloats(flag, s string) ([]float64, error) {
	var out []float64
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil {
			return nil, fmt.Errorf("%s %q: want numbers separated by commas: %w", flag, s, errUsage)
		}
		out = append(out, v)
	}
	return out, nil
}
