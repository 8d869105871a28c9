package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/bench"
)

func init() {
	register("bench", "measure ingest and query speed on a generated archive (throughput, floor, memory, stages)",
		func(e env) command { return &benchCmd{env: e} })
}

// benchCmd generates an invented archive and measures the pipeline on it
// (package bench).
type benchCmd struct {
	env
}

func (c *benchCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("bench", "[--dir DIR] [--stations N] [--years N | --real FILE [--copies N]] [--gzip] [--workers 1,2] [--station-list FILE]", `
Measure the pipeline on this machine. The command writes an invented
archive (the demo generator: N stations x N years, two soundings a day,
about 60-90 levels each, archive-v2 format, plain or gzipped), or, with
--real, N copies of a real archive-v2 station file (plain, .gz or .zip; each
copy under its own station id, so every copy is a station-year of its own,
with the real file's level counts), then reports:

  floor      the time to read and decompress the files and split them into
             lines, nothing else: the least any ingest of them can take;
  ingest     for each worker count, a fresh store built by a separate
             "sondeclim ingest" process: wall time, soundings/s, MB/s of
             input text, the ratio to the floor, peak memory (RSS) of the
             process and the time spent per stage (read/parse, QC,
             analysis, Parquet writing; summed over workers);
  queries    the time of each climatology query over the whole store.

With --profile each ingest also writes a CPU profile next to its store
(store-wN.pprof); "go tool pprof -top FILE" lists where the time went,
function by function (Parquet encoding and compression, analysis, quality
control, parsing, the runtime).

  projection with --station-list (the archive's station list, whose NOBS
             column counts each station's soundings; found beside the
             --real file when not given): the time to ingest the whole
             archive at the measured soundings/s of the fastest run. It
             assumes the archive's soundings cost what the measured ones
             do (real ones: about 200 levels each for the Sterling file).

Run it at two archive sizes to see whether memory grows with the archive.
Timings depend on what else the machine is doing.`,
		`  sondeclim bench                                  # 20 stations x 30 years
  sondeclim bench --stations 4 --years 5           # a quick look
  sondeclim bench --gzip --workers 2 --dir /scratch/bench
  sondeclim bench --real ../shared/validation/archive-v2/USM00072403-data-beg2016.txt.zip --gzip --workers 2`, c.stderr)
	dir := fs.String("dir", filepath.Join(os.TempDir(), "sondeclim-bench"), "working `directory` (archive and stores)")
	stations := fs.Int("stations", 20, "invented stations")
	years := fs.Int("years", 30, "years per station")
	gz := fs.Bool("gzip", false, "write the archive gzipped")
	workersList := fs.String("workers", "1,2", "comma-separated worker counts to measure")
	asJSON := fs.Bool("json", false, "print the results as JSON")
	profile := fs.Bool("profile", false, "write a CPU profile of each ingest (store-wN.pprof in --dir)")
	real := fs.String("real", "", "archive-v2 station `file` to copy instead of generating an archive")
	copies := fs.Int("copies", 20, "copies of the --real file (1..999)")
	stationList := fs.String("station-list", "", "the archive's station list `file`, for the whole-archive projection")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	var workers []int
	for _, w := range strings.Split(*workersList, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(w))
		if err != nil || n < 1 {
			return fmt.Errorf("bench: --workers %q: %w", *workersList, errUsage)
		}
		workers = append(workers, n)
	}
	if *stations < 1 || *years < 1 {
		return fmt.Errorf("bench: --stations and --years must be at least 1: %w", errUsage)
	}
	if *real != "" && (*copies < 1 || *copies > 999) {
		return fmt.Errorf("bench: --copies must lie in 1..999: %w", errUsage)
	}
	exe, err := os.Executable()
	if err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	res, err := bench.Run(ctx, bench.Options{Dir: *dir, Stations: *stations, Years: *years, Gzip: *gz, Workers: workers,
		Profile: *profile, Real: *real, Copies: *copies, StationList: *stationList,
		Executable: exe, Env: []string{"SONDECLIM_RUN_MAIN=1"}, Progress: c.stderr})
	if err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	if *asJSON {
		b, _ := json.MarshalIndent(res, "", "  ")
		_, err := fmt.Fprintf(c.stdout, "%s\n", b)
		return err
	}
	res.WriteText(c.stdout)
	return nil
}
