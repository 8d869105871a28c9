package main

import (
	"context"
	"fmt"
	"log/slog"
	"os"
	"runtime"
	"sort"
	"strings"
	"text/tabwriter"

	"github.com/sondeclim/sondeclim/cmd/sondeclim/internal/pipeline"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
)

// ingestCmd reads sounding files into a store.
type ingestCmd struct {
	env
}

func (c *ingestCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("ingest", "--store DIR [flags] PATH...", `
Read radiosonde sounding files into a Parquet store. Every sounding is
analysed (heights filled hypsometrically, potential temperature, mixing
ratio, surface-based inversion, well-mixed layer, parcel mixing height) and
written to the store's tables "soundings" and "levels", partitioned by
station and year. A PATH may be a file, a directory (walked recursively) or
a glob; plain, .gz and .zip inputs are read as streams. The format is
detected from the content (--format overrides).

Input that cannot be read is reported on stderr as file:line: reason, and
the rest of the file and the other files still go through. The exit code is
3 when anything was skipped.

Partitions written replace earlier ones of the same station and year.`,
		`  sondeclim ingest --store ./store USM00072403-data.txt.zip
  sondeclim ingest --store ./store --workers 2 archive/
  sondeclim ingest --store ./store --stations igra2-station-list.txt 'data/*-data.txt.gz'`,
		c.stderr)
	store := fs.String("store", "", "store `directory` to write (created if absent)")
	workers := fs.Int("workers", runtime.NumCPU(), "soundings analysed at once (results do not depend on it)")
	format := fs.String("format", "", "force the input `format` instead of detecting it ("+strings.Join(pipeline.FormatNames(), ", ")+")")
	stations := fs.String("stations", "", "station list `file` (archive-v2 layout) for names, positions and elevations")
	quiet := fs.Bool("quiet", false, "print only warnings and the summary's last line (for schedulers)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("ingest: --store is required: %w", errUsage)
	}
	if fs.NArg() == 0 {
		return fmt.Errorf("ingest: give at least one PATH to read: %w", errUsage)
	}
	if *workers < 1 {
		return fmt.Errorf("ingest: --workers must be at least 1: %w", errUsage)
	}
	level := slog.LevelInfo
	if *quiet {
		level = slog.LevelWarn
	}
	log := slog.New(slog.NewTextHandler(c.stderr, &slog.HandlerOptions{Level: level}))
	opt := pipeline.Options{Workers: *workers, Format: *format, Log: log}
	if *stations != "" {
		m, err := loadStations(*stations, log)
		if err != nil {
			return err
		}
		opt.Stations = m
	}
	sum, err := pipeline.Run(ctx, *store, fs.Args(), opt)
	if err != nil {
		return fmt.Errorf("ingest: %w", err)
	}
	printSummary(c, sum, *store, *quiet)
	if len(sum.Skipped) > 0 {
		return errSkipped
	}
	return nil
}

// printSummary writes the run's summary to stderr (data goes to the store).
func printSummary(c *ingestCmd, s *pipeline.Summary, store string, quiet bool) {
	skipped := len(s.Skipped)
	if !quiet {
		tw := tabwriter.NewWriter(c.stderr, 0, 4, 2, ' ', 0)
		fmt.Fprintf(tw, "input files\t%d\n", len(s.Inputs))
		fmt.Fprintf(tw, "files and archive members read\t%d\n", s.Members)
		fmt.Fprintf(tw, "soundings written\t%d\n", s.Soundings)
		fmt.Fprintf(tw, "levels written\t%d\n", s.Rows["levels"])
		for _, k := range sortedKeys(s.NotAnalysable) {
			fmt.Fprintf(tw, "  not analysable: %s\t%d\n", k, s.NotAnalysable[k])
		}
		fmt.Fprintf(tw, "input items skipped\t%d\n", skipped)
		by := s.SkippedByReason()
		for _, k := range sortedKeys(by) {
			fmt.Fprintf(tw, "  skipped: %s\t%d\n", k, by[k])
		}
		fmt.Fprintf(tw, "store\t%s\n", store)
		fmt.Fprintf(tw, "elapsed\t%.1f s\n", s.Elapsed.Seconds())
		tw.Flush()
	}
	fmt.Fprintf(c.stderr, "ingest: %d soundings written, %d input items skipped\n", s.Soundings, skipped)
}

func sortedKeys(m map[string]int) []string {
	var k []string
	for n := range m {
		k = append(k, n)
	}
	sort.Strings(k)
	return k
}

// loadStations reads a station list; lines it cannot parse are logged.
func loadStations(path string, log *slog.Logger) (map[string]pipeline.StationInfo, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("ingest: station list: %w", err)
	}
	defer f.Close()
	list, err := archivev2.ReadStations(f)
	if err != nil {
		if len(list) == 0 {
			return nil, fmt.Errorf("ingest: station list %s: %w", path, err)
		}
		// Good lines are kept; each rejected line is named.
		log.Warn("station list lines skipped", "file", path, "errors", err.Error())
	}
	m := make(map[string]pipeline.StationInfo, len(list))
	for id, s := range list {
		m[id] = pipeline.StationInfo{Name: s.Name, LatitudeDeg: s.LatitudeDeg, LongitudeDeg: s.LongitudeDeg, ElevationM: s.ElevationM}
	}
	log.Info("station list read", "file", path, "stations", len(m))
	return m, nil
}
