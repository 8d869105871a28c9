package engine

import (
	"archive/zip"
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/klauspost/compress/gzip"
	"golang.org/x/sync/errgroup"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/formats"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/schema/store"
	"github.com/sondeclim/sondeclim/sounding"
)

// segment is a run of soundings of one station-year: encoded soundings in
// a spill file, or, for an input read in place, lines of the input itself.
type segment struct {
	file      int // index into staged.files
	off, size int64
	count     int    // soundings (spill) or header records (in place)
	line      int    // in place: 1-based line of the range's first line in its member
	member    string // in place: the archive member the range comes from
	// head: every sounding of the segment lies in the head of its year
	// (sounding.InYearHead), the context of the previous year's build.
	head bool
}

// staged is what the reading phase leaves for the building phase: spill
// files and, per station-year, where its soundings are.
type staged struct {
	mu      sync.Mutex
	files   []string      // spill files, or the input itself when inPlace
	inputs  []string      // the input file each spill file holds
	inPlace []bool        // the input is read in place (plain archive-v2 file)
	stamp   []store.Input // in place: size and time of the input when indexed
	mem     []heldText    // in place: the text held in memory instead of files[i] (stagemem.go)
	uses    []int         // segment reads left per file, while building (countUses)
	byPart  map[string][]segment
	dropped map[int]bool // files whose staged soundings do not count (an input deferred by the run budget)
}

func (st *staged) add(key string, seg segment) {
	st.mu.Lock()
	st.byPart[key] = append(st.byPart[key], seg)
	st.mu.Unlock()
}

// readResult is what reading one input file produced.
type readResult struct {
	path  string
	info  store.Input
	parts map[string]int // station-year → soundings
	// deferred: not read because the run's decompressed-size budget was
	// used up; not recorded, so the next run reads it.
	deferred bool
}

// stageInputs reads files on a bounded pool and stages their soundings.
// keep, when not nil, gives for each file the station-years to stage from
// it (used to re-read unchanged inputs that share a partition with a
// changed one, or that hold the context of one); a nil set stages all.
func (r *run) stageInputs(files []string, st *staged, keep func(path string) map[string]bool) ([]readResult, error) {
	results := make([]readResult, len(files))
	g, ctx := errgroup.WithContext(r.ctx)
	g.SetLimit(r.workers)
	stop := r.reportReading(len(files))
	defer stop()
	// One set of buffers per reading goroutine (a compressed input read
	// whole, the text of one staged on disk), handed from one input to
	// the next (not a sync.Pool, which each collection empties).
	r.textBudget = &memBudget{limit: WholeTextBytes}
	srcs := make(chan *readBuffers, r.workers)
	for range r.workers {
		srcs <- new(readBuffers)
	}
	for i, path := range files {
		st.mu.Lock()
		fi := len(st.files)
		spill := filepath.Join(r.staging, strconv.Itoa(fi)+".bin")
		st.files = append(st.files, spill)
		st.inputs = append(st.inputs, path)
		st.inPlace = append(st.inPlace, false)
		st.stamp = append(st.stamp, store.Input{})
		st.mem = append(st.mem, heldText{})
		st.mu.Unlock()
		g.Go(func() error {
			var only map[string]bool
			if keep != nil {
				only = keep(path)
			}
			src := <-srcs // never waits: at most r.workers read at once
			res, err := r.stageFile(ctx, path, fi, spill, st, only, src)
			srcs <- src
			if err != nil {
				return err
			}
			results[i] = res
			r.mu.Lock()
			r.filesRead++
			r.mu.Unlock()
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	return results, nil
}

// readBuffers are the buffers one reading goroutine keeps from one input
// to the next: src for a compressed input read whole, text for the
// decoded text of one that is staged on disk (wholeGzip, wholeZip), whose
// capacity is charged to the run's textBudget (held is what it holds).
type readBuffers struct {
	src, text []byte
	held      int64
}

// roomFor makes buf.text hold hint bytes, charging what it grows by to
// budget, and reports whether it does; on false the input streams.
func (buf *readBuffers) roomFor(budget *memBudget, hint int64) bool {
	if hint <= 0 {
		return false
	}
	if hint <= buf.held {
		return true
	}
	// An eighth more, when the budget has it, so that inputs of about
	// the same size (one station-year each, say) reuse the buffer.
	for _, size := range []int64{hint + hint/8, hint} {
		if budget.take(size - buf.held) {
			buf.text = make([]byte, 0, size)
			buf.held = size
			return true
		}
	}
	return false
}

// WholeTextBytes bounds the buffers, bytes, that the reading goroutines
// together keep for the decoded text of compressed inputs the in-memory
// staging budget cannot hold, which are still decoded whole and written
// to their staging copy in one piece (wholeGzip); an input for which no
// such room is left streams. The buffers live while the inputs are read,
// not while station-years are built. Decoding whole instead of through
// the stream decoder took an ingest of 20 gzipped Sterling copies staged
// on disk (--staging-memory-bytes 0) from 1.33 to 1.06 s and one of the
// invented archive, 20 stations x 30 years gzipped (20 inputs of 89 MB of
// text), from 22.6-23.6 to 18.5-21.0 s, for a peak of 591-597 MB instead
// of 534-555 (5 December 2026, 2 workers, three alternating runs).
const WholeTextBytes = 256 << 20

// stageFile reads one input file (all its members) into its spill file.
// src holds the buffers for reading a compressed input whole, kept for the next
// input.
func (r *run) stageFile(ctx context.Context, path string, fi int, spill string, st *staged, keep map[string]bool, src *readBuffers) (readResult, error) {
	defer r.stage("read_parse", time.Now())
	res := readResult{path: path, parts: map[string]int{}}
	fst, err := os.Stat(path)
	if err != nil {
		r.skip(Skip{Where: path, Reason: "unreadable", Detail: err.Error()})
		return res, nil
	}
	res.info.SizeBytes, res.info.ModTime = fst.Size(), fst.ModTime().UTC()
	if ok, err := r.indexInPlace(ctx, path, fi, st, keep, &res, src); ok || err != nil {
		return res, err
	}
	out, err := os.Create(spill)
	if err != nil {
		return res, err
	}
	defer out.Close()
	w := &spillWriter{w: bufio.NewWriterSize(out, 1<<20), fi: fi, st: st}
	sum := sha256.New()
	budget := r.inputBudget()
	err = input.EachWithin(path, r.opt.SizeLimit, []*input.Budget{budget, r.runBudget}, func(member string, rd io.Reader) error {
		r.mu.Lock()
		r.sum.Members++
		r.mu.Unlock()
		io.WriteString(sum, member+"\x00")
		er := &readErr{r: rd}
		memberParts := map[string]int{}
		read := 0
		err := r.readMember(ctx, path, member, io.TeeReader(er, sum), func(s *sounding.Sounding) error {
			if err := store.CheckStationID(s.StationID); err != nil {
				r.badStation(s, err)
				return nil
			}
			if !r.opt.Shard.Owns(s.StationID) {
				r.mu.Lock()
				r.sum.OtherShards++
				r.mu.Unlock()
				return nil
			}
			key := store.PartitionKey(s.StationID, s.NominalTime.Year())
			if keep != nil && !keep[key] {
				return nil
			}
			memberParts[key]++
			read++
			return w.write(key, s)
		})
		if er.err != nil && ctx.Err() == nil && !isWriteError(err) {
			// The container is damaged. A cut stream (gzip, or a zip
			// member, ending early) holds a prefix of the data, in which
			// every sounding but the last was followed by more data, so
			// it is whole; the last may be cut and is dropped. Any other
			// damage (a CRC mismatch, corrupt compressed data, over the
			// size limit) may have altered any byte read: the member
			// contributes nothing.
			cut := errors.Is(er.err, io.ErrUnexpectedEOF)
			n := read
			if cut {
				n = 1
			}
			for _, k := range w.drop(n) {
				memberParts[k]--
			}
			r.mu.Lock()
			r.sum.SoundingsRead -= min(n, read)
			r.mu.Unlock()
			where := ingest.Where(path, member)
			kept := "none of its soundings are kept"
			reason := "corrupt_member"
			if cut {
				reason = "truncated"
				kept = fmt.Sprintf("the %d whole sounding(s) before the damage are kept, the last one read (which may be cut) is not", max(0, read-1))
			}
			w.commit()
			res.parts = addCounts(res.parts, memberParts)
			if errors.Is(er.err, ingest.ErrTooLarge) {
				return er.err // Each reports it for the file
			}
			r.skip(Skip{Where: where, Reason: reason, Detail: fmt.Sprintf("%s: damaged container (%v) at byte %d of its decompressed content: %s",
				where, er.err, er.at, kept)})
			return nil // the next members go on
		}
		w.commit()
		res.parts = addCounts(res.parts, memberParts)
		return err
	})
	var be *input.BudgetError
	if errors.As(err, &be) && be.Budget == r.runBudget {
		st.mu.Lock()
		st.dropped[fi] = true
		st.mu.Unlock()
		res.deferred = true
		r.skip(Skip{Where: path, Reason: "run_budget", Detail: fmt.Sprintf("%s: not ingested: this run has decompressed %d bytes, its budget "+
			"(--max-run-bytes); the next run reads it", path, r.runBudget.Limit)})
		return res, nil
	}
	if err != nil {
		if ctx.Err() != nil {
			return res, ctx.Err()
		}
		var pe *ingest.ParseError
		if errors.Is(err, ingest.ErrTooLarge) || errors.As(err, &pe) || !isWriteError(err) {
			r.skip(Skip{Where: path, Reason: reasonOf(err), Detail: err.Error()})
		} else {
			return res, err
		}
	}
	if err := w.close(); err != nil {
		return res, fmt.Errorf("staging %s: %w", path, err)
	}
	res.finish(sum)
	return res, nil
}

// finish records the input's digest and the station-years it holds.
func (res *readResult) finish(sum hash.Hash) {
	res.info.SHA256 = hex.EncodeToString(sum.Sum(nil))
	for k, n := range res.parts {
		res.info.Partitions = append(res.info.Partitions, k)
		res.info.Soundings += n
	}
	sort.Strings(res.info.Partitions)
}

// indexInPlace stages an archive-v2 file without decoding it: the file is
// indexed by station-year (archivev2.Index) and each partition later
// decodes its byte ranges. A plain file is read in place; a gzip file or a
// zip archive is decompressed once into a copy in the staging area, which
// is then read the same way. (Staging decoded soundings instead wrote more
// bytes than the text holds, and encoding and decoding them cost more than
// parsing.) It reports false, having staged nothing, when the file is not
// such a file (another format, a member that is not archive-v2, no
// readable header, over the size limit, unreadable); the caller then reads
// it the ordinary way, which reports why.
func (r *run) indexInPlace(ctx context.Context, path string, fi int, st *staged, keep map[string]bool, res *readResult, src *readBuffers) (bool, error) {
	if r.opt.decodeAll || r.opt.Format != "" && r.opt.Format != archivev2.Format {
		return false, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return false, nil
	}
	defer f.Close()
	head := make([]byte, 4096)
	n, _ := io.ReadFull(f, head)
	head = head[:n]
	compressed := input.KindOf(head) != input.Plain
	limit := r.opt.SizeLimit
	if limit <= 0 {
		limit = input.DefaultLimit
	}
	if !compressed && (res.info.SizeBytes > limit || r.opt.Format == "" && !archivev2.Sniff(head)) {
		return false, nil
	}

	ix := &indexer{r: r, ctx: ctx, fi: fi, keep: keep, parts: map[string]int{}}
	charged := r.runBudget.Used()
	sum := sha256.New() // the same digest as the ordinary path: per member, its name, NUL, content
	readFrom := path
	copyPath := filepath.Join(r.staging, strconv.Itoa(fi)+".txt")
	members := 0
	var held heldText // the text, when it is held in memory
	var cp *stagingCopy
	if !compressed {
		members = 1
		io.WriteString(sum, "\x00")
		// A plain file is not held in memory: reading it twice from the
		// page cache cost less processor time than faulting in fresh
		// memory for it (8 alternating runs, 2 December 2026).
		if _, err = f.Seek(0, io.SeekStart); err == nil {
			err = ix.member(func(fn func(archivev2.Segment) error) error {
				return archivev2.Index(io.TeeReader(f, sum), fn)
			}, "", 0)
		}
	} else {
		readFrom = copyPath
		var hint int64
		var zm *zip.File // the sole member of a zip input, when it is decoded whole
		switch input.KindOf(head) {
		case input.Gzip:
			hint = gzipSizeHint(f, res.info.SizeBytes, limit)
		case input.Zip:
			if zm = soleDeflated(f, res.info.SizeBytes, min(limit, r.inputBudget().Limit)); zm != nil {
				hint = int64(zm.UncompressedSize64)
			}
		}
		cp = newStagingCopy(r.memStage, copyPath, hint)
		err = func() error {
			inMemory := hint > 0 && cp.file == nil && int64(cap(cp.mem)) >= hint
			if inMemory || src.roomFor(r.textBudget, hint) {
				var done bool
				var err error
				if zm != nil {
					done, err = ix.wholeZip(zm, hint, cp, sum, src, !inMemory)
				} else {
					done, err = ix.wholeGzip(f, res.info.SizeBytes, limit, hint, cp, sum, src, !inMemory)
				}
				if done || err != nil {
					members = 1
					if err == nil {
						r.mu.Lock()
						r.sum.decodedWhole++
						r.mu.Unlock()
						held.text, held.held, err = cp.finish()
					}
					return err
				}
			}
			err := input.EachWithin(path, r.opt.SizeLimit, []*input.Budget{r.inputBudget(), r.runBudget}, func(member string, rd io.Reader) error {
				members++
				io.WriteString(sum, member+"\x00")
				sniff := r.opt.Format == ""
				if cp.file == nil {
					return ix.heldMember(rd, member, cp, sum, sniff)
				}
				return ix.copiedMember(io.TeeReader(rd, sum), member, cp, sniff)
			})
			if err != nil {
				return err
			}
			if members == 0 {
				return errNotInPlace
			}
			held.text, held.held, err = cp.finish()
			return err
		}()
	}
	if ctx.Err() != nil || err != nil {
		r.memStage.give(held.held)
		if cp != nil {
			cp.discard()
		}
	}
	if ctx.Err() != nil {
		return true, ctx.Err()
	}
	if isWriteError(err) {
		return true, fmt.Errorf("staging %s: %w", path, err)
	}
	if err != nil {
		// Not for this path (errNotInPlace, ErrNoHeaders) or a problem
		// the ordinary path reports with its usual reason. It reads the
		// bytes again, so what they cost the run's budget is given back
		// (concurrent charges by other inputs are counted with them).
		if compressed {
			r.runBudget.Refund(r.runBudget.Used() - charged)
		}
		if err := os.Remove(copyPath); err != nil && !errors.Is(err, fs.ErrNotExist) {
			r.log.Warn("staging copy could not be removed", "file", copyPath, "error", err.Error())
		}
		return false, nil
	}
	if held.text != nil {
		st.mu.Lock()
		st.mem[fi], st.inPlace[fi] = held, true
		for i, k := range ix.keys {
			st.byPart[k] = append(st.byPart[k], ix.segs[i])
		}
		st.mu.Unlock()
		r.mu.Lock()
		r.sum.stagedInMemory++
		r.mu.Unlock()
		r.indexed(ix, members, res, sum)
		return true, nil
	}
	cst, err := os.Stat(readFrom)
	if err != nil {
		return true, err
	}
	st.mu.Lock()
	st.files[fi], st.inPlace[fi] = readFrom, true
	st.stamp[fi] = store.Input{SizeBytes: cst.Size(), ModTime: cst.ModTime().UTC()}
	for i, k := range ix.keys {
		st.byPart[k] = append(st.byPart[k], ix.segs[i])
	}
	st.mu.Unlock()
	r.mu.Lock()
	r.sum.stagedOnDisk++
	r.mu.Unlock()
	r.indexed(ix, members, res, sum)
	return true, nil
}

// indexed counts what indexing one input found and completes its result.
func (r *run) indexed(ix *indexer, members int, res *readResult, sum hash.Hash) {
	r.mu.Lock()
	r.sum.Members += members
	r.sum.OtherShards += ix.otherShards
	r.mu.Unlock()
	maps.Copy(res.parts, ix.parts)
	res.finish(sum)
}

// errNotInPlace makes indexInPlace hand a file to the ordinary path.
var errNotInPlace = errors.New("not an archive-v2 file")

// indexer collects the segments of one input file's members.
type indexer struct {
	r           *run
	ctx         context.Context
	fi          int
	keep        map[string]bool
	segs        []segment
	keys        []string
	parts       map[string]int
	otherShards int
}

// wholeGzip decodes a gzip input of size bytes, read whole from f into
// buf.src (grown as needed, kept for the next input), in one call
// (input.Gunzip), and indexes its text. The text goes straight into the
// staging copy's memory, which holds the size hint its trailer states;
// with toDisk (the staging budget could not hold it) it goes into
// buf.text, which roomFor made hold hint bytes, instead and is written to
// the staging copy's file in one piece. done is false, with nothing
// charged or staged, when Gunzip does not decode it (damaged, or larger
// than the room: several members, a trailer that states too little) or
// the run's budget does not hold it: the caller then reads it
// as a stream, which reports what is wrong. The file is sniffed as the
// stream is, from its first 4096 decompressed bytes, so the same files are
// read in place. (On disk, the stream decoder's way cost about a third
// more processor time for the same bytes; 5 December 2026, 20 gzipped
// Sterling copies with --staging-memory-bytes 0.)
func (ix *indexer) wholeGzip(f *os.File, size, limit, hint int64, cp *stagingCopy, sum hash.Hash, buf *readBuffers, toDisk bool) (done bool, err error) {
	buf.src = slices.Grow(buf.src[:0], int(size)+1)
	src := buf.src[:size+1]
	if n, err := f.ReadAt(src, 0); int64(n) != size || err != io.EOF && err != nil {
		return false, nil // changed since it was looked at, or unreadable
	}
	src = src[:size]
	if ix.r.opt.Format == "" {
		zr, err := gzip.NewReader(bytes.NewReader(src))
		if err != nil {
			return false, nil
		}
		head := make([]byte, sniffBytes)
		n, _ := io.ReadFull(zr, head)
		if !archivev2.Sniff(head[:n]) {
			return false, errNotInPlace
		}
	}
	text, err := input.Gunzip(textRoom(cp, buf, hint, toDisk), src, min(limit, ix.r.inputBudget().Limit))
	if err != nil || !ix.r.runBudget.Charge(int64(len(text))) {
		return false, nil
	}
	return true, ix.stageWhole(text, "", cp, sum, buf, toDisk)
}

// textRoom returns the empty slice a whole input's text of hint bytes is
// decoded into: the staging copy's memory, or with toDisk buf.text.
func textRoom(cp *stagingCopy, buf *readBuffers, hint int64, toDisk bool) []byte {
	if !toDisk {
		return cp.mem[:0]
	}
	return buf.text[:0] // roomFor made it hold hint bytes
}

// soleDeflated returns the one regular member of the zip archive f (size
// bytes) when it is stored with the deflate method and states an
// uncompressed size between 1 and limit bytes, and nil otherwise (several
// members, another method, an unreadable directory): the archive is then
// read as a stream, which reports what is wrong. The archive's station
// files are such zips, one text file each.
func soleDeflated(f *os.File, size, limit int64) *zip.File {
	zr, err := zip.NewReader(f, size)
	if err != nil {
		return nil
	}
	var sole *zip.File
	for _, zf := range zr.File {
		if !zf.Mode().IsRegular() || strings.HasSuffix(zf.Name, "/") {
			continue // as input.Each skips them
		}
		if sole != nil {
			return nil
		}
		sole = zf
	}
	// Flag bit 0: the member is encrypted (APPNOTE.TXT §4.4.4), which the
	// stream's reader refuses and reports.
	if sole == nil || sole.Method != zip.Deflate || sole.Flags&1 != 0 || sole.UncompressedSize64 == 0 ||
		sole.UncompressedSize64 > uint64(limit) || sole.CompressedSize64 > uint64(size) {
		return nil
	}
	return sole
}

// wholeZip decodes the sole member zm of a zip input (soleDeflated), its
// compressed bytes read whole into buf.src, in one call (input.Inflate,
// which checks its size and CRC-32) and indexes its text, as wholeGzip
// does a gzip input and with the same outcomes; the member is sniffed on
// the first 4096 bytes of its text, as the stream is.
func (ix *indexer) wholeZip(zm *zip.File, hint int64, cp *stagingCopy, sum hash.Hash, buf *readBuffers, toDisk bool) (done bool, err error) {
	raw, err := zm.OpenRaw()
	if err != nil {
		return false, nil
	}
	n := int(zm.CompressedSize64)
	buf.src = slices.Grow(buf.src[:0], n)
	src := buf.src[:n]
	if _, err := io.ReadFull(raw, src); err != nil {
		return false, nil
	}
	text, err := input.Inflate(textRoom(cp, buf, hint, toDisk), src, zm.UncompressedSize64, zm.CRC32)
	if err != nil {
		return false, nil
	}
	if ix.r.opt.Format == "" && !archivev2.Sniff(text[:min(len(text), sniffBytes)]) {
		return false, errNotInPlace
	}
	if !ix.r.runBudget.Charge(int64(len(text))) {
		return false, nil
	}
	return true, ix.stageWhole(text, zm.Name, cp, sum, buf, toDisk)
}

// stageWhole stages the decoded text of an input's one member: it is the
// staging copy's memory already, or with toDisk (in buf.text) it is
// written to the copy's file; then it is added to sum (the member name,
// NUL, the text, as the stream path does) and indexed.
func (ix *indexer) stageWhole(text []byte, member string, cp *stagingCopy, sum hash.Hash, buf *readBuffers, toDisk bool) error {
	if toDisk {
		if err := cp.spill(); err != nil {
			return &writeError{err}
		}
		if _, err := cp.Write(text); err != nil {
			return err
		}
	} else {
		cp.mem, cp.n = text, int64(len(text))
	}
	io.WriteString(sum, member+"\x00")
	sum.Write(text)
	return ix.member(func(fn func(archivev2.Segment) error) error {
		return archivev2.IndexBytes(text, fn)
	}, member, 0)
}

// sniffBytes is how much of a member's text tells whether it is an
// archive-v2 file (archivev2.Sniff).
const sniffBytes = 4096

// heldMember reads one member of a compressed input from rd to its end
// straight into the staging copy's memory, which must not have spilled,
// adding its bytes to sum, and indexes it there. (Reading through a
// buffer and copying it into the staging copy cost a memory copy of the
// whole text; the decompressed size is known from the gzip trailer, so
// the memory is usually taken once, gzipSizeHint.) When the staging
// budget cannot hold the member, the copy spills and the member goes on
// as copiedMember, from the bytes already read. With sniff, a member whose
// first bytes are not archive-v2 text is errNotInPlace.
func (ix *indexer) heldMember(rd io.Reader, member string, cp *stagingCopy, sum hash.Hash, sniff bool) error {
	base := len(cp.mem)
	for {
		var n int
		var err error
		if at := len(cp.mem); at < cap(cp.mem) {
			n, err = rd.Read(cp.mem[at:cap(cp.mem)])
			cp.mem = cp.mem[:at+n]
			sum.Write(cp.mem[at:])
		} else {
			// Full: make room only when bytes really follow (a stated
			// size that is exact ends here, at io.EOF), a MiB beyond
			// them when the budget allows.
			probe := make([]byte, 4096)
			n, err = rd.Read(probe)
			probe = probe[:n]
			sum.Write(probe)
			if n > 0 && !cp.grow(at+n+1<<20) && !cp.grow(at+n) {
				rest := io.MultiReader(bytes.NewReader(cp.mem[base:]), bytes.NewReader(probe), io.TeeReader(rd, sum))
				cp.mem, cp.n = cp.mem[:base], int64(base)
				if err := cp.spill(); err != nil {
					return &writeError{err}
				}
				return ix.copiedMember(rest, member, cp, sniff)
			}
			cp.mem = append(cp.mem, probe...)
		}
		cp.n += int64(n)
		if sniff && (len(cp.mem)-base >= sniffBytes || err != nil) {
			if !archivev2.Sniff(cp.mem[base:min(len(cp.mem), base+sniffBytes)]) {
				return errNotInPlace
			}
			sniff = false
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
	}
	return ix.member(func(fn func(archivev2.Segment) error) error {
		return archivev2.IndexBytes(cp.mem[base:], fn)
	}, member, int64(base))
}

// copiedMember indexes one member of a compressed input read from rd
// while copying it into the staging copy; with sniff, a member whose first
// bytes are not archive-v2 text is errNotInPlace.
func (ix *indexer) copiedMember(rd io.Reader, member string, cp *stagingCopy, sniff bool) error {
	br := bufio.NewReaderSize(rd, 1<<16)
	if h, _ := br.Peek(sniffBytes); sniff && !archivev2.Sniff(h) {
		return errNotInPlace
	}
	return ix.member(func(fn func(archivev2.Segment) error) error {
		return archivev2.Index(io.TeeReader(br, cp), fn)
	}, member, cp.n)
}

// member indexes one member through index (archivev2.Index of the member,
// or IndexBytes), its first byte being at offset base of the file the
// partitions will read.
func (ix *indexer) member(index func(fn func(archivev2.Segment) error) error, member string, base int64) error {
	err := index(func(sg archivev2.Segment) error {
		if err := ix.ctx.Err(); err != nil {
			return err
		}
		if store.CheckStationID(sg.StationID) != nil {
			// The ordinary path rejects each such sounding with its line.
			return errNotInPlace
		}
		if !ix.r.opt.Shard.Owns(sg.StationID) {
			ix.otherShards += sg.Headers
			return nil
		}
		key := store.PartitionKey(sg.StationID, sg.Year)
		if ix.keep != nil && !ix.keep[key] {
			return nil
		}
		ix.parts[key] += sg.Headers
		ix.segs = append(ix.segs, segment{file: ix.fi, off: base + sg.Offset, size: sg.Size, count: sg.Headers,
			line: sg.FirstLine, member: member, head: sg.Head})
		ix.keys = append(ix.keys, key)
		return nil
	})
	if errors.Is(err, archivev2.ErrNoHeaders) {
		return errNotInPlace
	}
	return err
}

// readInPlace decodes one in-place segment (the bytes of buf) of input
// path: soundings are returned, rejected ones reported as skips, as
// reading the whole file would. Their levels are kept in levels (nil: the
// heap).
func (r *run) readInPlace(buf []byte, path string, sg segment, levels *sounding.LevelArena) ([]*sounding.Sounding, error) {
	defer r.stage("read_parse", time.Now())
	rd := archivev2.NewReaderBytesAt(buf, path, sg.member, sg.line)
	rd.UseLevelArena(levels)
	var out []*sounding.Sounding
	for {
		s, err := rd.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			if err := r.rejected(ingest.Where(path, sg.member), err); err != nil {
				return nil, err
			}
			continue
		}
		r.accepted(s)
		out = append(out, s)
	}
	return out, nil
}

// rejected reports a reader's error for one item (an *ingest.ParseError)
// as a skip and returns nil; any other error means the input itself
// failed and is returned, naming where.
func (r *run) rejected(where string, err error) error {
	var pe *ingest.ParseError
	if !errors.As(err, &pe) {
		return fmt.Errorf("%s: %w", where, err)
	}
	s := Skip{Where: where, Reason: reasonOf(err), Detail: err.Error()}
	if isRemark(err) {
		r.note(s)
		return nil
	}
	r.skip(s)
	return nil
}

// isRemark reports whether a reader's error loses no data: a report that
// carries none (NIL parts are dropped by the readers themselves; parts
// with only regional remarks come here), or a sounding read except for
// groups the reader names. Remarks are counted in Summary.Notes and do
// not make the run's exit code say that input was skipped.
func isRemark(err error) bool {
	return errors.Is(err, ingest.ErrNoData) || errors.Is(err, ingest.ErrPartlyDecoded)
}

// accepted completes a sounding's station metadata from the station list
// and counts it as read.
func (r *run) accepted(s *sounding.Sounding) {
	if info, ok := r.opt.Stations[s.StationID]; ok {
		info.Fill(s)
	}
	r.mu.Lock()
	r.sum.SoundingsRead++
	if math.IsNaN(s.LatitudeDeg) || math.IsNaN(s.LongitudeDeg) {
		if r.noPosition == nil {
			r.noPosition = map[string]int{}
		}
		r.noPosition[s.StationID]++
	}
	if math.IsNaN(s.ElevationM) {
		if r.noElevation == nil {
			r.noElevation = map[string]int{}
		}
		r.noElevation[s.StationID]++
	}
	r.mu.Unlock()
}

// takeStationLists removes the station lists among files and merges them
// into the run's station metadata (opt.Stations first, then the lists in
// input order, then the built-in list unless opt.NoBuiltinStations), and
// returns the other files.
func (r *run) takeStationLists(files []string) []string {
	before := len(files)
	files, r.opt.Stations = formats.TakeStationLists(files, r.opt.SizeLimit, r.opt.Stations, func(path string, err error) {
		r.skip(Skip{Where: path, Reason: "station_list_lines", Detail: err.Error()})
	})
	r.sum.StationLists = before - len(files)
	if !r.opt.NoBuiltinStations {
		r.opt.Stations = formats.WithBuiltin(r.opt.Stations)
	}
	return files
}

// warnMetadata logs, once per run, the soundings whose station position or
// elevation is unknown, naming up to five stations and what is affected:
// without a position there is no sun elevation or sun class (the radiation
// inversion class and the day-only allowances need it), no hemisphere for
// the season names and no local solar day for the afternoon pairing;
// without an elevation heights above ground are measured from the lowest
// level with a height, no surface pressure can be derived for a surface
// line without one, and the surface-gap check is not made. The counts go
// to the summary.
func (r *run) warnMetadata() {
	names := func(m map[string]int) (n int, ids []string) {
		for id, c := range m {
			n += c
			ids = append(ids, id)
		}
		sort.Strings(ids)
		if len(ids) > 5 {
			ids = append(ids[:5], "…")
		}
		return n, ids
	}
	if n, ids := names(r.noPosition); n > 0 {
		r.sum.NoPosition = n
		r.log.Warn("soundings without a station position: no sun class, no hemisphere season names, no afternoon pairing; give a station list (--stations)",
			"soundings", n, "stations", strings.Join(ids, ","))
	}
	if n, ids := names(r.noElevation); n > 0 {
		r.sum.NoElevation = n
		r.log.Warn("soundings without a station elevation: heights above ground start at the lowest level with a height, no surface pressure is derived; give a station list (--stations)",
			"soundings", n, "stations", strings.Join(ids, ","))
	}
}

// badStation rejects a decoded sounding whose station identifier cannot be
// stored (store.CheckStationID), naming its source line; the rest of the
// input goes on. It was counted as read, so the count is taken back.
func (r *run) badStation(s *sounding.Sounding, err error) {
	r.mu.Lock()
	r.sum.SoundingsRead--
	r.mu.Unlock()
	r.skip(Skip{Where: s.Source.String(), Reason: "bad_station_id", Detail: s.Source.String() + ": " + err.Error()})
}

// writeError marks failures of the staging area (the store's disk), which
// stop the run, unlike failures of the input.
type writeError struct{ err error }

func (e *writeError) Error() string { return "staging: " + e.err.Error() }
func (e *writeError) Unwrap() error { return e.err }

func isWriteError(err error) bool {
	var we *writeError
	return errors.As(err, &we)
}

// spillWriter appends encoded soundings to one spill file, recording one
// segment per run of consecutive soundings of the same station-year and
// part of it (the head of the year, or the rest). The
// soundings of the member being read are tentative until commit: a member
// that turns out damaged (a zip CRC failure, a cut gzip stream) is taken
// back whole or in part by drop, and its bytes in the spill file are then
// referenced by no segment.
type spillWriter struct {
	w       *bufio.Writer
	fi      int
	st      *staged
	off     int64
	pending []spilled // the current member's soundings, in order
	buf     []byte
}

// spilled is one tentative sounding of a spill file.
type spilled struct {
	key       string
	head      bool
	off, size int64
}

func (w *spillWriter) write(key string, s *sounding.Sounding) error {
	w.buf = sounding.AppendBinary(w.buf[:0], s, true)
	n, err := w.w.Write(w.buf)
	if err != nil {
		return &writeError{err}
	}
	w.pending = append(w.pending, spilled{key, sounding.InYearHead(s.NominalTime), w.off, int64(n)})
	w.off += int64(n)
	return nil
}

// drop takes back the last n tentative soundings (all of them when n is
// larger) and returns their keys.
func (w *spillWriter) drop(n int) []string {
	n = min(n, len(w.pending))
	var keys []string
	for _, p := range w.pending[len(w.pending)-n:] {
		keys = append(keys, p.key)
	}
	w.pending = w.pending[:len(w.pending)-n]
	return keys
}

// commit records the tentative soundings as segments.
func (w *spillWriter) commit() {
	var cur string
	var seg segment
	for _, p := range w.pending {
		if p.key != cur || p.head != seg.head || p.off != seg.off+seg.size {
			if seg.count > 0 {
				w.st.add(cur, seg)
			}
			cur, seg = p.key, segment{file: w.fi, off: p.off, head: p.head}
		}
		seg.size += p.size
		seg.count++
	}
	if seg.count > 0 {
		w.st.add(cur, seg)
	}
	w.pending = w.pending[:0]
}

func (w *spillWriter) close() error {
	w.commit()
	return w.w.Flush()
}

// readErr remembers the first error other than io.EOF that reading a
// member's bytes gave: a damaged container (zip CRC, a cut or corrupt
// gzip stream, the size limit), as opposed to what the reader made of the
// bytes.
type readErr struct {
	r   io.Reader
	err error
	at  int64 // bytes read before err
}

func (e *readErr) Read(p []byte) (int, error) {
	n, err := e.r.Read(p)
	if e.err == nil {
		e.at += int64(n)
		if err != nil && err != io.EOF {
			e.err = err
		}
	}
	return n, err
}

// readMember decodes one file or archive member and hands each sounding to
// emit. Errors from the reader for single soundings or lines are reported
// through skip and reading continues; a reader that keeps failing is
// stopped after maxConsecutive errors to guarantee progress.
func (r *run) readMember(ctx context.Context, path, member string, rd io.Reader, emit func(*sounding.Sounding) error) error {
	br := bufio.NewReaderSize(rd, 1<<16)
	prefix, _ := br.Peek(4096)
	where := ingest.Where(path, member)
	said := 0 // soundings, errors and notes the reader gave
	fr, err := formats.Open(r.opt.Format, prefix, br, path, member,
		formats.Options{Stations: r.opt.Stations, Note: func(n formats.Note) { said++; r.note(Skip(n)) }})
	if err != nil {
		r.skip(Skip{Where: where, Reason: reasonOf(err), Detail: err.Error()})
		return nil
	}
	const maxConsecutive = 10000
	bad := 0
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		s, err := fr.Next()
		if err == io.EOF {
			if said == 0 {
				r.yieldsNothing(where, prefix)
			}
			return nil
		}
		said++
		if err != nil {
			if err := r.rejected(where, err); err != nil {
				return err
			}
			if bad++; bad > maxConsecutive {
				return fmt.Errorf("%s: too many consecutive errors, giving up on this input", where)
			}
			continue
		}
		bad = 0
		r.accepted(s)
		if err := emit(s); err != nil {
			return err
		}
	}
}

// yieldsNothing reports an input that its reader read to the end without
// a sounding, an error or a note. Under a format forced by --format that
// is a skip (the input is most likely another format, and its data would
// be lost without a word); under the detected format a note (a header-only
// table, a bulletin of NIL reports).
func (r *run) yieldsNothing(where string, prefix []byte) {
	if r.opt.Format == "" {
		r.note(Skip{Where: where, Reason: "no_soundings", Detail: where + ": " + ingest.ErrNoSoundings.Error() +
			" (read to the end without an error)"})
		return
	}
	detected := "no known format"
	if f, ok := formats.Detect(prefix); ok {
		detected = f.Name
	}
	err := &ingest.ParseError{File: where, Offset: -1, Err: fmt.Errorf("%w: read as %s (--format) to the end without a sounding or an error; "+
		"its content looks like %s", ingest.ErrNoSoundings, r.opt.Format, detected)}
	r.skip(Skip{Where: where, Reason: reasonOf(err), Detail: err.Error()})
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
		{ingest.ErrPartlyDecoded, "read_in_part"},
		{ingest.ErrJunk, "junk"},
		{ingest.ErrNoSoundings, "no_soundings"},
	} {
		if errors.Is(err, k.e) {
			return k.name
		}
	}
	return "unreadable"
}

// reportReading logs the reading progress every ProgressEvery until the
// returned function is called.
func (r *run) reportReading(total int) (stop func()) {
	every := r.opt.ProgressEvery
	if every <= 0 {
		every = 5 * time.Second
	}
	done := make(chan struct{})
	tick := time.NewTicker(every)
	go func() {
		defer tick.Stop()
		for {
			select {
			case <-done:
				return
			case <-tick.C:
				r.mu.Lock()
				files, n := r.filesRead, r.sum.SoundingsRead
				r.mu.Unlock()
				r.log.Info("progress: reading", "files_done", files, "files", total, "soundings_read", n)
			}
		}
	}()
	return func() { close(done) }
}

// addCounts returns a with b's counts added (keys whose sum is 0 left out).
func addCounts(a, b map[string]int) map[string]int {
	out := maps.Clone(a)
	for k, v := range b {
		if out[k] += v; out[k] == 0 {
			delete(out, k)
		}
	}
	return out
}

// Default decompressed-size budgets (bytes): 8 GiB per input (a zip of
// many members counts them together), 256 GiB per run (the staging area
// holds decompressed copies, so this bounds its disk use). A nightly run
// over an archive larger than the run's budget ingests the rest on the
// following runs.
const (
	DefaultInputBudget int64 = 8 << 30
	DefaultRunBudget   int64 = 256 << 30
	// DefaultMaxPartitionBytes is 128 MiB: about 280 high-resolution
	// soundings of 5 000 levels (96 bytes a level staged, measured on a
	// real flight), while a year of real twice-daily soundings of one
	// station takes a few MB. Building a station-year near the bound peaks
	// at about 830 MB (README, Memory), under the README's 1 GB; a
	// high-resolution year (about 350 MB) took 1.6 GB and is refused.
	DefaultMaxPartitionBytes int64 = 128 << 20
)

func (r *run) inputBudget() *input.Budget {
	n := r.opt.InputBudget
	if n <= 0 {
		n = DefaultInputBudget
	}
	return &input.Budget{Limit: n, What: "per input (--max-input-bytes)"}
}
