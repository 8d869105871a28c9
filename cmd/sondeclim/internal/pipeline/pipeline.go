// Package pipeline runs one ingestion: it expands the input paths, streams
// every file (and every member of a compressed archive) through the reader
// for its format, analyses each sounding on a bounded pool of workers, and
// writes the store's tables.
//
// Results do not depend on the number of workers or on the order of the
// inputs: rows are sorted by station, launch time and source position
// before they are written.
package pipeline

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"runtime"
	"sort"
	"sync"
	"time"

	"golang.org/x/sync/errgroup"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/ingest/sounding"
	"github.com/sondeclim/sondeclim/schema"
)

// Options configures a run. The zero value is usable: it means one worker
// per CPU, the default analysis configuration and no logging.
type Options struct {
	// Workers bounds the number of soundings analysed at once (and of files
	// read at once). 0 means runtime.NumCPU().
	Workers int
	// Analysis is the analysis configuration; a zero value means
	// analyze.DefaultConfig().
	Analysis *analyze.Config
	// Format forces a reader ("archive-v2", …) instead of detecting the
	// format from the content. Empty means detect.
	Format string
	// SizeLimit bounds the decompressed size of one input or member, bytes;
	// 0 means the input package's default.
	SizeLimit int64
	// Stations supplies station metadata (name, position, elevation) by
	// station id, for formats that do not carry it. May be nil.
	Stations map[string]StationInfo
	// Log receives progress (Info) and skipped input (Warn). Nil discards.
	Log *slog.Logger
	// ProgressEvery is the interval between progress messages; 0 means 5 s.
	ProgressEvery time.Duration
}

// StationInfo is station metadata from a station list.
type StationInfo struct {
	Name                      string
	LatitudeDeg, LongitudeDeg float64
	ElevationM                float64 // m above mean sea level, NaN if unknown
}

// Skip is one item of input that was not ingested, with its position.
type Skip struct {
	Where  string // file[!member][:line]
	Reason string // short snake_case reason, used for counting
	Detail string // the full message
}

// Summary reports what a run did.
type Summary struct {
	Inputs        []string       // files after expansion, sorted
	Members       int            // files and archive members read
	Soundings     int            // soundings decoded and written
	NotAnalysable map[string]int // soundings written but not analysable, by reason
	Skipped       []Skip         // input that could not be read, in a deterministic order
	Notes         []Skip         // input read but worth a remark (e.g. a flight that ends early)
	Rows          map[string]int // rows written per table
	Files         []string       // Parquet files written
	Elapsed       time.Duration
}

// SkippedByReason counts Skipped by reason.
func (s *Summary) SkippedByReason() map[string]int {
	m := map[string]int{}
	for _, k := range s.Skipped {
		m[k.Reason]++
	}
	return m
}

type result struct {
	seq      int // global order key for ties: file index, then position
	sounding schema.SoundingRow
	levels   []schema.LevelRow
	status   string
}

// Run ingests paths into the store at storeDir and returns a summary. It
// returns an error only when the run could not be carried out (bad paths,
// an unwritable store); unreadable input is reported in Summary.Skipped.
func Run(ctx context.Context, storeDir string, paths []string, opt Options) (*Summary, error) {
	start := time.Now()
	files, err := input.Expand(paths)
	if err != nil {
		return nil, err
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	cfg := analyze.DefaultConfig()
	if opt.Analysis != nil {
		cfg = *opt.Analysis
	}
	log := opt.Log
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	every := opt.ProgressEvery
	if every <= 0 {
		every = 5 * time.Second
	}

	sum := &Summary{Inputs: files, NotAnalysable: map[string]int{}, Rows: map[string]int{}}
	type job struct {
		s   *sounding.Sounding
		seq int
	}
	jobs := make(chan job, 4*workers)
	results := make(chan result, 4*workers)

	var mu sync.Mutex // guards sum.Skipped and sum.Members
	skip := func(s Skip) {
		mu.Lock()
		sum.Skipped = append(sum.Skipped, s)
		mu.Unlock()
		log.Warn("skipped input", "where", s.Where, "reason", s.Reason, "detail", s.Detail)
	}
	note := func(s Skip) {
		mu.Lock()
		sum.Notes = append(sum.Notes, s)
		mu.Unlock()
		log.Info("note on input", "where", s.Where, "reason", s.Reason, "detail", s.Detail)
	}

	// Station lists given among the inputs supply metadata, not soundings.
	files, opt.Stations = takeStationLists(files, opt.SizeLimit, opt.Stations, skip)
	if n := len(sum.Inputs) - len(files); n > 0 {
		log.Info("station lists read", "files", n, "stations", len(opt.Stations))
	}

	g, gctx := errgroup.WithContext(ctx)
	// Readers: one goroutine per file at a time, at most `workers` files at
	// once. Each sounding gets a sequence key from its file's index and its
	// position in the file, so ties sort the same however files interleave.
	readers, rctx := errgroup.WithContext(gctx)
	readers.SetLimit(workers)
	g.Go(func() error {
		defer close(jobs)
		for fi, path := range files {
			readers.Go(func() error {
				pos := 0
				err := input.Each(path, opt.SizeLimit, func(member string, r io.Reader) error {
					mu.Lock()
					sum.Members++
					mu.Unlock()
					return readMember(rctx, path, member, r, opt, note, func(s *sounding.Sounding) error {
						pos++
						select {
						case jobs <- job{s, fi<<32 | pos}:
							return nil
						case <-rctx.Done():
							return rctx.Err()
						}
					}, skip)
				})
				if err != nil {
					if rctx.Err() != nil {
						return rctx.Err()
					}
					skip(Skip{Where: path, Reason: reasonOf(err), Detail: err.Error()})
				}
				return nil
			})
		}
		return readers.Wait()
	})

	// Analysis workers.
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		g.Go(func() error {
			defer wg.Done()
			for j := range jobs {
				res := analyzeOne(j.s, cfg, opt.Stations)
				res.seq = j.seq
				select {
				case results <- res:
				case <-gctx.Done():
					return gctx.Err()
				}
			}
			return nil
		})
	}
	go func() { wg.Wait(); close(results) }()

	// Collector.
	var all []result
	tick := time.NewTicker(every)
	defer tick.Stop()
collect:
	for {
		select {
		case r, ok := <-results:
			if !ok {
				break collect
			}
			all = append(all, r)
		case <-tick.C:
			mu.Lock()
			log.Info("progress", "soundings", len(all), "members_read", sum.Members, "skipped", len(sum.Skipped))
			mu.Unlock()
		}
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}

	sortResults(all)
	sortSkips(sum.Skipped)
	sortSkips(sum.Notes)
	srows := make([]schema.SoundingRow, len(all))
	var lrows []schema.LevelRow
	for i, r := range all {
		srows[i] = r.sounding
		lrows = append(lrows, r.levels...)
		if r.status != analyze.StatusOK {
			sum.NotAnalysable[r.status]++
		}
	}
	sum.Soundings = len(all)
	log.Info("writing store", "dir", storeDir, "soundings", len(srows), "levels", len(lrows))
	f1, err := schema.WriteTable(storeDir, "soundings", srows)
	if err != nil {
		return nil, fmt.Errorf("write soundings: %w", err)
	}
	f2, err := schema.WriteTable(storeDir, "levels", lrows)
	if err != nil {
		return nil, fmt.Errorf("write levels: %w", err)
	}
	sum.Files = append(f1, f2...)
	sum.Rows["soundings"], sum.Rows["levels"] = len(srows), len(lrows)
	sum.Elapsed = time.Since(start)
	return sum, nil
}

// sortResults orders rows by station, launch time, then input position, so
// that the tables do not depend on worker count or input order.
func sortResults(all []result) {
	sort.SliceStable(all, func(i, j int) bool {
		a, b := &all[i].sounding, &all[j].sounding
		if a.StationID != b.StationID {
			return a.StationID < b.StationID
		}
		if !a.LaunchTime.Equal(b.LaunchTime) {
			return a.LaunchTime.Before(b.LaunchTime)
		}
		if a.SourceFile != b.SourceFile {
			return a.SourceFile < b.SourceFile
		}
		if a.SourceMember != b.SourceMember {
			return a.SourceMember < b.SourceMember
		}
		if a.SourceLine != b.SourceLine {
			return a.SourceLine < b.SourceLine
		}
		return all[i].seq < all[j].seq
	})
}

// reasonOf gives a short reason for an error, for counting skips.
func reasonOf(err error) string {
	for _, k := range []struct {
		e    error
		name string
	}{
		{ingest.ErrLevelCount, "level_count_mismatch"},
		{ingest.ErrBadHeader, "bad_header"},
		{ingest.ErrBadLevel, "bad_level"},
		{ingest.ErrOrphanLevel, "orphan_level"},
		{ingest.ErrTooLarge, "too_large"},
		{ingest.ErrUnknownInput, "unknown_format"},
		{ingest.ErrNoData, "no_data"},
		{ingest.ErrUnsupported, "unsupported"},
	} {
		if errors.Is(err, k.e) {
			return k.name
		}
	}
	return "unreadable"
}

// soundingReader is what every format's reader offers.
type soundingReader interface {
	Next() (*sounding.Sounding, error)
}

// readMember decodes one file or archive member and hands each sounding to
// emit. Errors from the reader for single soundings or lines are reported
// through skip and reading continues; a reader that keeps failing at the
// same place is stopped after maxConsecutive errors to guarantee progress.
func readMember(ctx context.Context, path, member string, r io.Reader, opt Options, note func(Skip),
	emit func(*sounding.Sounding) error, skip func(Skip)) error {
	br := bufio.NewReaderSize(r, 1<<16)
	prefix, _ := br.Peek(4096)
	where := path
	if member != "" {
		where += "!" + member
	}
	rd, err := openReader(opt.Format, prefix, br, path, member, note, &opt)
	if err != nil {
		skip(Skip{Where: where, Reason: reasonOf(err), Detail: err.Error()})
		return nil
	}
	const maxConsecutive = 10000
	bad := 0
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		s, err := rd.Next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			var pe *ingest.ParseError
			if !errors.As(err, &pe) {
				// Not a per-item error: the input itself failed.
				return fmt.Errorf("%s: %w", where, err)
			}
			skip(Skip{Where: where, Reason: reasonOf(err), Detail: err.Error()})
			if bad++; bad > maxConsecutive {
				return fmt.Errorf("%s: too many consecutive errors, giving up on this input", where)
			}
			continue
		}
		bad = 0
		if info, ok := opt.Stations[s.StationID]; ok {
			applyStation(s, info)
		}
		if err := emit(s); err != nil {
			return err
		}
	}
}

// applyStation fills metadata the source did not carry.
func applyStation(s *sounding.Sounding, info StationInfo) {
	if s.StationName == "" {
		s.StationName = info.Name
	}
	if s.LatitudeDeg != s.LatitudeDeg { // NaN
		s.LatitudeDeg = info.LatitudeDeg
	}
	if s.LongitudeDeg != s.LongitudeDeg {
		s.LongitudeDeg = info.LongitudeDeg
	}
	if s.ElevationM != s.ElevationM {
		s.ElevationM = info.ElevationM
	}
}

// sortSkips orders skips and notes by place and message, so the summary
// does not depend on which worker met them first.
func sortSkips(s []Skip) {
	sort.Slice(s, func(i, j int) bool {
		if s[i].Where != s[j].Where {
			return s[i].Where < s[j].Where
		}
		return s[i].Detail < s[j].Detail
	})
}
