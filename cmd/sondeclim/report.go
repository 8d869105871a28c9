package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"runtime/pprof"
	"time"

	"github.com/sondeclim/sondeclim/queries/figures"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/internal/buildinfo"
	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/report"
	"github.com/sondeclim/sondeclim/schema/store"
)

func init() {
	register("report", "write an HTML report of a store or station", func(e env) command { return &reportCmd{env: e} })
}

// reportCmd writes the HTML report of a store.
type reportCmd struct {
	env
}

func (c *reportCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("report", "--store DIR --out FILE.html [--station ID] [--method NAME] [--min-soundings N] [--embed]", fmt.Sprintf(`
Write an HTML report that opens offline in any browser (no scripts, fonts
or images from elsewhere). It starts with the program version, the store,
the date, the stations (name, position, elevation, period of record) and
the data coverage per station and year; then, for each station with at
least --min-soundings valid soundings (default %d, the smallest sample of
one cell of the seasonal table), the seasonal climatology (mixing-height
percentiles, surface-based inversions, ventilation), the figures of
"sondeclim figures", the episodes, the forecasters' guidance, the trends
and the quality-control findings. Stations with fewer valid soundings are
listed with their counts only. Method notes with references and the
caution about use close it.

The figures are written as PNG files into a folder beside the page
(FILE-figures/); hand on the page and the folder together. --embed puts
them inside the page instead, for one file (the figures a third larger).
Up to %d stations get four figures each (about 25 KB apiece); a report of
more gets one per station, the monthly mixing height (about 14 KB), and
its details folded, so that 100 stations come to about 3 MB; "sondeclim
figures --station ID" draws the others. --station limits the report to
one station; --method picks the mixing height of the monthly figure
(consensus by default).`, report.DefaultMinSoundings, report.FullFigureStations),
		`  sondeclim report --store ./store --out report.html
  sondeclim report --store ./store --out sterling.html --station USM00072403 --embed`,
		c.stderr)
	dir := fs.String("store", "", "store `directory` written by sondeclim ingest")
	out := fs.String("out", "", "HTML `file` to write")
	station := fs.String("station", "", "report only this station `id`")
	method := fs.String("method", "", "mixing-height `method` of the monthly figure (default consensus)")
	minN := fs.Int("min-soundings", report.DefaultMinSoundings, "valid soundings (`N`) a station needs for its section")
	embed := fs.Bool("embed", false, "embed the figures in the page instead of writing them beside it")
	cpuProfile := fs.String("cpuprofile", "", "write a CPU profile to `file` (for performance work: go tool pprof FILE)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *dir == "" || *out == "" {
		return fmt.Errorf("report: --store and --out are required: %w", errUsage)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("report: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	if *minN < 1 {
		return fmt.Errorf("report: --min-soundings must be at least 1, got %d: %w", *minN, errUsage)
	}
	if *cpuProfile != "" {
		f, err := os.Create(*cpuProfile)
		if err != nil {
			return fmt.Errorf("report: %w", err)
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return fmt.Errorf("report: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	db, err := queries.Open(ctx, *dir)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	defer db.Close()
	r, err := report.Build(ctx, db, report.Options{Station: *station, Method: *method, MinSoundings: *minN, Embed: *embed,
		Generated: time.Now(), Version: buildinfo.Version(), StorePath: *dir,
		SchemaVersion: store.Version, DerivationVersion: engine.DerivationVersion})
	if errors.Is(err, figures.ErrNoStation) {
		return noMatch(ctx, db, "report", []string{*station}, "")
	}
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	size, err := r.Save(*out)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	fmt.Fprintf(c.stdout, "%s (%d stations with a section, %d listed only, %d figures, %.1f MB)\n",
		*out, len(r.Sections), len(r.Listed), r.Figures(), float64(size)/1e6)
	return nil
}
