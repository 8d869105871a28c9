package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"runtime"
	"runtime/pprof"
	"strings"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
)

func init() {
	register("figures", "draw a store's climatology figures (PNG, SVG) per station", func(e env) command { return &figuresCmd{env: e} })
}

// figuresCmd draws the climatology figures of a store.
type figuresCmd struct {
	env
}

func (c *figuresCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("figures", "--store DIR --out DIR [--station ID] [--method NAME] [--format png|svg|both] [--min-soundings N]", fmt.Sprintf(`
Draw, for every station of a store (or one with --station), four figures:
  ID-mixing-height-monthly-METHOD  mixing height by month and launch hour:
                                   box 25th-75th, whiskers 10th-90th
                                   percentile, line at the median
  ID-sbi-frequency-monthly         share of soundings with a surface-based
                                   inversion by month and launch hour
  ID-sbi-strength-seasonal         histograms of surface-based inversion
                                   strength (K), one per season
  ID-episode-calendar              days inside episodes (persistent
                                   inversion, deep stable layer, heat
                                   deficit, Holzworth pollution potential),
                                   one band per year
Only valid soundings count; a month and hour with fewer than %d values is
not drawn, and a station with fewer than --min-soundings valid soundings
(default %d: not one month and hour could be drawn) is thin: it is named on
stderr and not drawn, unless --min-soundings 0 or --station names it.
--method picks the mixing height: consensus (the median of the methods
whose status is ok, the default) or one method of the mixing_heights table
(parcel, heffter, bulk_richardson, liu_liang, ...); figures name methods in
words. The file names are printed, one per line.`, figures.DefaultMinCount, queries.MinStationSoundings),
		`  sondeclim figures --store ./store --out ./figures
  sondeclim figures --store ./store --out ./figures --min-soundings 0
  sondeclim figures --store ./store --out ./figures --station USM00072403 --method bulk_richardson --format svg`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	out := fs.String("out", "", "`directory` for the image files (created if missing)")
	station := fs.String("station", "", "draw only this station `id` (even when it is thin)")
	method := fs.String("method", figures.Consensus, "mixing-height `method`: consensus or a method of the mixing_heights table")
	format := fs.String("format", "png", "image `format`: png, svg or both")
	minN := fs.Int("min-soundings", queries.MinStationSoundings, "valid soundings a station needs to be drawn (`N`; 0 draws every station)")
	workers := fs.Int("workers", runtime.NumCPU(), "figures rendered at once (the files do not depend on it)")
	cpuProfile := fs.String("cpuprofile", "", "write a CPU profile to `file` (for performance work: go tool pprof FILE)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" || *out == "" {
		return fmt.Errorf("figures: --store and --out are required: %w", errUsage)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("figures: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	if *minN < 0 || *workers < 1 {
		return fmt.Errorf("figures: --min-soundings must not be negative and --workers must be at least 1: %w", errUsage)
	}
	formats := map[string][]string{"png": {"png"}, "svg": {"svg"}, "both": {"png", "svg"}}[*format]
	if formats == nil {
		return fmt.Errorf("figures: unknown --format %q (png, svg or both): %w", *format, errUsage)
	}
	if *cpuProfile != "" {
		f, err := os.Create(*cpuProfile)
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	defer db.Close()
	var stations []figures.Station
	if *station != "" {
		st, err := figures.FindStation(ctx, db, *station)
		if errors.Is(err, figures.ErrNoStation) {
			return noMatch(ctx, db, "figures", []string{*station}, "")
		}
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		stations = []figures.Station{st}
	} else {
		all, err := figures.LoadStations(ctx, db)
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		var thin []figures.Station
		stations, thin = figures.SplitThin(all, *minN)
		if len(thin) > 0 {
			fmt.Fprintf(c.stderr, "figures: %d of %d stations have fewer than %d valid soundings and are not drawn (--min-soundings 0 draws them): %s\n",
				len(thin), len(all), *minN, thinList(thin, 8))
		}
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	// The store's files of other stations need not be read again.
	if err := queries.Restrict(ctx, db, *store, figures.IDs(stations)); err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	data, err := figures.LoadStationData(ctx, db, stations, *method, true)
	if err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	var figs []*figures.Figure
	for _, d := range data {
		figs = append(figs, d.Figures()...)
	}
	paths, err := figures.WriteFiles(ctx, figs, formats, *out, *workers)
	if err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	for _, p := range paths {
		fmt.Fprintln(c.stdout, p)
	}
	return nil
}

// thinList returns up to n station ids with their valid soundings,
// "ID (k), …", and how many more there are.
func thinList(sts []figures.Station, n int) string {
	var parts []string
	for i, st := range sts {
		if i == n {
			parts = append(parts, fmt.Sprintf("and %d more", len(sts)-n))
			break
		}
		parts = append(parts, fmt.Sprintf("%s (%d)", st.ID, st.Valid))
	}
	return strings.Join(parts, ", ")
}
