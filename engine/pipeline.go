// Package engine runs one ingestion into a store: it expands the input
// paths, decides which inputs changed since the store's last commit, reads
// those (every file and every member of a compressed archive, through the
// reader for its format) into a staging area on disk, and then rebuilds
// each affected station-year: duplicates are resolved, every sounding is
// analysed, and the partition's Parquet files are written under new names.
// The store's manifest is committed last.
//
// Plain archive-v2 files, the bulk of a large archive, are not copied to
// the staging area: they are indexed by station-year (byte ranges of the
// file) and each partition decodes its ranges from the file itself, which
// gives the same soundings and the same skipped lines as reading the file
// whole. Compressed files, archive members and the other formats are
// decoded once into the staging area.
//
// Results do not depend on the number of workers, on the order of the
// inputs, or on which earlier runs built the store: a partition's content
// is a function of its deduplicated soundings and the analysis parameters.
package engine

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"sync"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
)

// DerivationVersion names the version of the derivation code. Bump it when
// a change alters what is written for the same input, so that existing
// stores re-derive their partitions on the next run.
const DerivationVersion = 11

// Options configures a run. The zero value is usable: one worker per CPU,
// the default analysis configuration, no logging, incremental, unsharded.
type Options struct {
	// Workers bounds the files read at once, the partitions analysed at
	// once and the partitions written at once (analysis and writing
	// overlap, see buildAll). 0 means runtime.NumCPU().
	Workers int
	// Analysis is the analysis configuration; nil means
	// analyze.DefaultConfig().
	Analysis *analyze.Config
	// Format forces a reader ("archive-v2", …) instead of detecting the
	// format from the content. Empty means detect.
	Format string
	// SizeLimit bounds the decompressed size of one input or member, bytes;
	// 0 means the input package's default.
	SizeLimit int64
	// InputBudget bounds the decompressed bytes of one compressed input,
	// all its members together; 0 means DefaultInputBudget.
	InputBudget int64
	// MaxPartitionBytes bounds the staged bytes of one station-year (text
	// of an input read in place, counted twice, or encoded soundings),
	// which are built in memory; a larger one is refused and reported.
	// The station-years built at once hold at most as much together. 0
	// means DefaultMaxPartitionBytes.
	MaxPartitionBytes int64
	// StagingMemoryBytes bounds the decompressed archive-v2 text of gzip
	// and zip inputs held in memory instead of a copy in the staging
	// folder, all inputs together; past it, text is staged on disk. 0 means
	// DefaultStagingMemoryBytes, a negative value none in memory.
	StagingMemoryBytes int64
	// RunBudget bounds the decompressed bytes of all compressed inputs of
	// the run; inputs left when it is used up are reported and read by
	// the next run. 0 means DefaultRunBudget.
	RunBudget int64
	// Stations supplies station metadata (name, position, elevation) by
	// station id, for formats that do not carry it. May be nil.
	Stations map[string]ingest.Station
	// NoBuiltinStations turns off the built-in station list
	// (formats.BuiltinStations), which otherwise supplies the metadata of
	// stations that neither Stations nor a station list among the inputs
	// names.
	NoBuiltinStations bool
	// Shard restricts the run to the stations one shard owns.
	Shard store.Shard
	// Full ignores the manifest and rebuilds every partition the inputs
	// touch; partitions of this shard that no input touches are dropped.
	Full bool
	// Verify checks the SHA-256 of every committed file of the partitions
	// the run would leave alone, not only that each exists with its
	// recorded size; damaged partitions are rebuilt from their inputs.
	Verify bool
	// PruneMissing removes the soundings of inputs ingested before that
	// are gone now (deleted, or moved without being named again); without
	// it they stay in the store, with a note.
	PruneMissing bool
	// Wait waits for another writer's lock instead of failing.
	Wait bool
	// QC is the quality-control configuration; nil means qc.DefaultConfig().
	QC *qc.Config
	// UseSuspect lets the analysis use values QC flags as suspect (bad
	// values are never used).
	UseSuspect bool
	// DailyMaxima supplies daily maximum temperatures for the afternoon
	// (Holzworth) mixing height (LoadDailyMaxima); nil uses the afternoon
	// soundings' surface temperatures only. A station of the file that the
	// run does not know stops the run (checkDailyMaxima).
	DailyMaxima *DailyMaximaFile
	// Pairing sets the local-time windows of the afternoon pairing; nil
	// means analyze.DefaultPairingConfig(). It is one of the analysis
	// parameters: a change rebuilds every partition.
	Pairing *analyze.PairingConfig
	// Log receives progress (Info) and skipped input (Warn). Nil discards.
	Log *slog.Logger
	// Progress, when set, is called with the partitions done and the total
	// while partitions are built (for a progress bar).
	Progress func(done, total int)
	// ProgressEvery is the interval between progress log messages; 0 means 5 s.
	ProgressEvery time.Duration

	// decodeAll makes every input go through the decoding staging path,
	// as inputs of formats other than archive-v2 do (tests compare the
	// two paths).
	decodeAll bool
}

// Skip is one item of input that was not ingested, or a remark about input
// that was, with its position.
type Skip struct {
	Where  string `json:"where"`  // file[!member][:line]
	Reason string `json:"reason"` // short snake_case reason, used for counting
	Detail string `json:"detail"` // the full message
}

// Summary reports what a run did. Counts are for the run's shard.
type Summary struct {
	Inputs          []string `json:"inputs"`           // files after expansion, sorted
	InputsUnchanged int      `json:"inputs_unchanged"` // skipped: same size and time as at the last commit
	InputsRead      int      `json:"inputs_read"`      // read this run (new or changed, or needed to rebuild a partition)
	Members         int      `json:"members_read"`     // files and archive members read
	StationLists    int      `json:"station_lists"`    // inputs used as station metadata

	SoundingsRead    int `json:"soundings_read"`         // decoded from the inputs read
	OtherShards      int `json:"soundings_other_shards"` // decoded but owned by another shard
	DuplicatesMerged int `json:"duplicates_merged"`      // copies of the same station and launch time, one kept

	SoundingsNew       int `json:"soundings_new"`       // not in the store before
	SoundingsReplaced  int `json:"soundings_replaced"`  // same identity, different content
	SoundingsUnchanged int `json:"soundings_unchanged"` // rewritten partitions: same identity and content
	SoundingsRemoved   int `json:"soundings_removed"`   // in the store before, absent from the rebuilt partition

	PartitionsWritten   int `json:"partitions_written"`
	PartitionsUnchanged int `json:"partitions_unchanged"` // affected but identical; not rewritten
	PartitionsDropped   int `json:"partitions_dropped"`   // --full: no input touches them any more

	// NoPosition and NoElevation count the soundings read whose station
	// position (latitude or longitude) or elevation stayed unknown after
	// the station lists (see warnMetadata for what that affects).
	NoPosition  int `json:"soundings_without_position"`
	NoElevation int `json:"soundings_without_elevation"`

	Soundings     int            `json:"soundings_in_store"`     // after the commit
	NotAnalysable map[string]int `json:"not_analysable_written"` // among soundings written this run, by reason
	Skipped       []Skip         `json:"skipped"`                // input that could not be read
	Notes         []Skip         `json:"notes"`                  // input read but worth a remark
	Rows          map[string]int `json:"rows_written"`           // rows written per table
	Files         []string       `json:"files_written"`          // Parquet files written, relative to the store
	Removed       []string       `json:"stray_files_removed"`    // left by earlier runs, removed
	Committed     bool           `json:"committed"`              // a new manifest was committed
	// StageSeconds is the time spent in each stage summed over workers
	// (read_parse: reading, decompressing, decoding and staging inputs;
	// qc; analysis; write: building and writing Parquet files), s. On an
	// otherwise idle machine it approximates CPU time per stage.
	StageSeconds map[string]float64 `json:"stage_seconds"`
	ElapsedS     float64            `json:"elapsed_s"`
	Elapsed      time.Duration      `json:"-"`

	// stagedInMemory and stagedOnDisk count the archive-v2 inputs whose
	// text was held in memory and read from a file (the input itself or a
	// decompressed copy); heldAtEnd is the staging memory still charged
	// once every station-year was built (0 unless an input was read
	// for no build). For tests.
	stagedInMemory, stagedOnDisk int
	heldAtEnd                    int64
	// decodedWhole counts the compressed inputs decoded in one call
	// (wholeGzip, wholeZip) rather than as a stream. For tests.
	decodedWhole int
}

// SkippedByReason counts Skipped by reason.
func (s *Summary) SkippedByReason() map[string]int {
	m := map[string]int{}
	for _, k := range s.Skipped {
		m[k.Reason]++
	}
	return m
}

// run holds the state of one ingestion.
type run struct {
	ctx     context.Context
	dir     string
	opt     Options
	cfg     analyze.Config
	qcCfg   qc.Config
	pairing analyze.PairingConfig
	params  string
	log     *slog.Logger
	workers int
	sum     *Summary
	staging string

	runBudget *input.Budget
	memStage  *memBudget // in-memory staging of archive-v2 text (stagemem.go); nil: none
	// textBudget bounds the reading goroutines' buffers for the text of
	// inputs staged on disk but decoded whole (WholeTextBytes).
	textBudget *memBudget
	damaged    map[string]bool // partitions whose committed files are damaged: rebuilt, never kept
	// levelBufs holds the levels column buffers of station-years written,
	// for the next ones built (some 24 MB each on a real station-year).
	levelBufs schema.LevelBuffers

	mu        sync.Mutex // guards sum.Skipped, sum.Notes, sum.Members, sum.SoundingsRead, filesRead
	filesRead int        // input files staged so far, for progress

	noPosition, noElevation map[string]int // soundings per station lacking metadata; guarded by mu
}

// stage adds the time since start to a stage's total.
func (r *run) stage(name string, start time.Time) {
	d := time.Since(start).Seconds()
	r.mu.Lock()
	r.sum.StageSeconds[name] += d
	r.mu.Unlock()
}

func (r *run) skip(s Skip) {
	r.mu.Lock()
	r.sum.Skipped = append(r.sum.Skipped, s)
	r.mu.Unlock()
	r.log.Warn("skipped input", "where", s.Where, "reason", s.Reason, "detail", s.Detail)
}

func (r *run) note(s Skip) {
	r.mu.Lock()
	r.sum.Notes = append(r.sum.Notes, s)
	r.mu.Unlock()
	r.log.Info("note on input", "where", s.Where, "reason", s.Reason, "detail", s.Detail)
}

// newRun sets up the state of a run over files with the options' defaults
// filled in.
func newRun(ctx context.Context, storeDir string, files []string, opt Options) *run {
	r := &run{ctx: ctx, dir: storeDir, opt: opt, workers: opt.Workers,
		sum: &Summary{Inputs: files, NotAnalysable: map[string]int{}, Rows: map[string]int{}, StageSeconds: map[string]float64{}}}
	r.runBudget = &input.Budget{Limit: opt.RunBudget, What: "per run (--max-run-bytes)"}
	if r.runBudget.Limit <= 0 {
		r.runBudget.Limit = DefaultRunBudget
	}
	r.memStage = r.stagingMemory()
	if r.workers <= 0 {
		r.workers = runtime.NumCPU()
	}
	r.cfg = analyze.DefaultConfig()
	if opt.Analysis != nil {
		r.cfg = *opt.Analysis
	}
	r.qcCfg = qc.DefaultConfig()
	if opt.QC != nil {
		r.qcCfg = *opt.QC
	}
	r.pairing = analyze.DefaultPairingConfig()
	if opt.Pairing != nil {
		r.pairing = *opt.Pairing
	}
	r.log = opt.Log
	if r.log == nil {
		r.log = slog.New(slog.DiscardHandler)
	}
	return r
}

// Run ingests paths into the store at storeDir and returns a summary. It
// returns an error only when the run could not be carried out (bad paths,
// a locked or incompatible store, an unwritable directory); unreadable
// input is reported in Summary.Skipped and does not stop the run.
func Run(ctx context.Context, storeDir string, paths []string, opt Options) (*Summary, error) {
	start := time.Now()
	files, err := input.Expand(paths)
	if err != nil {
		return nil, err
	}
	r := newRun(ctx, storeDir, files, opt)
	paramsText, err := json.Marshal(struct {
		Store, Derivation int
		Analysis          analyze.Config
		QC                qc.Config
		UseSuspect        bool
		DailyMaxima       string
		Pairing           analyze.PairingConfig
	}{store.Version, DerivationVersion, r.cfg, r.qcCfg, opt.UseSuspect, maximaDigest(opt.DailyMaxima.maxima()), r.pairing})
	if err != nil {
		return nil, fmt.Errorf("encode parameters: %w", err)
	}
	h := sha256.Sum256(paramsText)
	r.params = hex.EncodeToString(h[:8])

	if err := os.MkdirAll(storeDir, 0o755); err != nil {
		return nil, err
	}
	lock, err := store.Acquire(storeDir, opt.Shard, opt.Wait)
	if err != nil {
		return nil, err
	}
	defer lock.Release()
	if err := store.CheckLayout(storeDir, opt.Shard); err != nil {
		return nil, err
	}

	old, err := store.ReadManifest(storeDir, opt.Shard)
	if err != nil {
		return nil, err
	}
	if old == nil {
		if err := store.CheckUnmanaged(storeDir); err != nil {
			return nil, err
		}
		old = store.NewManifest(opt.Shard, r.params, string(paramsText))
		// Commit the empty state first: from now on readers go by the
		// manifest, so files of a first run that is killed stay invisible.
		if err := store.Commit(storeDir, opt.Shard, old); err != nil {
			return nil, err
		}
	}
	if removed, err := store.Clean(storeDir, opt.Shard, old); err != nil {
		return nil, err
	} else {
		r.sum.Removed = removed
		if len(removed) > 0 {
			r.log.Info("removed files no commit references", "files", len(removed))
		}
	}
	full := opt.Full || old.Params != r.params
	if !opt.Full && full && len(old.Inputs) > 0 {
		// Every partition must be re-derived with the new parameters, so
		// every input ingested before is read again, whether or not this
		// run names it: a rebuild must not lose what other runs added.
		named := map[string]bool{}
		for _, f := range files {
			named[f] = true
		}
		var missing []string
		for f := range old.Inputs {
			if named[f] {
				continue
			}
			if _, err := os.Stat(f); err != nil {
				missing = append(missing, f)
				continue
			}
			files = append(files, f)
		}
		if len(missing) > 0 && !opt.PruneMissing {
			sort.Strings(missing)
			return nil, fmt.Errorf("analysis parameters or derivation version changed since the last commit, so every partition "+
				"must be rebuilt from its inputs, but %d input(s) ingested before cannot be read now (first: %s); restore them "+
				"(or, if they moved, name them at their new place in this run as well as in the earlier ones' place), or run "+
				"with --prune-missing to rebuild without them (their soundings are then removed)", len(missing), missing[0])
		}
		for _, f := range missing {
			r.note(Skip{Where: f, Reason: "input_pruned", Detail: fmt.Sprintf("%s: ingested before, gone now: its %d soundings are removed (--prune-missing)", f, old.Inputs[f].Soundings)})
		}
		sort.Strings(files)
		r.log.Info("analysis parameters or derivation version changed since the last commit: rebuilding every partition",
			"inputs", len(files))
	}

	files = r.takeStationLists(files)

	r.staging = filepath.Join(storeDir, store.MetaDir, "staging-"+opt.Shard.Name())
	if err := os.RemoveAll(r.staging); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(r.staging, 0o755); err != nil {
		return nil, err
	}
	defer func() {
		if err := os.RemoveAll(r.staging); err != nil {
			r.log.Warn("staging files could not be removed", "dir", r.staging, "error", err.Error())
		}
	}()

	next, err := r.ingest(files, old, full, string(paramsText))
	if err != nil {
		return nil, err
	}
	for _, p := range next.Partitions {
		r.sum.Soundings += p.Soundings
	}
	r.warnMetadata()
	sortSkips(r.sum.Skipped)
	sortSkips(r.sum.Notes)
	sort.Strings(r.sum.Files)
	r.sum.Elapsed = time.Since(start)
	r.sum.ElapsedS = r.sum.Elapsed.Seconds()
	return r.sum, nil
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

// maximaDigest identifies a set of daily maxima, so that supplying another
// set re-derives the afternoon mixing heights.
func maximaDigest(m analyze.DailyMaxima) string {
	if len(m) == 0 {
		return ""
	}
	keys := make([]string, 0, len(m))
	for k, v := range m {
		keys = append(keys, fmt.Sprintf("%s %s %x", k.StationID, k.Date.Format("2006-01-02"), math.Float64bits(v)))
	}
	sort.Strings(keys)
	h := sha256.New()
	for _, k := range keys {
		h.Write([]byte(k + "\n"))
	}
	return hex.EncodeToString(h.Sum(nil)[:8])
}
