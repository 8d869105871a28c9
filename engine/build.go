package engine

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"golang.org/x/sync/errgroup"
	"golang.org/x/sync/semaphore"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/formats"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
	"github.com/sondeclim/sondeclim/sounding"
)

// ingest decides what to read, stages it, rebuilds the affected partitions
// and commits the new manifest. It returns the manifest now in force.
func (r *run) ingest(files []string, old *store.Manifest, full bool, paramsText string) (*store.Manifest, error) {
	next := store.NewManifest(r.opt.Shard, r.params, paramsText)
	if !full {
		maps.Copy(next.Inputs, old.Inputs)
		maps.Copy(next.Partitions, old.Partitions)
	}
	changed := full && (len(old.Partitions) > 0 || len(old.Inputs) > 0)

	var toRead []string
	for _, f := range files {
		if in := old.Inputs[f]; !full && in != nil {
			if fi, err := os.Stat(f); err == nil && fi.Size() == in.SizeBytes && fi.ModTime().UTC().Equal(in.ModTime) && len(in.Pending) == 0 {
				r.sum.InputsUnchanged++
				continue
			}
		}
		toRead = append(toRead, f)
	}
	r.log.Info("inputs", "files", len(files), "unchanged", r.sum.InputsUnchanged, "to_read", len(toRead))

	st := &staged{byPart: map[string][]segment{}, dropped: map[int]bool{}}
	results, err := r.stageInputs(toRead, st, nil)
	if err != nil {
		return nil, err
	}
	read := map[string]bool{}
	// covered: the station-years each input is staged for (nil: all).
	covered := map[string]map[string]bool{}
	affected := map[string]bool{}
	named := map[string]bool{}
	for _, f := range files {
		named[f] = true
	}
	for _, res := range results {
		if res.deferred {
			continue // the next run reads it
		}
		read[res.path] = true
		covered[res.path] = nil
		info := res.info
		prev := old.Inputs[res.path]
		if prev == nil && !full {
			if from := movedFrom(old, named, res.path, &info); from != "" {
				prev = old.Inputs[from]
				renameInput(next, from, res.path)
				read[from] = true
				r.note(Skip{Where: res.path, Reason: "input_moved", Detail: fmt.Sprintf("%s: the same content as %s, ingested before and "+
					"gone from there: taken as that input, moved (its soundings keep the old source_file until their partition is rebuilt)", res.path, from)})
			}
		}
		next.Inputs[res.path] = &info
		changed = true // at least its time or size changed
		if !full && prev != nil && prev.SHA256 == info.SHA256 {
			for _, k := range prev.Pending {
				affected[k] = true // held back by an earlier run
			}
			continue // touched but identical content
		}
		for k := range res.parts {
			affected[k] = true
		}
		if prev != nil && !full {
			for _, k := range prev.Partitions {
				affected[k] = true
			}
		}
	}

	// Inputs ingested before that are gone: with PruneMissing their
	// soundings are removed (their partitions are rebuilt from the other
	// inputs); otherwise they stay, with a note.
	missing := map[string]bool{}
	if !full {
		for _, f := range slices.Sorted(maps.Keys(next.Inputs)) {
			if read[f] {
				continue
			}
			if _, err := os.Stat(f); err == nil {
				continue
			}
			missing[f] = true
			in := next.Inputs[f]
			if r.opt.PruneMissing {
				for _, k := range in.Partitions {
					affected[k] = true
				}
				delete(next.Inputs, f)
				changed = true
				r.note(Skip{Where: f, Reason: "input_pruned", Detail: fmt.Sprintf("%s: ingested before, gone now: its %d soundings are removed (--prune-missing)", f, in.Soundings)})
				continue
			}
			r.note(Skip{Where: f, Reason: "input_missing", Detail: fmt.Sprintf("%s: ingested before, gone now: its %d soundings stay in the store "+
				"(--prune-missing removes them)", f, in.Soundings)})
		}
	}

	// Partitions the inputs leave alone are checked for damage (a file
	// missing, of another size than committed, or, with Verify, of
	// another checksum) and rebuilt from their inputs when damaged.
	r.damaged = map[string]bool{}
	if !full {
		for _, k := range slices.Sorted(maps.Keys(old.Partitions)) {
			if affected[k] {
				continue
			}
			for _, d := range old.Partitions[k].Damage(r.dir, k, r.opt.Verify) {
				r.damaged[k], affected[k] = true, true
				r.note(Skip{Where: d.File, Reason: "damaged_store_file",
					Detail: fmt.Sprintf("%s: %s (%s); partition %s is rebuilt from its inputs", d.File, d.Problem, d.Detail, k)})
			}
		}
		changed = changed || len(r.damaged) > 0
	}

	// Unchanged inputs that share an affected partition are read again,
	// for that partition only, so the partition is rebuilt whole. A
	// partition that needs an input that is gone (and not pruned) is held:
	// left as committed, with the soundings this run read for it held
	// back, reported as skipped and read again by the next run.
	if !full {
		need := map[string]bool{}
		for _, k := range slices.Sorted(maps.Keys(affected)) {
			p := next.Partitions[k]
			if p == nil {
				continue
			}
			var gone []string
			for _, in := range p.Inputs {
				if missing[in] && !r.opt.PruneMissing {
					gone = append(gone, in)
				}
			}
			if len(gone) > 0 {
				delete(affected, k)
				r.hold(k, gone, results, next)
				continue
			}
			for _, in := range p.Inputs {
				if !read[in] && !missing[in] {
					need[in] = true
				}
			}
		}
		if len(need) > 0 {
			again := slices.Sorted(maps.Keys(need))
			r.log.Info("re-reading unchanged inputs that share a rebuilt partition", "files", len(again))
			againRes, err := r.stageInputs(again, st, func(string) map[string]bool { return affected })
			if err != nil {
				return nil, err
			}
			// An input the run's budget left unread cannot be part of a
			// rebuild: its partitions are held as committed.
			for _, res := range againRes {
				if !res.deferred {
					covered[res.path] = maps.Clone(affected)
					continue
				}
				for _, k := range slices.Sorted(maps.Keys(affected)) {
					if p := next.Partitions[k]; p != nil && slices.Contains(p.Inputs, res.path) {
						delete(affected, k)
						r.hold(k, []string{res.path + " (not read: run budget used up)"}, results, next)
					}
				}
			}
		}
	}
	// The pairing across the new year: partitions whose next year's head
	// changed are rebuilt, and the context of each partition to build is
	// staged (context.go).
	if !full {
		if err := r.addNeighbours(st, affected, next, missing, covered, results); err != nil {
			return nil, err
		}
	}
	if err := r.checkDailyMaxima(next, affected); err != nil {
		return nil, err
	}
	// A station-year is built in memory: its staged bytes are read whole
	// and decoded. One larger than the bound is refused (held as
	// committed, its soundings reported), so that no input can make a run
	// exceed the memory the README promises.
	limit := r.partitionLimit()
	for _, k := range slices.Sorted(maps.Keys(affected)) {
		size := stagedSize(st, k)
		if size <= limit {
			continue
		}
		delete(affected, k)
		where := k
		if segs := st.byPart[k]; len(segs) > 0 {
			where = st.inputs[segs[0].file]
		}
		r.skip(Skip{Where: where, Reason: "partition_too_large", Detail: fmt.Sprintf("station-year %s: %d bytes of staged soundings (archive-v2 text counted twice), over the "+
			"bound of %d (--max-partition-bytes); it is built in memory (about 5 times its staged size at the peak), so it is left as committed and "+
			"these soundings are not stored. A year of twice-daily low-resolution soundings takes a few MB; split the input into shorter periods "+
			"or raise the bound if the machine has the memory", k, size, limit)})
		for _, res := range results {
			if res.parts[k] > 0 {
				if in := next.Inputs[res.path]; in != nil && !slices.Contains(in.Pending, k) {
					in.Pending = append(in.Pending, k)
					slices.Sort(in.Pending)
				}
			}
		}
	}
	distinct := map[string]bool{} // an input staged for its partitions and again for a context counts once
	for _, f := range st.inputs {
		distinct[f] = true
	}
	r.sum.InputsRead = len(distinct)
	pauseAt("staged")

	// Build every affected partition.
	keys := slices.Sorted(maps.Keys(affected))
	if full {
		for k := range old.Partitions {
			if !affected[k] {
				r.sum.PartitionsDropped++
			}
		}
	}
	built, err := r.buildAll(keys, st, old)
	if err != nil {
		return nil, err
	}
	if r.memStage != nil {
		r.sum.heldAtEnd = r.memStage.used.Load()
	}
	// The staged copies are no longer needed; remove them before the sync
	// below, which would otherwise write them to disk for nothing.
	if err := os.RemoveAll(r.staging); err != nil {
		return nil, err
	}
	for i, k := range keys {
		p := built[i]
		switch {
		case p == nil:
			if _, ok := next.Partitions[k]; ok {
				delete(next.Partitions, k)
				changed = true
			}
		default:
			if q := old.Partitions[k]; q == nil || q.ContentHash != p.ContentHash {
				changed = true
			}
			next.Partitions[k] = p
		}
	}
	if !changed {
		r.log.Info("nothing changed; store left as it was")
		return old, nil
	}
	// Every new file must be durable before the manifest names it.
	if err := store.Sync(r.dir); err != nil {
		return nil, err
	}
	pauseAt("commit")
	if err := store.Commit(r.dir, r.opt.Shard, next); err != nil {
		return nil, err
	}
	r.sum.Committed = true
	return next, nil
}

// buildAll builds the partitions keys and returns them in the same order
// (nil for a partition left without soundings).
//
// Building is a two-stage pipeline: up to r.workers partitions are read
// and analysed at once, and up to r.workers analysed partitions are
// written at once, while the next ones are analysed. A partition that
// finds every writer busy waits, so at most 2 × r.workers partitions are
// held in memory; with one worker, analysis and writing still use two
// cores.
func (r *run) buildAll(keys []string, st *staged, old *store.Manifest) ([]*store.Partition, error) {
	out := make([]*store.Partition, len(keys))
	ctx, cancel := context.WithCancelCause(r.ctx)
	defer cancel(nil)
	fail := func(k string, err error) error {
		err = fmt.Errorf("partition %s: %w", k, err)
		cancel(err)
		return err
	}
	var done atomic.Int64
	var mu sync.Mutex
	tick := time.Now()
	finish := func(i int, p *store.Partition, stats *buildStats) {
		out[i] = p
		n := int(done.Add(1))
		mu.Lock()
		defer mu.Unlock()
		r.sum.add(*stats)
		if r.opt.Progress != nil {
			r.opt.Progress(n, len(keys))
		}
		every := r.opt.ProgressEvery
		if every <= 0 {
			every = 5 * time.Second
		}
		if time.Since(tick) >= every {
			tick = time.Now()
			r.log.Info("progress: building station-years", "done", n, "of", len(keys))
		}
	}
	var analysing, writing errgroup.Group
	analysing.SetLimit(r.workers)
	writing.SetLimit(r.workers)
	// The station-years in memory at once (analysed or being written) hold
	// at most the partition bound of staged bytes together, so that
	// several large ones built by different workers cannot add up beyond
	// the memory one of them may take; small ones (the usual few MB) go on
	// side by side.
	limit := r.partitionLimit()
	inMemory := semaphore.NewWeighted(limit)
	st.countUses(keys, r.memStage)
	// One scratch per analysing goroutine, handed from one station-year
	// to the next (not a sync.Pool, which each collection empties).
	scratches := make(chan *buildScratch, r.workers)
	for range r.workers {
		scratches <- new(buildScratch)
	}
	for i, k := range keys {
		analysing.Go(func() error {
			if ctx.Err() != nil {
				return context.Cause(ctx)
			}
			weight := min(max(stagedSize(st, k), 1), limit)
			if err := inMemory.Acquire(ctx, weight); err != nil {
				return context.Cause(ctx)
			}
			sc := <-scratches // never waits: at most r.workers analyse at once
			p, stats, write, err := r.buildPartition(k, st, old.Partitions[k], sc)
			sc.levels.Shrink(keptLevels) // the soundings are dropped
			scratches <- sc
			st.release(k, r.memStage)
			if err != nil {
				inMemory.Release(weight)
				return fail(k, err)
			}
			if write == nil {
				inMemory.Release(weight)
				finish(i, p, stats)
				return nil
			}
			writing.Go(func() error { // waits while every writer is busy
				defer inMemory.Release(weight)
				if ctx.Err() != nil {
					return context.Cause(ctx)
				}
				if err := write(); err != nil {
					return fail(k, err)
				}
				finish(i, p, stats)
				return nil
			})
			return nil
		})
	}
	// Every writing.Go call is made by an analysing goroutine, so the
	// writers are waited for after the analysers.
	errA := analysing.Wait()
	errW := writing.Wait()
	if err := context.Cause(ctx); err != nil && !errors.Is(err, context.Canceled) {
		return nil, err
	}
	for _, err := range []error{errA, errW, r.ctx.Err()} {
		if err != nil {
			return nil, err
		}
	}
	return out, nil
}

// partitionLimit is the bound on the staged bytes of one station-year,
// and of all station-years in memory at once.
func (r *run) partitionLimit() int64 {
	if r.opt.MaxPartitionBytes > 0 {
		return r.opt.MaxPartitionBytes
	}
	return DefaultMaxPartitionBytes
}

// stagedSize is the staged size of station-year k, bytes, as its
// soundings are read whole to build it: spilled soundings count their
// bytes, archive-v2 text read in place twice its bytes, as it takes about
// twice as much memory per level (about 53 bytes of text against 96
// spilled per level, measured on a real high-resolution flight replicated
// to a station-year; the README's Memory paragraph).
func stagedSize(st *staged, k string) int64 {
	var size int64
	for _, sg := range st.byPart[k] {
		switch {
		case st.dropped[sg.file]:
		case st.inPlace[sg.file]:
			size += 2 * sg.size
		default:
			size += sg.size
		}
	}
	return size
}

// sameAsIndexed checks that an opened input read in place is still the
// file that was indexed (same size and modification time): the byte ranges
// of a file rewritten or replaced since would not hold the soundings found.
func sameAsIndexed(fh *os.File, stamp store.Input) error {
	fi, err := fh.Stat()
	if err != nil {
		return err
	}
	if fi.Size() != stamp.SizeBytes || !fi.ModTime().UTC().Equal(stamp.ModTime) {
		return fmt.Errorf("input %s changed while it was being ingested (size or time differs from when it was read); run the ingest again", fh.Name())
	}
	return nil
}

// buildStats is what building one partition counts.
type buildStats struct {
	written, unchanged           bool
	duplicates                   int
	new, replaced, same, removed int
	notAnalysable                map[string]int
	rows                         map[string]int
	files                        []string
}

func (s *Summary) add(b buildStats) {
	if b.written {
		s.PartitionsWritten++
	}
	if b.unchanged {
		s.PartitionsUnchanged++
	}
	s.DuplicatesMerged += b.duplicates
	s.SoundingsNew += b.new
	s.SoundingsReplaced += b.replaced
	s.SoundingsUnchanged += b.same
	s.SoundingsRemoved += b.removed
	for k, v := range b.notAnalysable {
		s.NotAnalysable[k] += v
	}
	for k, v := range b.rows {
		s.Rows[k] += v
	}
	s.Files = append(s.Files, b.files...)
}

// readSegment returns the bytes of one segment: a slice of its file's
// text when that is held in memory (never to be written to), or else
// read from its staged file (a spill file, or an input or decompressed
// copy read in place, which must still be the file that was indexed) into
// buf, which is returned for reuse. Files are opened per segment, not
// held open for the run, so that archives of many thousands of files stay
// within the process's file limit.
func readSegment(st *staged, sg segment, buf []byte) (data, scratch []byte, err error) {
	if text := st.heldBytes(sg.file); text != nil {
		return text[sg.off : sg.off+sg.size : sg.off+sg.size], buf, nil
	}
	fh, err := os.Open(st.files[sg.file])
	if err != nil {
		return nil, buf, err
	}
	defer fh.Close()
	if st.inPlace[sg.file] {
		if err := sameAsIndexed(fh, st.stamp[sg.file]); err != nil {
			return nil, buf, err
		}
	}
	buf = slices.Grow(buf[:0], int(sg.size))[:sg.size]
	if _, err := fh.ReadAt(buf, sg.off); err != nil {
		return nil, buf, fmt.Errorf("read staged input %s: %w", st.inputs[sg.file], err)
	}
	return buf, buf, nil
}

// buildScratch is the memory one analysing goroutine uses again from one
// station-year to the next: what a station-year's build drops once it has
// its rows (buildPartition returns), handed to the next build instead of
// to the collector.
type buildScratch struct {
	levels sounding.LevelArena // the levels of the station-year's soundings read in place and of its context
}

// keptLevels is how many levels' memory (sounding.Level, about 128 bytes
// each) a build goroutine keeps for the next station-year: some two real
// station-years of twice-daily soundings (about 131,000 levels each). A
// larger station-year's memory goes to the collector, so that what the
// weighted semaphore of buildAll bounds is not exceeded by memory kept.
const keptLevels = 1 << 18

// buildPartition rebuilds one station-year from its staged soundings: it
// reads, checks and analyses them and returns the partition with a write
// function that writes its files (nil when there is nothing to write: no
// soundings, or the partition is unchanged). stats is complete once write
// has returned. The levels of the soundings it reads are kept in sc, which
// the next build hands out again: nothing of them outlives the return
// (the rows hold copies).
func (r *run) buildPartition(key string, st *staged, prev *store.Partition, sc *buildScratch) (_ *store.Partition, stats *buildStats, write func() error, _ error) {
	stats = &buildStats{}
	sc.levels.Reset() // the previous station-year's soundings are dropped
	station, year, err := store.SplitPartitionKey(key)
	if err != nil {
		return nil, stats, nil, err
	}
	var all []*sounding.Sounding
	contributors := map[string]bool{}
	var buf, data []byte
	for _, sg := range st.byPart[key] {
		if st.dropped[sg.file] {
			continue
		}
		if data, buf, err = readSegment(st, sg, buf); err != nil {
			return nil, stats, nil, err
		}
		contributors[st.inputs[sg.file]] = true
		if st.inPlace[sg.file] {
			got, err := r.readInPlace(data, st.inputs[sg.file], sg, &sc.levels)
			if err != nil {
				return nil, stats, nil, err
			}
			all = append(all, got...)
			continue
		}
		rest := data
		for range sg.count {
			s, tail, err := sounding.DecodeBinary(rest)
			if err != nil {
				return nil, stats, nil, err
			}
			all = append(all, s)
			rest = tail
		}
	}
	if len(all) == 0 {
		return nil, stats, nil, nil
	}
	// The partition's identity is every staged copy, in a fixed order, and
	// the parameters: duplicates are resolved deterministically from that
	// set, so an unchanged partition is recognised before any QC or
	// analysis is spent on it.
	sortCopies(all)
	// Each copy enters as the hash of its observation (which is also the
	// sounding_hash of the copy that is kept) followed by its source
	// position, so every sounding is encoded and hashed once. The head of
	// the next year, the context of the afternoon pairing (context.go),
	// enters by its own identity.
	next, _ := neighbourKey(key, 1)
	context, contextHash, err := r.readHead(st, next, &sc.levels)
	if err != nil {
		return nil, stats, nil, err
	}
	h := sha256.New()
	h.Write([]byte(r.params))
	var enc []byte
	observed := make(map[*sounding.Sounding]string, len(all))
	for _, s := range all {
		observed[s], enc = writeIdentity(h, s, enc)
	}
	h.Write([]byte("context " + contextHash))
	hash := hex.EncodeToString(h.Sum(nil))
	p := &store.Partition{ContentHash: hash, Files: map[string]string{},
		Inputs: slices.Sorted(maps.Keys(contributors)), ContextHash: contextHash}
	fileName := "part-" + hash[:16] + ".parquet"
	for _, t := range schema.TableNames() {
		p.Files[t] = filepath.Join(store.PartitionDir(t, station, year), fileName)
	}
	if prev != nil && prev.ContentHash == hash && !r.damaged[key] && len(prev.Damage(r.dir, key, r.opt.Verify)) == 0 {
		stats.unchanged = true
		stats.duplicates = len(all) - countDescents(all) - prev.Soundings
		return prev, stats, nil, nil
	}

	nLevels := 0
	for _, s := range all {
		nLevels += len(s.Levels)
	}
	levels, err := r.levelBufs.NewLevelColumns(nLevels)
	if err != nil {
		return nil, stats, nil, err
	}
	rows := r.analysePart(all, context, observed, levels, stats)
	p.Soundings = len(rows.Soundings)
	if err := r.compareWithPrevious(prev, rows.Soundings, stats); err != nil {
		return nil, stats, nil, err
	}
	return p, stats, func() error { return r.writePartition(p, stats, &rows) }, nil
}

// analysePart checks, deduplicates and analyses the copies all of one
// station-year (in sortCopies order; observed holds each copy's
// observation hash) and returns the rows of its tables, the level rows
// appended to levels. context holds the copies of the head of the next
// station-year, which serve the afternoon pairing only (context.go).
func (r *run) analysePart(all, context []*sounding.Sounding, observed map[*sounding.Sounding]string, levels schema.LevelAppender,
	stats *buildStats) (rows schema.PartRows) {
	all, descents := splitDescents(all)
	t0 := time.Now()
	reports := make(map[*sounding.Sounding]qc.Report, len(all))
	for _, s := range all {
		reports[s] = qc.Check(s, r.qcCfg)
	}
	r.stage("qc", t0)
	kept, dups := deduplicate(all, reports)
	stats.duplicates = dups

	t0 = time.Now()
	results := make([]result, len(kept))
	stats.notAnalysable = map[string]int{}
	rows = schema.PartRows{Levels: levels,
		MixingHeights: make([]schema.MixingHeightRow, 0, len(kept)*len(analyze.Methods()))}
	srows := make([]schema.SoundingRow, len(kept))
	az := analyze.NewAnalyzer(r.cfg) // one per station-year: its working memory is reused by every sounding
	var analysis analyze.Result
	for i, d := range kept {
		res := analyzeOne(d.s, reports[d.s], az, r.opt.UseSuspect, &rows, &analysis)
		res.sounding.SoundingHash = observed[d.s]
		res.sounding.DuplicatesMerged = int32(d.merged)
		res.sounding.DuplicateChoice = d.reason
		results[i] = res
		srows[i] = res.sounding
		if res.status != analyze.StatusOK {
			stats.notAnalysable[string(res.status)]++
		}
	}
	rows.Soundings = srows
	rows.Afternoon = afternoonRows(results, r.analyseContext(context, az), r.opt.DailyMaxima.maxima(), r.pairing)
	rows.Descents = r.analyseDescents(descents, observed)
	r.stage("analysis", t0)
	return rows
}

// splitDescents returns the ascents and the descents of all, each in the
// order of all.
func splitDescents(all []*sounding.Sounding) (ascents, descents []*sounding.Sounding) {
	for _, s := range all {
		if s.Descent {
			descents = append(descents, s)
		} else {
			ascents = append(ascents, s)
		}
	}
	return ascents, descents
}

func countDescents(all []*sounding.Sounding) int {
	_, d := splitDescents(all)
	return len(d)
}

// analyseDescents checks and deduplicates the descents of one
// station-year as analysePart does the ascents, and derives their
// per-level values (heights, potential temperature, mixing ratio) with
// the analysis, whose boundary-layer diagnostics are not kept for a
// descent (schema.DescentRow says why).
func (r *run) analyseDescents(descents []*sounding.Sounding, observed map[*sounding.Sounding]string) schema.DescentRows {
	var out schema.DescentRows
	if len(descents) == 0 {
		return out
	}
	reports := make(map[*sounding.Sounding]qc.Report, len(descents))
	for _, s := range descents {
		reports[s] = qc.Check(s, r.qcCfg)
	}
	kept, _ := deduplicate(descents, reports)
	az := analyze.NewAnalyzer(r.cfg)
	// One QC-applied copy serves every descent, as appliedCopies does the
	// ascents: the Analyzer keeps nothing of its input, and AppendDescent
	// copies the Result before the next descent is applied.
	var applied sounding.Sounding
	for _, d := range kept {
		rep := reports[d.s]
		var res analyze.Result
		if rep.Usable() {
			res = az.Analyze(qc.ApplyInto(&applied, d.s, rep, r.opt.UseSuspect))
		} else {
			res = az.Analyze(nil)
		}
		schema.AppendDescent(&out, d.s, rep, &res)
		row := &out.Descents[len(out.Descents)-1]
		row.SoundingHash, row.Duplicates = observed[d.s], int32(d.merged)
	}
	return out
}

// writePartition writes the files of partition p, one per registered
// table in registry order, and counts them in stats. The first error stops
// it.
func (r *run) writePartition(p *store.Partition, stats *buildStats, batch *schema.PartRows) error {
	defer r.stage("write", time.Now())
	stats.rows = map[string]int{}
	for _, table := range schema.TableNames() {
		rows, err := batch.Writer(table)
		if err != nil {
			return err
		}
		path := filepath.Join(r.dir, p.Files[table])
		if err := rows.WriteFile(path, table, false); err != nil {
			return err
		}
		sum, err := store.SumFile(path)
		if err != nil {
			return err
		}
		if p.Sums == nil {
			p.Sums = map[string]store.FileSum{}
		}
		p.Sums[table] = sum
		stats.rows[table] += rows.Len()
		stats.files = append(stats.files, p.Files[table])
	}
	stats.written = true
	pauseAt("written")
	return nil
}

// compareWithPrevious counts new, replaced, unchanged and removed
// soundings against the partition's previous soundings file.
func (r *run) compareWithPrevious(prev *store.Partition, rows []schema.SoundingRow, stats *buildStats) error {
	before := map[int64]string{}
	if prev != nil {
		if f, ok := prev.Files[schema.TableSoundings]; ok {
			k, err := schema.ReadSoundingKeys(filepath.Join(r.dir, f))
			if err != nil {
				// A damaged previous file is replaced; its soundings
				// cannot be compared, so they count as new.
				r.note(Skip{Where: f, Reason: "damaged_store_file",
					Detail: fmt.Sprintf("%s: previous file unreadable (%v); rebuilt, its soundings counted as new", f, err)})
			} else {
				before = k
			}
		}
	}
	for _, row := range rows {
		t := row.LaunchTime.UnixMicro()
		old, ok := before[t]
		switch {
		case !ok:
			stats.new++
		case old != row.SoundingHash:
			stats.replaced++
		default:
			stats.same++
		}
		delete(before, t)
	}
	stats.removed = len(before)
	return nil
}

// kept is a sounding chosen among copies of the same identity.
type kept struct {
	s      *sounding.Sounding
	merged int    // other copies dropped
	reason string // why this copy won ("" when it had no rival)
}

// deduplicate keeps one sounding per launch time (the station and year are
// the partition's) and returns them sorted by launch time, with the number
// of copies dropped. The choice among copies is qc.ChooseDuplicate's
// documented precedence; copies are compared in source order, so the
// result does not depend on input order.
func deduplicate(all []*sounding.Sounding, reports map[*sounding.Sounding]qc.Report) ([]kept, int) {
	sortCopies(all)
	var out []kept
	dups := 0
	for i := 0; i < len(all); {
		j := i + 1
		best, reason := all[i], ""
		for ; j < len(all) && all[j].LaunchTime.Equal(all[i].LaunchTime); j++ {
			keep, why := qc.ChooseDuplicate(qc.CandidateOf(best, reports[best]), qc.CandidateOf(all[j], reports[all[j]]))
			if keep == 1 {
				best = all[j]
			}
			reason = why
		}
		out = append(out, kept{s: best, merged: j - i - 1, reason: reason})
		dups += j - i - 1
		i = j
	}
	return out, dups
}

// sortCopies orders soundings by launch time, then by source position.
func sortCopies(all []*sounding.Sounding) {
	sort.SliceStable(all, func(i, j int) bool {
		if !all[i].LaunchTime.Equal(all[j].LaunchTime) {
			return all[i].LaunchTime.Before(all[j].LaunchTime)
		}
		return sourceLess(all[i], all[j])
	})
}

func sourceLess(a, b *sounding.Sounding) bool {
	if a.Source.File != b.Source.File {
		return a.Source.File < b.Source.File
	}
	if a.Source.Member != b.Source.Member {
		return a.Source.Member < b.Source.Member
	}
	return a.Source.Line < b.Source.Line
}

// movedFrom returns the input of the old manifest that path is, moved or
// renamed: one not named by this run, gone from its place (or the same
// file under another name, such as a relative path from before inputs
// were made absolute), with the same size and content digest. "" when
// there is none.
func movedFrom(old *store.Manifest, named map[string]bool, path string, info *store.Input) string {
	here, _ := os.Stat(path)
	for _, f := range slices.Sorted(maps.Keys(old.Inputs)) {
		in := old.Inputs[f]
		if named[f] || in.SHA256 != info.SHA256 || in.SizeBytes != info.SizeBytes {
			continue
		}
		there, err := os.Stat(f)
		if err != nil || here != nil && os.SameFile(here, there) {
			return f
		}
	}
	return ""
}

// renameInput replaces input from by to in the manifest's partitions.
// Partitions are copied before they change: next shares them with the
// previous manifest.
func renameInput(next *store.Manifest, from, to string) {
	delete(next.Inputs, from)
	for k, p := range next.Partitions {
		i := slices.Index(p.Inputs, from)
		if i < 0 {
			continue
		}
		q := *p
		q.Inputs = slices.Clone(p.Inputs)
		q.Inputs[i] = to
		slices.Sort(q.Inputs)
		q.Inputs = slices.Compact(q.Inputs)
		next.Partitions[k] = &q
	}
}

// hold leaves partition k as committed because its rebuild needs inputs
// that are gone. The inputs read this run with soundings for k remember
// it as pending, so the next run reads them again; the skip says what is
// held back and what to do.
func (r *run) hold(k string, gone []string, results []readResult, next *store.Manifest) {
	held := 0
	var from []string
	for _, res := range results {
		if n := res.parts[k]; n > 0 {
			held += n
			from = append(from, res.path)
			if in := next.Inputs[res.path]; in != nil && !slices.Contains(in.Pending, k) {
				in.Pending = append(in.Pending, k)
				slices.Sort(in.Pending)
			}
		}
	}
	if held == 0 {
		r.note(Skip{Where: gone[0], Reason: "partition_held", Detail: fmt.Sprintf("partition %s is left as committed: rebuilding it needs %s, "+
			"which cannot be read now (restore it, or run with --prune-missing)", k, strings.Join(gone, ", "))})
		return
	}
	r.skip(Skip{Where: from[0], Reason: "partition_held", Detail: fmt.Sprintf("partition %s is left as committed and %d sounding(s) read for it "+
		"from %s are held back: rebuilding it needs %s, which cannot be read now. Restore it (or run with --prune-missing if it is gone); the next run reads them again",
		k, held, strings.Join(from, ", "), strings.Join(gone, ", "))})
}

// checkDailyMaxima refuses a daily-maxima file that names a station (of
// this shard) the run does not know: one with no partition in the store
// or among this run's inputs, in no station list given and not in the
// built-in list. Its maxima could match no sounding, most likely because
// the id is mistyped or written in another scheme (a WMO number where the
// soundings use the archive's id), and the afternoon heights would then
// silently come from afternoon soundings instead. It runs after the
// inputs are staged, before anything is built.
func (r *run) checkDailyMaxima(next *store.Manifest, affected map[string]bool) error {
	f := r.opt.DailyMaxima
	if f == nil {
		return nil
	}
	held := map[string]bool{}
	for k := range affected {
		held[stationOfKey(k)] = true
	}
	for k := range next.Partitions {
		held[stationOfKey(k)] = true
	}
	builtin := formats.BuiltinStations()
	var unknown []string
	for id := range f.FirstLine {
		if !r.opt.Shard.Owns(id) || held[id] {
			continue
		}
		if _, ok := r.opt.Stations[id]; ok {
			continue
		}
		if _, ok := builtin[id]; ok {
			continue
		}
		unknown = append(unknown, id)
	}
	if len(unknown) == 0 {
		return nil
	}
	slices.SortFunc(unknown, func(a, b string) int { return f.FirstLine[a] - f.FirstLine[b] })
	ids := slices.Sorted(maps.Keys(held))
	hold := "no soundings yet"
	if len(ids) > 0 {
		if len(ids) > 5 {
			ids = append(ids[:5], "…")
		}
		hold = "soundings of " + strings.Join(ids, ", ")
	}
	more := ""
	if len(unknown) > 1 {
		more = fmt.Sprintf(" (and %d more unknown stations)", len(unknown)-1)
	}
	return &dailyMaximaError{fmt.Sprintf("daily maxima %s:%d: station %s is not known: no input, store partition or station list holds it%s; "+
		"the store and inputs hold %s. Write station ids as the soundings do, or leave that station out",
		f.Path, f.FirstLine[unknown[0]], ingest.Quote(unknown[0]), more, hold)}
}

// stationOfKey returns the station of a partition key "STATION/YEAR"
// (store.PartitionKey).
func stationOfKey(k string) string {
	station, _, err := store.SplitPartitionKey(k)
	if err != nil {
		return k
	}
	return station
}
