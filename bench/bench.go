// Package bench measures the pipeline on this machine: it writes an
// invented archive (or copies of a real archive-v2 file), times the least
// any ingest of it can take (reading, decompressing and splitting lines),
// runs "sondeclim ingest" in processes of their own at several worker
// counts (wall and CPU time, peak memory, time per stage), projects the
// ingest time of a whole archive from its station list, and times the
// store-wide queries. "sondeclim bench" parses its flags and prints Run's
// Result.
package bench

import (
	"archive/zip"
	"bufio"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
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

// Options says what to measure.
type Options struct {
	Dir             string // working directory: the archive and the stores
	Stations, Years int    // size of the invented archive
	Gzip            bool   // write the archive (or the copies) gzipped
	// Zip writes the copies of Real as zip archives of one member each,
	// the form the archive's station files are distributed in (not with
	// Gzip; the invented archive is plain or gzipped only).
	Zip     bool
	Workers []int // worker counts of the ingest runs, at least one
	Profile bool  // each ingest writes a CPU profile beside its store (store-wN.pprof)
	// Real, when set, is an archive-v2 station file (plain, .gz or .zip)
	// copied Copies times, each copy under its own station id, instead of
	// the invented archive.
	Real   string
	Copies int
	// StationList is the archive's station list, whose NOBS column counts
	// each station's soundings, for the whole-archive projection; with
	// Real and no StationList, the one station list beside Real is used.
	StationList string
	// Executable is the sondeclim program the ingest runs start, with Env
	// added to their environment.
	Executable string
	Env        []string
	// Progress receives one line per step (stderr); nil: none.
	Progress io.Writer
}

// Run writes the archive (kept in Dir for the next run when complete),
// measures the read floor, runs one ingest per worker count into a fresh
// store and times the queries over the last store.
func Run(ctx context.Context, opt Options) (*Result, error) {
	progress := func(format string, a ...any) {
		if opt.Progress != nil {
			fmt.Fprintf(opt.Progress, "bench: "+format+"\n", a...)
		}
	}
	if len(opt.Workers) == 0 {
		return nil, fmt.Errorf("no worker counts to measure")
	}
	if opt.Zip && (opt.Gzip || opt.Real == "") {
		return nil, fmt.Errorf("zip copies are made of a real file only, and not gzipped as well")
	}
	res := &Result{Stations: opt.Stations, Years: opt.Years, Gzip: opt.Gzip, Zip: opt.Zip, CPUs: runtime.NumCPU()}
	stationList := opt.StationList
	if opt.Real != "" && stationList == "" {
		if m, _ := filepath.Glob(filepath.Join(filepath.Dir(opt.Real), "*station-list*.txt")); len(m) == 1 {
			stationList = m[0]
		}
	}
	if stationList != "" {
		n, err := ArchiveSoundings(stationList)
		if err != nil {
			return nil, err
		}
		res.StationList, res.ArchiveSoundings = stationList, n
	}

	var archive string
	if opt.Real != "" {
		res.Real, res.Stations, res.Years = opt.Real, opt.Copies, 0
		archive = filepath.Join(opt.Dir, fmt.Sprintf("real-%s-x%d-gz%v", filepath.Base(opt.Real), opt.Copies, opt.Gzip))
		if opt.Zip {
			archive = filepath.Join(opt.Dir, fmt.Sprintf("real-%s-x%d-zip", filepath.Base(opt.Real), opt.Copies))
		}
		progress("writing %d copies of %s in %s", opt.Copies, opt.Real, archive)
		if err := CopyReal(archive, opt.Real, opt.Copies, copyKind(opt), res); err != nil {
			return nil, err
		}
	} else {
		archive = filepath.Join(opt.Dir, fmt.Sprintf("archive-%dx%d-gz%v", opt.Stations, opt.Years, opt.Gzip))
		progress("generating %d stations x %d years in %s", opt.Stations, opt.Years, archive)
		if err := generate(ctx, archive, opt.Stations, opt.Years, opt.Gzip, res); err != nil {
			return nil, err
		}
	}
	// Flush the freshly written archive now, so that the ingest runs below
	// do not pay for writing it back (their commit syncs the disk).
	syscall.Sync()
	progress("measuring the read floor")
	if err := floor(archive, res); err != nil {
		return nil, err
	}
	var lastStore string
	for _, w := range opt.Workers {
		store := filepath.Join(opt.Dir, fmt.Sprintf("store-w%d", w))
		if err := moveAside(opt.Dir, store); err != nil {
			return nil, err
		}
		progress("ingest with %d worker(s)", w)
		prof := ""
		if opt.Profile {
			prof = store + ".pprof"
		}
		run, err := ingestProcess(ctx, opt.Executable, opt.Env, archive, store, w, prof)
		if err != nil {
			return nil, err
		}
		res.addRun(run)
		lastStore = store
	}
	progress("timing queries")
	if err := timeQueries(ctx, lastStore, res); err != nil {
		return nil, err
	}
	return res, nil
}

// addRun completes run's rates from the archive's size and keeps it,
// updating the whole-archive projections when it is the fastest so far.
func (res *Result) addRun(run IngestRun) {
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
}

// form names how the copies are stored, for the report: "gzip true"
// or "gzip false" as for the invented archive, or "zip".
func (r *Result) form() string {
	if r.Zip {
		return "zip"
	}
	return fmt.Sprintf("gzip %v", r.Gzip)
}

// Result is what a benchmark run measured (the JSON of "sondeclim bench
// --json"; field names are part of that output).
type Result struct {
	Stations, Years int    // with Real: Stations is the number of copies, Years 0
	Real            string `json:",omitempty"` // the real file copied, if any
	Gzip            bool
	Zip             bool `json:",omitempty"` // the copies are zip archives of one member
	CPUs            int
	Soundings       int
	InputFileBytes  int64 // on disk
	InputTextBytes  int64 // decompressed
	GenerateS       float64
	FloorS          float64
	Lines           int64
	Levels          int64 // data records (level lines) of the archive
	Ingest          []IngestRun
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
	Queries       []QueryTime
}

// IngestRun is one ingest into a fresh store by a process of its own.
type IngestRun struct {
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

// QueryTime is the time of one store-wide query.
type QueryTime struct {
	Name    string
	Seconds float64
	Rows    int
}

// oldStores is the folder of Dir that stores of earlier runs are moved
// into, to be deleted by RemoveOld after the last run.
const oldStores = ".old-stores"

// moveAside moves the store of an earlier run, if any, into Dir's
// oldStores folder instead of deleting it: on ext4, inodes freed within
// the last half-minute or so slow the creation of new files and folders
// (the inode allocator steps over recently deleted ones), so a store
// deleted just before an ingest makes that ingest pay for the deletion.
// An ingest of a whole archive, or a nightly one into an existing store,
// does not follow such a deletion.
func moveAside(dir, store string) error {
	if _, err := os.Stat(store); errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	old := filepath.Join(dir, oldStores)
	if err := os.MkdirAll(old, 0o755); err != nil {
		return err
	}
	return os.Rename(store, filepath.Join(old, fmt.Sprintf("%s-%d", filepath.Base(store), time.Now().UnixNano())))
}

// RemoveOld deletes the stores moved aside by the runs in dir; call it
// after the last run.
func RemoveOld(dir string) error { return os.RemoveAll(filepath.Join(dir, oldStores)) }

// generate writes the archive (skipped when it is already there, complete).
func generate(ctx context.Context, dir string, stations, years int, gz bool, res *Result) error {
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

// The forms CopyReal writes copies in.
const (
	CopyPlain = iota
	CopyGzip  // gzip, one member (RFC 1952)
	CopyZip   // a zip archive of one deflated member, as the archive's station files are distributed
)

func copyKind(opt Options) int {
	switch {
	case opt.Zip:
		return CopyZip
	case opt.Gzip:
		return CopyGzip
	}
	return CopyPlain
}

// CopyReal writes copies copies of the real archive-v2 file src (plain,
// gzip or zip) into dir, each under its own station id (the last three
// characters of the id replaced by the copy's number), in the form kind
// (CopyPlain, CopyGzip, CopyZip). Nothing is written when dir already
// holds them.
func CopyReal(dir, src string, copies int, kind int, res *Result) error {
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
		if err := writeCopy(name, b.String(), kind); err != nil {
			return err
		}
	}
	res.Soundings = headers * copies
	if err := os.WriteFile(done, []byte(strconv.Itoa(res.Soundings)), 0o644); err != nil {
		return err
	}
	return sizeOf(dir, res)
}

func writeCopy(name, text string, kind int) error {
	member := filepath.Base(name)
	switch kind {
	case CopyGzip:
		name += ".gz"
	case CopyZip:
		name += ".zip"
	}
	f, err := os.Create(name)
	if err != nil {
		return err
	}
	defer f.Close()
	var w io.Writer = f
	var closer io.Closer
	switch kind {
	case CopyGzip:
		zw := gzip.NewWriter(f)
		w, closer = zw, zw
	case CopyZip:
		zw := zip.NewWriter(f)
		if w, err = zw.Create(member); err != nil {
			return err
		}
		closer = zw
	}
	if _, err := io.WriteString(w, text); err != nil {
		return err
	}
	if closer != nil {
		if err := closer.Close(); err != nil {
			return err
		}
	}
	return f.Close()
}

func sizeOf(dir string, res *Result) error {
	files, _ := filepath.Glob(filepath.Join(dir, "*-data.txt*"))
	res.InputFileBytes = 0
	for _, f := range files {
		if fi, err := os.Stat(f); err == nil {
			res.InputFileBytes += fi.Size()
		}
	}
	return nil
}

// ArchiveSoundings sums the sounding counts (NOBS) of a station list in
// the layout of the archive's igra2-list-format.txt.
func ArchiveSoundings(path string) (int64, error) {
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
func floor(dir string, res *Result) error {
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

// ingestProcess runs "sondeclim ingest" (the program exe, with env added
// to the environment) as a child process, so its peak memory can be
// measured on its own. With profile not empty it also writes the
// process's CPU profile there.
func ingestProcess(ctx context.Context, exe string, env []string, archive, store string, workers int, profile string) (IngestRun, error) {
	run := IngestRun{Workers: workers}
	sumFile := store + "-summary.json"
	args := []string{"ingest", "--quiet", "--workers", strconv.Itoa(workers), "--summary-json", sumFile, "--store", store}
	if profile != "" {
		args = append(args, "--cpuprofile", profile)
	}
	run.Profile = profile
	cmd := exec.CommandContext(ctx, exe, append(args, archive)...)
	cmd.Env = append(os.Environ(), env...)
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
func timeQueries(ctx context.Context, store string, res *Result) error {
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
		res.Queries = append(res.Queries, QueryTime{q.name, time.Since(start).Seconds(), len(t.Rows)})
	}
	return nil
}

// WriteText writes the results for people: the archive and machine, the
// read floor, one row per ingest run, the projection and the query times.
func (r *Result) WriteText(w io.Writer) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	if r.Real != "" {
		fmt.Fprintf(tw, "archive\t%d copies of %s, %d soundings, %.0f levels each on average, %.0f MB on disk, %.0f MB of text, %s\n",
			r.Stations, r.Real, r.Soundings, float64(r.Levels)/float64(max(r.Soundings, 1)), float64(r.InputFileBytes)/1e6, float64(r.InputTextBytes)/1e6, r.form())
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
