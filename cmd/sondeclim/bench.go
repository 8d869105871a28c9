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
	fs := newFlags("bench", "[--dir DIR] [--stations N] [--years N | --real FILE[,FILE...] [--copies N[,N...]]] [--gzip | --zip] [--workers 1,2] [--station-list FILE]", `
Measure the pipeline on this machine. The command writes an invented
archive (the demo generator: N stations x N years, two soundings a day,
about 60-90 levels each, archive-v2 format, plain or gzipped), or, with
--real, N copies of a real archive-v2 station file (plain, .gz or .zip; each
copy under its own station id, so every copy is a station-year of its own,
with the real file's level counts; written plain, gzipped with --gzip, or
with --zip as zip archives of one member, the form in which the archive
distributes its station files), then reports:

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

  by level count  with two or more --real files of different mean level
             counts (comma-separated, each measured as above; --copies
             takes one count for all or one per file): the wall time a
             sounding as a straight line in its level count, fitted to the
             fastest run of each file, the whole archive's time at
             --archive-levels levels a sounding (default 28.6: 800 million
             levels in 28 million soundings, the version 1 archive's Data
             Coverage page of NOAA's National Climatic Data Center), and
             the mean level count under which it stays within one hour.
             Thin soundings lie outside the measured range: the line is
             then an extrapolation.

Run it at two archive sizes to see whether memory grows with the archive.
Timings depend on what else the machine is doing. The stores of earlier
runs are moved aside and deleted after the last run: on ext4, files and
folders created shortly after many were deleted take longer, which an
ingest of a whole archive or a nightly ingest does not meet. Give a
worker count more than once (--workers 2,2,2) to take the fastest of
several runs.`,
		`  sondeclim bench                                  # 20 stations x 30 years
  sondeclim bench --stations 4 --years 5           # a quick look
  sondeclim bench --gzip --workers 2 --dir /scratch/bench
  sondeclim bench --real ../shared/validation/archive-v2/USM00072403-data-beg2016.txt.zip --gzip --workers 2
  sondeclim bench --real ../shared/validation/archive-v2/USM00072403-data-beg2016.txt.zip --zip --workers 2,2,2
  sondeclim bench --real ../shared/validation/archive-v2/USM00072403-data-beg2016.txt.zip,../shared/validation/archive-v2/AUM00011035-data.txt.gz --copies 20,40 --gzip --workers 2`, c.stderr)
	dir := fs.String("dir", filepath.Join(os.TempDir(), "sondeclim-bench"), "working `directory` (archive and stores)")
	stations := fs.Int("stations", 20, "invented stations")
	years := fs.Int("years", 30, "years per station")
	gz := fs.Bool("gzip", false, "write the archive gzipped")
	zipped := fs.Bool("zip", false, "write the copies of --real as zip archives of one member each, the form the archive's station files are distributed in")
	workersList := fs.String("workers", "1,2", "comma-separated worker counts to measure")
	asJSON := fs.Bool("json", false, "print the results as JSON")
	profile := fs.Bool("profile", false, "write a CPU profile of each ingest (store-wN.pprof in --dir)")
	real := fs.String("real", "", "archive-v2 station `file`s to copy instead of generating an archive (comma-separated)")
	copiesList := fs.String("copies", "20", "copies of each --real file (1..999; comma-separated, one per file)")
	archiveLevels := fs.Float64("archive-levels", bench.ArchiveLevelsV1, "mean `levels` a sounding of the archive, for the projection by level count")
	stationList := fs.String("station-list", "", "the archive's station list `file`, for the whole-archive projection")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	workers, ok := counts(*workersList, 1<<20)
	if !ok {
		return fmt.Errorf("bench: --workers %q: %w", *workersList, errUsage)
	}
	if *stations < 1 || *years < 1 {
		return fmt.Errorf("bench: --stations and --years must be at least 1: %w", errUsage)
	}
	reals := []string{*real}
	if *real != "" {
		reals = strings.Split(*real, ",")
		for i := range reals {
			if reals[i] = strings.TrimSpace(reals[i]); reals[i] == "" {
				return fmt.Errorf("bench: --real %q: an empty file name: %w", *real, errUsage)
			}
		}
	}
	copies, ok := counts(*copiesList, 999)
	if !ok {
		return fmt.Errorf("bench: --copies %q: each must lie in 1..999: %w", *copiesList, errUsage)
	}
	if len(copies) != 1 && len(copies) != len(reals) {
		return fmt.Errorf("bench: --copies %q: give one count or one per --real file (%d): %w", *copiesList, len(reals), errUsage)
	}
	if *zipped && (*gz || *real == "") {
		return fmt.Errorf("bench: --zip is for the copies of --real, and excludes --gzip: %w", errUsage)
	}
	if !(*archiveLevels > 0) {
		return fmt.Errorf("bench: --archive-levels must be above 0: %w", errUsage)
	}
	exe, err := os.Executable()
	if err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	// Stores of earlier runs are deleted after the last run, not before
	// each (bench.RemoveOld).
	defer func() {
		if err := bench.RemoveOld(*dir); err != nil {
			fmt.Fprintf(c.stderr, "bench: %v\n", err)
		}
	}()
	out, err := bench.RunFiles(ctx, bench.Options{Dir: *dir, Stations: *stations, Years: *years, Gzip: *gz, Zip: *zipped, Workers: workers,
		Profile: *profile, StationList: *stationList,
		Executable: exe, Env: []string{"SONDECLIM_RUN_MAIN=1"}, Progress: c.stderr}, reals, copies, *archiveLevels)
	if err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	if *asJSON {
		var v any = out
		if len(out.Results) == 1 {
			v = out.Results[0] // one file or the invented archive: as before
		}
		b, _ := json.MarshalIndent(v, "", "  ")
		_, err := fmt.Fprintf(c.stdout, "%s\n", b)
		return err
	}
	out.WriteText(c.stdout)
	return nil
}

// counts parses a comma-separated list of counts in 1..max; false when one
// is not.
func counts(list string, max int) ([]int, bool) {
	var out []int
	for _, f := range strings.Split(list, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 || n > max {
			return nil, false
		}
		out = append(out, n)
	}
	return out, true
}
