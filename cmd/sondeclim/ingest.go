package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"runtime"
	"runtime/debug"
	"runtime/pprof"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/formats"
	"github.com/sondeclim/sondeclim/schema/store"
)

func init() {
	register("ingest", "read sounding files into a Parquet store, analysing every sounding", func(e env) command { return &ingestCmd{env: e} })
}

// ingestCmd reads sounding files into a store.
type ingestCmd struct {
	env
}

func (c *ingestCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("ingest", "--store DIR [flags] PATH...", `
Read radiosonde sounding files into a Parquet store. Every sounding is
quality-controlled (each value good, suspect, bad, missing or corrected,
with findings in the table qc_findings) and analysed with the values QC
allows: heights filled hypsometrically, potential temperature, mixing
ratio, inversions with their class, well-mixed layers with mass-weighted
means, mixing height by seven methods and their consensus, transport wind
and ventilation index. Tables (see "sondeclim schema"): soundings, levels,
inversions, mixed_layers, mixing_heights, afternoon_mixing, qc_findings;
partitioned by station and year. A PATH may be a file, a directory
(walked recursively) or a glob; plain, .gz and .zip inputs are read as
streams. The format is detected from the content (--format overrides).

The run's summary goes to stdout; warnings and progress go to stderr.
Input that cannot be read is reported on stderr as file:line: reason, and
the rest of the file and the other files still go through. The exit code is
3 when anything was skipped, that is when data was lost. Reports that carry
no data (NIL parts, parts holding only regional remarks) and reports read
except for named groups are remarks: counted as notes, exit code 0.

Ingestion is incremental and safe to run from a scheduler: inputs with the
same size and modification time as at the last run are not read again; a
changed or grown file rebuilds only the station-years it touches; a
sounding's identity is its station and launch time, so corrections and
overlapping files replace soundings, never double them. Each station-year
is written under a new file name and the store's manifest is committed
last, so a run killed at any moment leaves the store as it was, and
queries running meanwhile see a consistent store. A second ingest into the
same store is refused (or waits, with --wait).

Exit codes: 0 done (notes on input allowed); 1 could not run; 2 usage
error; 3 done, but some input was skipped (data lost).`,
		`  sondeclim ingest --store ./store USM00072403-data.txt.zip
  sondeclim ingest --store ./store --workers 2 archive/
  sondeclim ingest --store ./store --stations igra2-station-list.txt 'data/*-data.txt.gz'
  # nightly, from cron: only new work is done
  sondeclim ingest --quiet --summary-json /var/log/sondeclim/last.json --store /data/store /data/archive/
  # machine 3 of 8 writing its share of one shared store
  sondeclim ingest --shard 3/8 --store /shared/store /shared/archive/`,
		c.stderr)
	storeDir := fs.String("store", "", "store `directory` to write (created if absent)")
	workers := fs.Int("workers", runtime.NumCPU(), "files read, station-years analysed and station-years written at once (results do not depend on it)")
	format := fs.String("format", "", "force the input `format` instead of detecting it ("+strings.Join(formats.Names(), ", ")+")")
	stations := fs.String("stations", "", "station list `file` (archive-v2 layout) for names, positions and elevations; its entries take precedence over the built-in list")
	noBuiltin := fs.Bool("no-builtin-stations", false, "do not complete station metadata from the built-in list (the archive's public station list, 2,879 stations)")
	quiet := fs.Bool("quiet", false, "print only warnings and the summary's last line (for schedulers)")
	full := fs.Bool("full", false, "ignore what was ingested before and rebuild every partition from the inputs given")
	maxInput := byteSizeFlag(fs, "max-input-bytes", engine.DefaultInputBudget, "decompressed-size budget of one compressed input, all its members together, `size` in bytes or with KiB, MiB, GiB, TiB (over it: skipped)")
	maxRun := byteSizeFlag(fs, "max-run-bytes", engine.DefaultRunBudget, "decompressed-size budget of all compressed inputs of the run, `size` in bytes or with KiB, MiB, GiB, TiB (inputs left over are reported and read by the next run)")
	maxPart := byteSizeFlag(fs, "max-partition-bytes", engine.DefaultMaxPartitionBytes, "largest station-year to build, staged `size` in bytes or with KiB, MiB, GiB, TiB, archive-v2 text counted twice (it is built in memory, about 5 times this at the peak; larger ones are reported and left as committed; the station-years built at once hold at most this together)")
	stageMem := byteSizeFlag(fs, "staging-memory-bytes", engine.DefaultStagingMemoryBytes, "decompressed archive-v2 text of gzip and zip inputs held in memory instead of a copy in the staging folder, all inputs together, `size` in bytes or with KiB, MiB, GiB, TiB (past it: on disk; 0: always on disk)")
	prune := fs.Bool("prune-missing", false, "remove the soundings of inputs ingested before that are gone now (without it they stay, with a note)")
	verify := fs.Bool("verify", false, "check the SHA-256 of every store file the run would leave alone (always: presence and size) and rebuild damaged partitions")
	wait := fs.Bool("wait", false, "wait for another ingest into the same store to finish instead of failing")
	shard := fs.String("shard", "", "write only the stations of shard `K/N` (stations are assigned by a hash of their id)")
	dailyMax := fs.String("daily-max", "", "CSV `file` of daily maximum temperatures (station_id,date,tmax_c: tmax_c in °C, date YYYY-MM-DD the station's local solar day, as afternoon_mixing.local_date) for the afternoon (Holzworth) mixing height; without it, the same day's afternoon sounding is used. Station ids as in the soundings: a station the run knows nowhere (no soundings, no station list) is refused")
	ventTable := fs.String("ventilation-table", analyze.GenericVentilationTable().Name, "ventilation category `table`: a built-in name ("+engine.VentilationTableNames()+") or a table file (format in the README, \"Ventilation categories\"); part of the analysis parameters, so a change rebuilds the store")
	useSuspect := fs.Bool("use-suspect", false, "let the analysis use values quality control flags as suspect (bad values are never used)")
	cpuProfile := fs.String("cpuprofile", "", "write a CPU profile to `file` (for performance work: go tool pprof FILE)")
	memProfile := fs.String("memprofile", "", "write a heap profile to `file` at the end of the run, every allocation of the run sampled (for performance work: go tool pprof -sample_index=alloc_space FILE)")
	summaryJSON := fs.String("summary-json", "", "write a machine-readable summary of the run to `file`")
	logFormat := logFlag(fs)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *storeDir == "" {
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
	log, err := newLogger(c.stderr, *logFormat, level)
	if err != nil {
		return fmt.Errorf("ingest: %w", err)
	}
	sh, err := store.ParseShard(*shard)
	if err != nil {
		return fmt.Errorf("ingest: %v: %w", err, errUsage)
	}
	opt := engine.Options{Workers: *workers, Format: *format, Log: log, Shard: sh, Full: *full, Verify: *verify, PruneMissing: *prune, InputBudget: int64(*maxInput), RunBudget: int64(*maxRun), MaxPartitionBytes: int64(*maxPart), StagingMemoryBytes: int64(*stageMem), Wait: *wait, UseSuspect: *useSuspect}
	if *stageMem == 0 {
		opt.StagingMemoryBytes = -1 // the engine's 0 is its default
	}
	if *dailyMax != "" {
		// A maxima file that cannot be used is the caller's input, like a
		// bad --ventilation-table: a usage error naming the file and line.
		if opt.DailyMaxima, err = engine.LoadDailyMaxima(*dailyMax); err != nil {
			return fmt.Errorf("ingest: --daily-max: %v: %w", err, errUsage)
		}
	}
	if *ventTable != analyze.GenericVentilationTable().Name {
		// A table that cannot be read is the caller's wording, like an
		// unknown built-in name: a usage error naming the file and line.
		tab, err := engine.LoadVentilationTable(*ventTable)
		if err != nil {
			return fmt.Errorf("ingest: --ventilation-table: %v: %w", err, errUsage)
		}
		cfg := analyze.DefaultConfig()
		cfg.Ventilation.Table = tab
		opt.Analysis = &cfg
	}
	if !*quiet && isTerminal(c.stderr) {
		opt.Progress = progressBar(c.stderr)
	}
	opt.NoBuiltinStations = *noBuiltin
	if *stations != "" {
		m, err := loadStations(*stations, log)
		if err != nil {
			return err
		}
		opt.Stations = m
	}
	if *cpuProfile != "" {
		f, err := os.Create(*cpuProfile)
		if err != nil {
			return fmt.Errorf("ingest: %w", err)
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return fmt.Errorf("ingest: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	if *memProfile != "" {
		defer writeHeapProfile(*memProfile, log)
	}
	tuneGC()
	sum, err := engine.Run(ctx, *storeDir, fs.Args(), opt)
	if errors.Is(err, engine.ErrDailyMaxima) {
		err = fmt.Errorf("--daily-max: %v: %w", err, errUsage) // a station of the file the run does not know
	}
	if err != nil {
		if *summaryJSON != "" {
			if werr := writeSummaryJSON(*summaryJSON, nil, err); werr != nil {
				return fmt.Errorf("ingest: %w (and the summary could not be written: %v)", err, werr)
			}
		}
		return fmt.Errorf("ingest: %w", err)
	}
	if err := sum.WriteText(c.stdout, *storeDir, *quiet); err != nil {
		return err
	}
	if *summaryJSON != "" {
		if err := writeSummaryJSON(*summaryJSON, sum, nil); err != nil {
			return fmt.Errorf("ingest: %w", err)
		}
	}
	if len(sum.Skipped) > 0 {
		return errSkipped
	}
	return nil
}

// writeSummaryJSON writes the run summary (or the error that stopped the
// run) for schedulers and monitoring.
func writeSummaryJSON(path string, s *engine.Summary, runErr error) error {
	v := struct {
		OK       bool            `json:"ok"`
		ExitCode int             `json:"exit_code"`
		Error    string          `json:"error,omitempty"`
		Summary  *engine.Summary `json:"summary,omitempty"`
	}{OK: runErr == nil, Summary: s}
	switch {
	case errors.Is(runErr, errUsage):
		v.ExitCode, v.Error = exitUsage, runErr.Error()
	case runErr != nil:
		v.ExitCode, v.Error = exitFailure, runErr.Error()
	case len(s.Skipped) > 0:
		v.ExitCode = exitSkipped
	}
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(path, append(b, '\n'), 0o644)
}

// loadStations reads a station list; lines it cannot parse are logged.
func loadStations(path string, log *slog.Logger) (map[string]ingest.Station, error) {
	m, bad, err := formats.LoadStationList(path)
	if err != nil {
		return nil, fmt.Errorf("ingest: %w", err)
	}
	if bad != nil {
		// Good lines are kept; each rejected line is named.
		log.Warn("station list lines skipped", "file", path, "errors", bad.Error())
	}
	log.Info("station list read", "file", path, "stations", len(m))
	return m, nil
}

// ingestMemoryLimit is the Go heap size ingest never lets garbage build
// beyond (unless GOGC or GOMEMLIMIT is set). A run holds at most two
// station-years per worker (one analysed, one written), far below it;
// collecting rarely instead of every time the heap doubles cut ingest time
// by about a quarter in measurements (README, Performance), with peak
// memory still under 1 GB.
const ingestMemoryLimit = 768 << 20

// ingestGCPercent is the heap growth between collections below the limit:
// a collection when the heap has grown by half since the last one. Most
// of an ingest's heap is pointer-free (text, levels, column buffers), so
// a collection costs little, while every byte the heap grows by is fresh
// memory the kernel zeroes and faults in. On 20 gzipped copies of the
// real Sterling file with 2 workers (3 December 2026, 7 alternating runs
// each) going from 200 to 50 took the page faults from about 129,000 to
// 88,000, the peak from 555 to 395 MB and system time from 0.88 to
// 0.72 s, for some 40 ms more collector time (GODEBUG=gctrace=1, assist
// and background workers) and the same user time (2.69 / 2.68 s).
const ingestGCPercent = 50

// writeHeapProfile writes the heap profile of the run so far to path; a
// failure is logged, as the run itself is done.
func writeHeapProfile(path string, log *slog.Logger) {
	runtime.GC() // the profile counts allocations up to the last collection
	f, err := os.Create(path)
	if err == nil {
		err = pprof.Lookup("allocs").WriteTo(f, 0)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}
	if err != nil {
		log.Warn("heap profile not written", "file", path, "error", err.Error())
	}
}

// tuneGC switches the collector to the settings above, unless the user
// chose settings through the environment.
func tuneGC() {
	if os.Getenv("GOGC") != "" || os.Getenv("GOMEMLIMIT") != "" {
		return
	}
	debug.SetMemoryLimit(ingestMemoryLimit)
	debug.SetGCPercent(ingestGCPercent)
}
