package main

import (
	"bufio"
	"compress/gzip"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"text/tabwriter"
	"time"

	"golang.org/x/sync/errgroup"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("bench", "measure ingest and query speed on a generated archive (throughput, floor, memory, stages)",
		func(e env) command { return &benchCmd{env: e} })
}

// benchCmd generates an invented archive and measures the pipeline on it.
type benchCmd struct {
	env
}

func (c *benchCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("bench", "[--dir DIR] [--stations N] [--years N] [--gzip] [--workers 1,2]", `
Measure the pipeline on this machine. The command writes an invented
archive (the demo generator: N stations x N years, two soundings a day,
about 60-90 levels each, archive-v2 format, plain or gzipped), then reports:

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

Run it at two archive sizes to see whether memory grows with the archive.
Timings depend on what else the machine is doing.`,
		`  sondeclim bench                                  # 20 stations x 30 years
  sondeclim bench --stations 4 --years 5           # a quick look
  sondeclim bench --gzip --workers 2 --dir /scratch/bench`, c.stderr)
	dir := fs.String("dir", filepath.Join(os.TempDir(), "sondeclim-bench"), "working `directory` (archive and stores)")
	stations := fs.Int("stations", 20, "invented stations")
	years := fs.Int("years", 30, "years per station")
	gz := fs.Bool("gzip", false, "write the archive gzipped")
	workersList := fs.String("workers", "1,2", "comma-separated worker counts to measure")
	asJSON := fs.Bool("json", false, "print the results as JSON")
	profile := fs.Bool("profile", false, "write a CPU profile of each ingest (store-wN.pprof in --dir)")
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
	res := benchResult{Stations: *stations, Years: *years, Gzip: *gz, CPUs: runtime.NumCPU()}

	archive := filepath.Join(*dir, fmt.Sprintf("archive-%dx%d-gz%v", *stations, *years, *gz))
	fmt.Fprintf(c.stderr, "bench: generating %d stations x %d years in %s\n", *stations, *years, archive)
	if err := generate(ctx, archive, *stations, *years, *gz, &res); err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	// Flush the freshly written archive now, so that the ingest runs below
	// do not pay for writing it back (their commit syncs the disk).
	syscall.Sync()
	fmt.Fprintf(c.stderr, "bench: measuring the read floor\n")
	if err := floor(archive, &res); err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	var lastStore string
	for _, w := range workers {
		store := filepath.Join(*dir, fmt.Sprintf("store-w%d", w))
		if err := os.RemoveAll(store); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		fmt.Fprintf(c.stderr, "bench: ingest with %d worker(s)\n", w)
		prof := ""
		if *profile {
			prof = store + ".pprof"
		}
		run, err := ingestProcess(ctx, archive, store, w, prof)
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		run.SoundingsPerS = float64(run.Soundings) / run.WallS
		run.MBPerS = float64(res.InputTextBytes) / 1e6 / run.WallS
		run.FloorRatio = run.WallS / res.FloorS
		res.Ingest = append(res.Ingest, run)
		lastStore = store
	}
	fmt.Fprintf(c.stderr, "bench: timing queries\n")
	if err := timeQueries(ctx, lastStore, &res); err != nil {
		return fmt.Errorf("bench: %w", err)
	}
	if *asJSON {
		b, _ := json.MarshalIndent(res, "", "  ")
		_, err := fmt.Fprintf(c.stdout, "%s\n", b)
		return err
	}
	res.print(c.stdout)
	return nil
}

type benchResult struct {
	Stations, Years int
	Gzip            bool
	CPUs            int
	Soundings       int
	InputFileBytes  int64 // on disk
	InputTextBytes  int64 // decompressed
	GenerateS       float64
	FloorS          float64
	Lines           int64
	Ingest          []ingestRun
	Queries         []queryTime
}

type ingestRun struct {
	Workers       int
	WallS         float64
	UserS, SysS   float64
	PeakRSSMB     float64
	Profile       string `json:",omitempty"` // CPU profile written, if any
	Soundings     int
	SoundingsPerS float64
	MBPerS        float64
	FloorRatio    float64
	StageSeconds  map[string]float64
}

type queryTime struct {
	Name    string
	Seconds float64
	Rows    int
}

// generate writes the archive (skipped when it is already there, complete).
func generate(ctx context.Context, dir string, stations, years int, gz bool, res *benchResult) error {
	start := time.Now()
	done := filepath.Join(dir, ".complete")
	if b, err := os.ReadFile(done); err == nil {
		res.Soundings, _ = strconv.Atoi(strings.TrimSpace(string(b)))
	} else {
		if err := os.RemoveAll(dir); err != nil {
			return err
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		counts := make([]int, stations)
		g, _ := errgroup.WithContext(ctx)
		g.SetLimit(runtime.NumCPU())
		for i := range stations {
			g.Go(func() error {
				cfg := synth.DefaultConfig()
				cfg.StationIndex, cfg.Years, cfg.StartYear, cfg.Seed = i, years, 1991, uint64(i+1)
				name := filepath.Join(dir, cfg.Station().ID+"-data.txt")
				if gz {
					name += ".gz"
				}
				f, err := os.Create(name)
				if err != nil {
					return err
				}
				defer f.Close()
				bw := bufio.NewWriterSize(f, 1<<20)
				var w io.Writer = bw
				var zw *gzip.Writer
				if gz {
					zw = gzip.NewWriter(bw)
					w = zw
				}
				n, err := synth.Write(w, cfg)
				if err != nil {
					return err
				}
				if zw != nil {
					if err := zw.Close(); err != nil {
						return err
					}
				}
				counts[i] = n
				return bw.Flush()
			})
		}
		if err := g.Wait(); err != nil {
			return err
		}
		for _, n := range counts {
			res.Soundings += n
		}
		if err := os.WriteFile(done, []byte(strconv.Itoa(res.Soundings)), 0o644); err != nil {
			return err
		}
	}
	res.GenerateS = time.Since(start).Seconds()
	files, _ := filepath.Glob(filepath.Join(dir, "*-data.txt*"))
	for _, f := range files {
		if fi, err := os.Stat(f); err == nil {
			res.InputFileBytes += fi.Size()
		}
	}
	return nil
}

// floor reads and decompresses every file and splits it into lines, on as
// many goroutines as there are CPUs; the faster of two passes is kept (the
// first warms the page cache, as the ingest runs after it find it warm).
func floor(dir string, res *benchResult) error {
	files, err := input.Expand([]string{dir})
	if err != nil {
		return err
	}
	best := 0.0
	for pass := 0; pass < 2; pass++ {
		start := time.Now()
		lines := make([]int64, len(files))
		bytes := make([]int64, len(files))
		g := new(errgroup.Group)
		g.SetLimit(runtime.NumCPU())
		for i, f := range files {
			g.Go(func() error {
				return input.Each(f, 0, func(_ string, r io.Reader) error {
					sc := bufio.NewScanner(r)
					sc.Buffer(make([]byte, 1<<16), 1<<20)
					for sc.Scan() {
						lines[i]++
						bytes[i] += int64(len(sc.Bytes())) + 1
					}
					return sc.Err()
				})
			})
		}
		if err := g.Wait(); err != nil {
			return err
		}
		d := time.Since(start).Seconds()
		if pass == 0 || d < best {
			best = d
		}
		res.Lines, res.InputTextBytes = 0, 0
		for i := range files {
			res.Lines += lines[i]
			res.InputTextBytes += bytes[i]
		}
	}
	res.FloorS = best
	return nil
}

// ingestProcess runs "sondeclim ingest" as a child process, so its peak
// memory can be measured on its own.
// With profile not empty it also writes the process's CPU profile there.
func ingestProcess(ctx context.Context, archive, store string, workers int, profile string) (ingestRun, error) {
	run := ingestRun{Workers: workers}
	exe, err := os.Executable()
	if err != nil {
		return run, err
	}
	sumFile := store + "-summary.json"
	args := []string{"ingest", "--quiet", "--workers", strconv.Itoa(workers), "--summary-json", sumFile, "--store", store}
	if profile != "" {
		args = append(args, "--cpuprofile", profile)
	}
	run.Profile = profile
	cmd := exec.CommandContext(ctx, exe, append(args, archive)...)
	cmd.Env = append(os.Environ(), "SONDECLIM_RUN_MAIN=1")
	cmd.Stderr = os.Stderr
	start := time.Now()
	if err := cmd.Run(); err != nil {
		return run, fmt.Errorf("ingest process: %w", err)
	}
	run.WallS = time.Since(start).Seconds()
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		run.PeakRSSMB = float64(ru.Maxrss) / 1024 // Linux reports KiB
		run.UserS = time.Duration(ru.Utime.Nano()).Seconds()
		run.SysS = time.Duration(ru.Stime.Nano()).Seconds()
	}
	b, err := os.ReadFile(sumFile)
	if err != nil {
		return run, err
	}
	var v struct{ Summary engine.Summary }
	if err := json.Unmarshal(b, &v); err != nil {
		return run, err
	}
	run.Soundings = v.Summary.Soundings
	run.StageSeconds = v.Summary.StageSeconds
	return run, nil
}

// timeQueries times each store-wide query.
func timeQueries(ctx context.Context, store string, res *benchResult) error {
	db, err := queries.Open(ctx, store)
	if err != nil {
		return err
	}
	defer db.Close()
	for _, q := range []struct {
		name string
		run  func() (*queries.Table, error)
	}{
		{"seasonal climatology", func() (*queries.Table, error) { return queries.Climatology(ctx, db) }},
		{"monthly climatology by sun class", func() (*queries.Table, error) {
			ct, err := queries.ClimatologyOf(ctx, db, queries.ClimatologyOptions{By: queries.ByMonth, Time: queries.BySun})
			if err != nil {
				return nil, err
			}
			return ct.Cells, nil
		}},
		{"guidance tables", func() (*queries.Table, error) {
			gt, err := queries.GuidanceOf(ctx, db, queries.GuidanceOptions{})
			if err != nil {
				return nil, err
			}
			return gt.Afternoon, nil
		}},
		{"trends", func() (*queries.Table, error) {
			tt, err := queries.Trends(ctx, db, queries.TrendOptions{})
			if err != nil {
				return nil, err
			}
			return tt.Trends, nil
		}},
		{"qc findings by check", func() (*queries.Table, error) { return queries.QCByCheck(ctx, db) }},
		{"qc by month", func() (*queries.Table, error) { return queries.QCMonthly(ctx, db) }},
		{"levels: count and mean theta", func() (*queries.Table, error) {
			return queries.Query(ctx, db, "select count(*), avg(theta_k) from levels")
		}},
	} {
		start := time.Now()
		t, err := q.run()
		if err != nil {
			return fmt.Errorf("%s: %w", q.name, err)
		}
		res.Queries = append(res.Queries, queryTime{q.name, time.Since(start).Seconds(), len(t.Rows)})
	}
	return nil
}

func (r *benchResult) print(w io.Writer) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintf(tw, "archive\t%d stations x %d years, %d soundings, %.0f MB on disk, %.0f MB of text, gzip %v\n",
		r.Stations, r.Years, r.Soundings, float64(r.InputFileBytes)/1e6, float64(r.InputTextBytes)/1e6, r.Gzip)
	fmt.Fprintf(tw, "machine\t%d CPUs\n", r.CPUs)
	fmt.Fprintf(tw, "floor (read, decompress, split lines)\t%.2f s\t%.0f MB/s\t%d lines\n", r.FloorS, float64(r.InputTextBytes)/1e6/r.FloorS, r.Lines)
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "workers\twall s\tsoundings/s\tMB/s\tx floor\tpeak RSS MB\tuser s\tsys s\tread_parse s\tqc s\tanalysis s\twrite s")
	for _, i := range r.Ingest {
		st := i.StageSeconds
		fmt.Fprintf(tw, "%d\t%.2f\t%.0f\t%.1f\t%.1f\t%.0f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\t%.1f\n", i.Workers, i.WallS, i.SoundingsPerS,
			i.MBPerS, i.FloorRatio, i.PeakRSSMB, i.UserS, i.SysS, st["read_parse"], st["qc"], st["analysis"], st["write"])
	}
	tw.Flush()
	for _, i := range r.Ingest {
		if i.Profile != "" {
			fmt.Fprintf(w, "CPU profile, %d worker(s): %s (go tool pprof -top %s)\n", i.Workers, i.Profile, i.Profile)
		}
	}
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "query\tseconds\trows")
	for _, q := range r.Queries {
		fmt.Fprintf(tw, "%s\t%.3f\t%d\n", q.Name, q.Seconds, q.Rows)
	}
	tw.Flush()
}
