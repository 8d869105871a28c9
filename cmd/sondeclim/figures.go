package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

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
	fs := newFlags("figures", "--store DIR --out DIR [--station ID] [--method NAME] [--format png|svg|both]", `
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
Only valid soundings count; a month and hour with fewer than 15 values is
not drawn. --method picks the mixing height: consensus (the median of the
methods whose status is ok, the default) or one method of the
mixing_heights table (parcel, heffter, bulk_richardson, liu_liang, ...).
The file names are printed, one per line.`,
		`  sondeclim figures --store ./store --out ./figures
  sondeclim figures --store ./store --out ./figures --station USM00072403 --method bulk_richardson --format svg`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	out := fs.String("out", "", "`directory` for the image files (created if missing)")
	station := fs.String("station", "", "draw only this station `id`")
	method := fs.String("method", figures.Consensus, "mixing-height `method`: consensus or a method of the mixing_heights table")
	format := fs.String("format", "png", "image `format`: png, svg or both")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" || *out == "" {
		return fmt.Errorf("figures: --store and --out are required: %w", errUsage)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("figures: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	formats := map[string][]string{"png": {"png"}, "svg": {"svg"}, "both": {"png", "svg"}}[*format]
	if formats == nil {
		return fmt.Errorf("figures: unknown --format %q (png, svg or both): %w", *format, errUsage)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	defer db.Close()
	stations, err := figures.LoadStations(ctx, db)
	if err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	if *station != "" {
		st, err := figures.FindStation(ctx, db, *station)
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		stations = []figures.Station{st}
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("figures: %w", err)
	}
	for _, st := range stations {
		figs, err := figures.StationFigures(ctx, db, st, *method)
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		cal, err := figures.LoadEpisodeCalendar(ctx, db, st)
		if err != nil {
			return fmt.Errorf("figures: %w", err)
		}
		figs = append(figs, figures.EpisodeCalendarFigure(cal))
		for _, f := range figs {
			for _, ext := range formats {
				path := filepath.Join(*out, f.Name+"."+ext)
				if err := writeFigure(path, f, ext); err != nil {
					return fmt.Errorf("figures: %w", err)
				}
				fmt.Fprintln(c.stdout, path)
			}
		}
	}
	return nil
}
