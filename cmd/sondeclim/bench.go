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
	"github.com/sondeclim/sondeclim/ingest/archivev2"
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
	res := benchResult{Stations: *stations, Years: *years, Gzip: *gz, CPUs: runtime.NumCPU()}
	if *real != "" && *stationList == "" {
		if m, _ := filepath.Glob(filepath.Join(filepath.Dir(*real), "*station-list*.txt")); len(m) == 1 {
			*stationList = m[0]
		}
	}
	if *stationList != "" {
		n, err := archiveSoundings(*stationList)
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		res.StationList, res.ArchiveSoundings = *stationList, n
	}

	var archive string
	if *real != "" {
		res.Real, res.Stations, res.Years = *real, *copies, 0
		archive = filepath.Join(*dir, fmt.Sprintf("real-%s-x%d-gz%v", filepath.Base(*real), *copies, *gz))
		fmt.Fprintf(c.stderr, "bench: writing %d copies of %s in %s\n", *copies, *real, archive)
		if err := copyReal(archive, *real, *copies, *gz, &res); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
	} else {
		archive = filepath.Join(*dir, fmt.Sprintf("archive-%dx%d-gz%v", *stations, *years, *gz))
		fmt.Fprintf(c.stderr, "bench: generating %d stations x %d years in %s\n", *stations, *years, archive)
		if err := generate(ctx, archive, *stations, *years, *gz, &res); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
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
		run.CPUPerLevelUS = (run.UserS + run.SysS) * 1e6 / float64(res.Levels)
		res.Ingest = append(res.Ingest, run)
		if res.ArchiveSoundings > 0 && (res.ProjectedH == 0 || float64(res.ArchiveSoundings)/run.SoundingsPerS/3600 < res.ProjectedH) {
			res.ProjectedH = float64(res.ArchiveSoundings) / run.SoundingsPerS / 3600
			res.ProjectedWorkers = run.Workers
		}
		if cpu := float64(res.ArchiveSoundings) * (run.UserS + run.SysS) / float64(run.Soundings) / float64(res.CPUs) / 3600; res.ArchiveSoundings > 0 &&
			run.Soundings > 0 && (res.ProjectedCPUH == 0 || cpu < res.ProjectedCPUH) {
			res.ProjectedCPUH = cpu
		}
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
	Stations, Years int    // with Real: Stations is the number of copies, Years 0
	Real            string `json:",omitempty"` // the real file copied, if any
	Gzip            bool
	CPUs            int
	Soundings       int
	InputFileBytes  int64 // on disk
	InputTextBytes  int64 // decompressed
	GenerateS       float64
	FloorS          float64
	Lines           int64
	Levels          int64 // data records (level lines) of the archive
	Ingest          []ingestRun
	// The whole-archive projection: the soundings the station list
	// counts, and the hours their ingest takes at the measured rate of the
	// fastest run (ProjectedWorkers).
	StationList      string  `json:",omitempty"`
	ArchiveSoundings int64   `json:",omitempty"`
	ProjectedH       float64 `json:",omitempty"`
	ProjectedWorkers int     `json:",omitempty"`
	// ProjectedCPUH is the same from CPU time instead of wall time: the
	// archive's soundings at the CPU time per sounding of the run using
	// least of it, spread over every CPU. On a machine shared with other
	// work it is the steadier figure.
	ProjectedCPUH float64 `json:",omitempty"`
	Queries       []queryTime
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
	CPUPerLevelUS float64 // user + system CPU time per level line, µs
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

// copyReal writes copies copies of the real archive-v2 file src (plain,
// gzip or zip) into dir, each under its own station id (the last three
// characters of the id replaced by the copy's number), plain or gzipped.
// Nothing is written when dir already holds them.
func copyReal(dir, src string, copies int, gz bool, res *benchResult) error {
	start := time.Now()
	done := filepath.Join(dir, ".complete")
	defer func() { res.GenerateS = time.Since(start).Seconds() }()
	if b, err := os.ReadFile(done); err == nil {
		res.Soundings, _ = strconv.Atoi(strings.TrimSpace(string(b)))
		return sizeOf(dir, res)
	}
	var text []byte
	err := input.Each(src, 0, func(_ string, r io.Reader) error {
		b, err := io.ReadAll(r)
		text = append(text, b...)
		return err
	})
	if err != nil {
		return err
	}
	headers := 0
	for _, line := range strings.SplitAfter(string(text), "\n") {
		if strings.HasPrefix(line, "#") && len(line) >= 12 {
			headers++
		}
	}
	if headers == 0 {
		return fmt.Errorf("%s: no archive-v2 header records", src)
	}
	if err := os.RemoveAll(dir); err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	lines := strings.SplitAfter(string(text), "\n")
	for k := range copies {
		var b strings.Builder
		b.Grow(len(text))
		id := ""
		for _, line := range lines {
			if strings.HasPrefix(line, "#") && len(line) >= 12 {
				// Header: station id in columns 2-12 (igra2-data-format.txt).
				id = fmt.Sprintf("%s%03d", line[1:9], k)
				line = "#" + id + line[12:]
			}
			b.WriteString(line)
		}
		name := filepath.Join(dir, fmt.Sprintf("%s-data.txt", id))
		if err := writeCopy(name, b.String(), gz); err != nil {
			return err
		}
	}
	res.Soundings = headers * copies
	if err := os.WriteFile(done, []byte(strconv.Itoa(res.Soundings)), 0o644); err != nil {
		return err
	}
	return sizeOf(dir, res)
}

func writeCopy(name, text string, gz bool) error {
	if gz {
		name += ".gz"
	}
	f, err := os.Create(name)
	if err != nil {
		return err
	}
	defer f.Close()
	var w io.Writer = f
	var zw *gzip.Writer
	if gz {
		zw = gzip.NewWriter(f)
		w = zw
	}
	if _, err := io.WriteString(w, text); err != nil {
		return err
	}
	if zw != nil {
		if err := zw.Close(); err != nil {
			return err
		}
	}
	return f.Close()
}

func sizeOf(dir string, res *benchResult) error {
	files, _ := filepath.Glob(filepath.Join(dir, "*-data.txt*"))
	res.InputFileBytes = 0
	for _, f := range files {
		if fi, err := os.Stat(f); err == nil {
			res.InputFileBytes += fi.Size()
		}
	}
	return nil
}

// archiveSoundings sums the sounding counts (NOBS) of a station list in
// the layout of the archive's igra2-list-format.txt.
func archiveSoundings(path string) (int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	list, err := archivev2.ReadStations(f)
	if err != nil {
		return 0, err
	}
	var n int64
	for _, s := range list {
		n += int64(s.NumObs)
	}
	return n, nil
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
		levels := make([]int64, len(files))
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
						if b := sc.Bytes(); len(b) > 0 && b[0] != '#' {
							levels[i]++
						}
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
		res.Lines, res.Levels, res.InputTextBytes = 0, 0, 0
		for i := range files {
			res.Lines += lines[i]
			res.Levels += levels[i]
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
	if r.Real != "" {
		fmt.Fprintf(tw, "archive\t%d copies of %s, %d soundings, %.0f levels each on average, %.0f MB on disk, %.0f MB of text, gzip %v\n",
			r.Stations, r.Real, r.Soundings, float64(r.Levels)/float64(max(r.Soundings, 1)), float64(r.InputFileBytes)/1e6, float64(r.InputTextBytes)/1e6, r.Gzip)
	} else {
		fmt.Fprintf(tw, "archive\t%d stations x %d years, %d soundings, %.0f levels each on average, %.0f MB on disk, %.0f MB of text, gzip %v\n",
			r.Stations, r.Years, r.Soundings, float64(r.Levels)/float64(max(r.Soundings, 1)), float64(r.InputFileBytes)/1e6, float64(r.InputTextBytes)/1e6, r.Gzip)
	}
	fmt.Fprintf(tw, "machine\t%d CPUs\n", r.CPUs)
	fmt.Fprintf(tw, "floor (read, decompress, split lines)\t%.2f s\t%.0f MB/s\t%d lines\n", r.FloorS, float64(r.InputTextBytes)/1e6/r.FloorS, r.Lines)
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "workers\twall s\tsoundings/s\tMB/s\tx floor\tpeak RSS MB\tuser s\tsys s\tCPU us/level\tread_parse s\tqc s\tanalysis s\twrite s")
	for _, i := range r.Ingest {
		st := i.StageSeconds
		fmt.Fprintf(tw, "%d\t%.2f\t%.0f\t%.1f\t%.1f\t%.0f\t%.1f\t%.1f\t%.2f\t%.1f\t%.1f\t%.1f\t%.1f\n", i.Workers, i.WallS, i.SoundingsPerS,
			i.MBPerS, i.FloorRatio, i.PeakRSSMB, i.UserS, i.SysS, i.CPUPerLevelUS, st["read_parse"], st["qc"], st["analysis"], st["write"])
	}
	tw.Flush()
	if r.ArchiveSoundings > 0 {
		fmt.Fprintf(w, "\nwhole archive (%s): %d soundings; at the rate measured with %d worker(s) its ingest takes %.1f h on this machine\n",
			r.StationList, r.ArchiveSoundings, r.ProjectedWorkers, r.ProjectedH)
		fmt.Fprintf(w, "from CPU time (all %d CPUs busy, nothing else running): %.1f h\n", r.CPUs, r.ProjectedCPUH)
	}
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
