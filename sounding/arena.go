package sounding

// LevelArena hands out the Levels slices of many soundings from a few
// large blocks that are used again once those soundings are dropped
// (Reset). A station-year of twice-daily soundings holds some 130,000
// levels of about 128 bytes each: allocated afresh for every station-year
// they were zeroed and faulted in page by page, and left the collector
// garbage worth a whole station-year each time. The zero LevelArena is
// ready to use; it is not safe for concurrent use.
type LevelArena struct {
	blocks []arenaBlock
	cur    int // block being handed out
	// last is the slice Take or Grow returned last, which Grow may
	// extend and Trim shorten in place.
	last []Level
}

// arenaBlock is one block of an arena: levels[:used] are handed out, and
// levels[dirty:] hold zero values (levels[used:dirty] may hold old ones).
type arenaBlock struct {
	levels      []Level
	used, dirty int
}

// arenaBlockLevels is the size of an arena block, levels (2 MiB): a
// sounding larger than that gets memory of its own.
const arenaBlockLevels = 16 << 10

// Take returns an empty slice of capacity n whose levels, once appended,
// start as zero Levels.
func (a *LevelArena) Take(n int) []Level {
	if n > arenaBlockLevels {
		a.last = nil
		return make([]Level, 0, n)
	}
	if a.cur >= len(a.blocks) || len(a.blocks[a.cur].levels)-a.blocks[a.cur].used < n {
		if a.cur < len(a.blocks) && a.blocks[a.cur].used > 0 {
			a.cur++
		}
		if a.cur == len(a.blocks) {
			a.blocks = append(a.blocks, arenaBlock{levels: make([]Level, arenaBlockLevels)})
		}
	}
	b := &a.blocks[a.cur]
	start := b.used
	b.used += n
	if start < b.dirty {
		clear(b.levels[start:min(b.used, b.dirty)])
	}
	b.dirty = max(b.dirty, b.used)
	a.last = b.levels[start:start:b.used]
	return a.last
}

// Grow returns s, the slice Take or Grow returned last, with capacity for
// n levels: extended in place when its block has room, or else copied
// into a new slice.
func (a *LevelArena) Grow(s []Level, n int) []Level {
	if n <= cap(s) {
		return s
	}
	if a.isLast(s) {
		b := &a.blocks[a.cur]
		start := b.used - cap(s)
		if start+n <= len(b.levels) {
			if b.used < b.dirty {
				clear(b.levels[b.used:min(start+n, b.dirty)])
			}
			b.used = start + n
			b.dirty = max(b.dirty, b.used)
			a.last = b.levels[start : start+len(s) : b.used]
			return a.last
		}
		b.used = start // given back: s moves out of the block
	}
	t := append(a.Take(n), s...)
	if a.last != nil {
		a.last = t
	}
	return t
}

// Trim gives the arena back the capacity of s, the slice Take or Grow
// returned last, beyond its length, and returns s without it.
func (a *LevelArena) Trim(s []Level) []Level {
	if a.isLast(s) {
		a.blocks[a.cur].used -= cap(s) - len(s)
		a.last = nil
	}
	return s[:len(s):len(s)]
}

// isLast reports whether s is the slice Take or Grow returned last.
func (a *LevelArena) isLast(s []Level) bool {
	return a.last != nil && cap(s) > 0 && cap(s) == cap(a.last) && &s[:1][0] == &a.last[:1][0]
}

// Shrink lets the arena keep memory for at most n levels (whole blocks),
// giving the rest to the collector; like Reset, it may be called only
// when no slice the arena handed out is in use any more. A station-year
// far larger than usual is not held on to for the next ones.
func (a *LevelArena) Shrink(n int) {
	keep := (n + arenaBlockLevels - 1) / arenaBlockLevels
	if len(a.blocks) > keep {
		clear(a.blocks[keep:])
		a.blocks = a.blocks[:keep]
	}
	a.Reset()
}

// Reset makes all the arena's memory available again. Every slice it
// handed out must be out of use: the next Take hands the same memory out.
func (a *LevelArena) Reset() {
	for i := range a.blocks {
		a.blocks[i].used = 0
	}
	a.cur, a.last = 0, nil
}
