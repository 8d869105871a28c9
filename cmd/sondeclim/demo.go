package main

import (
	"context"
	"fmt"
	"log/slog"
	"os"
	"path/filepath"
	"runtime"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("demo", "generate an invented multi-year archive, ingest it and print its seasonal climatology", func(e env) command { return &demoCmd{env: e} })
}

// demoCmd generates an invented archive, ingests it and prints its
// seasonal climatology.
type demoCmd struct {
	env
}

func (c *demoCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("demo", "[--dir DIR] [--years N] [--seed N]", `
Run the whole pipeline on built-in invented data, with no network and no
setup: write a multi-year archive for an invented valley station in the
archive's version-2 station-file format, ingest it into a Parquet store,
and print the seasonal climatology. The data are invented (seeded, so every
run gives the same numbers); the station and its setting do not exist.`,
		`  sondeclim demo
  sondeclim demo --dir /tmp/sondeclim-demo --years 10`,
		c.stderr)
	dir := fs.String("dir", "demo-out", "`directory` for the generated archive (DIR/archive) and store (DIR/store)")
	years := fs.Int("years", 5, "number of years to generate")
	seed := fs.Uint64("seed", 1, "random seed of the invented weather")
	workers := fs.Int("workers", runtime.NumCPU(), "files read, station-years analysed and written at once, as ingest --workers (results do not depend on it)")
	logFormat := logFlag(fs)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *years < 1 || *years > 200 {
		return fmt.Errorf("demo: --years must be 1 to 200: %w", errUsage)
	}
	archive := filepath.Join(*dir, "archive")
	store := filepath.Join(*dir, "store")
	if err := os.MkdirAll(archive, 0o755); err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	// A previous demo's store would mix with this one's partitions.
	if err := os.RemoveAll(store); err != nil {
		return fmt.Errorf("demo: clear old store: %w", err)
	}
	cfg := synth.DefaultConfig()
	cfg.Seed, cfg.Years = *seed, *years
	st := cfg.Station()
	log, err := newLogger(c.stderr, *logFormat, slog.LevelInfo)
	if err != nil {
		return err
	}
	path, n, err := synth.WriteFile(archive, cfg)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	log.Info("invented archive written", "station", st.ID, "name", st.Name, "soundings", n, "file", path)

	// The archive's station files carry position but no name; the name
	// comes from a station list, here the invented station's own, so the
	// store, figures and report name it as the demo's text does.
	stations := map[string]ingest.Station{st.ID: {Name: st.Name, LatitudeDeg: st.LatitudeDeg, LongitudeDeg: st.LongitudeDeg, ElevationM: st.ElevationM}}
	sum, err := engine.Run(ctx, store, []string{path}, engine.Options{Workers: *workers, Log: log, Stations: stations})
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	log.Info("store written", "dir", store, "soundings", sum.Soundings, "skipped", len(sum.Skipped), "elapsed", sum.Elapsed.Round(1e6))

	db, err := queries.Open(ctx, store)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	defer db.Close()
	t, err := queries.Climatology(ctx, db)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	fmt.Fprintf(c.stdout, "Seasonal climatology of the invented station %s (%s), %d-%d\n",
		st.ID, st.Name, cfg.StartYear, cfg.StartYear+cfg.Years-1)
	fmt.Fprintf(c.stdout, `Invented scenario: a valley on a high plain, %.2f N %.2f W, %.0f m. Local solar time is
UTC %+.1f h: the 00 UTC soundings are released near 16:30 local time (late afternoon; near or
after sunset in winter), the 12 UTC ones near 04:30 (before dawn; about sunrise in June-July).

`, st.LatitudeDeg, -st.LongitudeDeg, st.ElevationM, st.LongitudeDeg/15)
	if err := queries.WriteText(c.stdout, t); err != nil {
		return err
	}
	fmt.Fprintf(c.stdout, `
Percentiles: Hyndman-Fan type 7. Heights in m above ground.
Archive: %s
Store:   %s  (try: sondeclim query --store %s "select * from soundings limit 5")
%s
`, path, store, store, caution)
	if len(sum.Skipped) > 0 {
		return errSkipped
	}
	return nil
}
