package engine

import (
	"bufio"
	"encoding/binary"
	"io"
	"os"
	"sync/atomic"
)

// DefaultStagingMemoryBytes is 128 MiB: the decompressed archive-v2 text
// of gzip and zip inputs held in memory instead of a copy in the staging
// folder, all inputs together. A year of twice-daily
// soundings of one station is about 7 MB of text, so a run over a few
// dozen station files needs no staging copy on disk; an archive larger
// than the budget spills the rest to the staging folder as before. The
// text of a station-year is part of what building it holds anyway (it is
// counted in --max-partition-bytes), so the budget adds at most its own
// size to the peak memory the README states.
const DefaultStagingMemoryBytes int64 = 128 << 20

// memBudget bounds the bytes of decompressed text held in memory by all
// inputs of a run together. It is safe for concurrent use.
type memBudget struct {
	limit int64
	used  atomic.Int64
}

// take charges n bytes and reports whether they fit; on false nothing is
// charged.
func (b *memBudget) take(n int64) bool {
	if b == nil || n > b.limit {
		return false
	}
	if b.used.Add(n) > b.limit {
		b.used.Add(-n)
		return false
	}
	return true
}

// give returns n bytes charged by take.
func (b *memBudget) give(n int64) {
	if b != nil {
		b.used.Add(-n)
	}
}

// stagingMemory returns the run's in-memory staging budget (nil: none).
func (r *run) stagingMemory() *memBudget {
	switch n := r.opt.StagingMemoryBytes; {
	case n < 0:
		return nil
	case n == 0:
		return &memBudget{limit: DefaultStagingMemoryBytes}
	default:
		return &memBudget{limit: n}
	}
}

// stagingCopy receives the decompressed text of one input: in memory
// while its capacity fits the budget, then (spilled) in its file in the
// staging folder, with what was held in memory written first. A write
// error is a writeError (the staging disk, not the input).
type stagingCopy struct {
	budget *memBudget
	path   string
	mem    []byte
	held   int64 // bytes charged to budget: mem's capacity
	file   *os.File
	bw     *bufio.Writer
	n      int64 // bytes written
}

// newStagingCopy starts a copy whose final size is expected near hint
// bytes (0: unknown); the memory for it is taken at once when it fits.
func newStagingCopy(budget *memBudget, path string, hint int64) *stagingCopy {
	c := &stagingCopy{budget: budget, path: path}
	if hint > 0 && budget.take(hint) {
		c.mem, c.held = make([]byte, 0, hint), hint
	}
	return c
}

func (c *stagingCopy) Write(p []byte) (int, error) {
	if c.file == nil && len(c.mem)+len(p) > cap(c.mem) && !c.grow(len(c.mem)+len(p)) {
		if err := c.spill(); err != nil {
			return 0, &writeError{err}
		}
	}
	if c.file == nil {
		c.mem = append(c.mem, p...)
		c.n += int64(len(p))
		return len(p), nil
	}
	n, err := c.bw.Write(p)
	c.n += int64(n)
	if err != nil {
		return n, &writeError{err}
	}
	return n, nil
}

// grow makes room in memory for need bytes, doubling the capacity when
// the budget allows it and taking exactly need bytes otherwise; false
// when neither fits.
func (c *stagingCopy) grow(need int) bool {
	for _, size := range []int{max(2*cap(c.mem), need, 1<<20), need} {
		if c.budget.take(int64(size) - c.held) {
			mem := make([]byte, len(c.mem), size)
			copy(mem, c.mem)
			c.mem, c.held = mem, int64(size)
			return true
		}
	}
	return false
}

// spill moves the copy to its file in the staging folder.
func (c *stagingCopy) spill() error {
	f, err := os.Create(c.path)
	if err != nil {
		return err
	}
	c.file, c.bw = f, bufio.NewWriterSize(f, 1<<20)
	_, err = c.bw.Write(c.mem)
	c.budget.give(c.held)
	c.mem, c.held = nil, 0
	return err
}

// finish completes the copy: its bytes in memory (and the budget bytes
// they hold), or nil when it was spilled to its file, which is then
// flushed and closed.
func (c *stagingCopy) finish() ([]byte, int64, error) {
	if c.file == nil {
		return c.mem, c.held, nil
	}
	if err := c.bw.Flush(); err != nil {
		c.file.Close()
		return nil, 0, &writeError{err}
	}
	if err := c.file.Close(); err != nil {
		return nil, 0, &writeError{err}
	}
	return nil, 0, nil
}

// discard gives back what the copy holds (the file is removed by the
// caller).
func (c *stagingCopy) discard() {
	c.budget.give(c.held)
	c.mem, c.held = nil, 0
	if c.file != nil {
		c.file.Close()
	}
}

// gzipSizeHint returns the decompressed size a gzip file states in its
// trailer (ISIZE, RFC 1952 §2.3.1: the size modulo 2^32 of its last
// member), when it is plausible for a file of size bytes: at least the
// compressed size and at most limit; otherwise 0. It is only a hint for
// the first allocation: a file of several members, or one that lies, is
// copied whole all the same.
func gzipSizeHint(f *os.File, size, limit int64) int64 {
	if size < 18 {
		return 0
	}
	var tail [4]byte
	if _, err := f.ReadAt(tail[:], size-4); err != nil && err != io.EOF {
		return 0
	}
	n := int64(binary.LittleEndian.Uint32(tail[:]))
	if n < size || n > limit {
		return 0
	}
	return n
}

// heldText is the text of an input held in memory: the bytes and the
// budget they hold.
type heldText struct {
	text []byte
	held int64
}

// countUses sets, for every file held in memory, the number of segment
// reads the builds of keys will make from it (a partition's segments, and
// the head segments of the next year, its context); files no build reads
// are released at once.
func (st *staged) countUses(keys []string, budget *memBudget) {
	st.mu.Lock()
	defer st.mu.Unlock()
	st.uses = make([]int, len(st.files))
	st.eachUse(keys, func(fi int) { st.uses[fi]++ })
	for fi := range st.mem {
		if st.mem[fi].text != nil && st.uses[fi] == 0 {
			budget.give(st.mem[fi].held)
			st.mem[fi] = heldText{}
		}
	}
}

// release counts the reads of the build of partition k as done, freeing
// the memory of every file it was the last to read.
func (st *staged) release(k string, budget *memBudget) {
	st.mu.Lock()
	defer st.mu.Unlock()
	st.eachUse([]string{k}, func(fi int) {
		if st.uses[fi]--; st.uses[fi] == 0 && fi < len(st.mem) {
			budget.give(st.mem[fi].held)
			st.mem[fi] = heldText{}
		}
	})
}

// eachUse calls fn with the file of every segment read by the builds of
// keys, once per read (buildPartition and readHead). st.mu is held.
func (st *staged) eachUse(keys []string, fn func(fi int)) {
	for _, k := range keys {
		for _, sg := range st.byPart[k] {
			if !st.dropped[sg.file] {
				fn(sg.file)
			}
		}
		next, ok := neighbourKey(k, 1)
		if !ok {
			continue
		}
		for _, sg := range st.byPart[next] {
			if sg.head && !st.dropped[sg.file] {
				fn(sg.file)
			}
		}
	}
}

// heldBytes returns the text of file fi when it is held in memory.
func (st *staged) heldBytes(fi int) []byte {
	st.mu.Lock()
	defer st.mu.Unlock()
	if fi < len(st.mem) {
		return st.mem[fi].text
	}
	return nil
}
