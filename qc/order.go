package qc

import (
	"math"
	"slices"
	"sort"

	"github.com/sondeclim/sondeclim/sounding"
)

// longestRun returns, for the values x[idx[0]], x[idx[1]], … taken in
// that order, a membership mask (indexed like idx) of one longest strictly
// increasing subsequence of key(x) (patience method, O(n log n)). Of
// equally long subsequences it keeps the one that ends on the smallest
// keys, so for two adjacent values in the wrong order the earlier one is
// left out. The mask lives in sc (sc.keep) until the next call.
func longestRun(sc *scratch, idx []int, key func(i int) float64) []bool {
	n := len(idx)
	tails := sc.tails[:0] // positions in idx of the smallest tail of each length
	prev := slices.Grow(sc.prev[:0], n)[:n]
	for pos, i := range idx {
		k := key(i)
		// Tails' keys increase, so a key above the last one extends the
		// longest run (the common case: values in order) without a search.
		l := len(tails)
		if l > 0 && !(key(idx[tails[l-1]]) < k) {
			l = sort.Search(len(tails), func(j int) bool { return key(idx[tails[j]]) >= k })
		}
		if l > 0 {
			prev[pos] = tails[l-1]
		} else {
			prev[pos] = -1
		}
		if l == len(tails) {
			tails = append(tails, pos)
		} else {
			tails[l] = pos
		}
	}
	sc.tails, sc.prev = tails, prev
	keep := slices.Grow(sc.keep[:0], n)[:n]
	clear(keep)
	sc.keep = keep
	if len(tails) == 0 {
		return keep
	}
	for pos := tails[len(tails)-1]; pos >= 0; pos = prev[pos] {
		keep[pos] = true
	}
	return keep
}

// pressureOrder flags the levels whose pressure breaks the strictly
// decreasing order (METHODS §6 "Monotonic pressure"): every level outside
// one longest strictly decreasing run of pressures is bad, and with it the
// whole level. Quality control never reorders levels (Apply keeps indices
// aligned with the source), so an out-of-order level is dropped even when
// its height shows it only changed places; the message says so.
func (st *state) pressureOrder() {
	idx := st.sc.idx[:0]
	for i, p := range st.p {
		if !math.IsNaN(p) {
			idx = append(idx, i)
		}
	}
	st.sc.idx = idx
	if pressuresDecrease(st.p, idx) {
		return // the one longest run is all of idx: nothing to flag
	}
	keep := longestRun(st.sc, idx, func(i int) float64 { return -st.p[i] })
	last := -1 // previous kept level
	for pos, i := range idx {
		if keep[pos] {
			last = i
			continue
		}
		if st.withinResolution(i, last, nextKept(idx, keep, pos)) {
			continue // out of order only within the sensor's resolution
		}
		why := "its height does not settle the order"
		if last >= 0 && st.p[i] == st.p[last] && sameLevel(&st.s.Levels[i], &st.s.Levels[last]) {
			why = "it repeats the previous level exactly"
		} else if next := nextKept(idx, keep, pos); last >= 0 && next >= 0 && heightsAgree(st, i, last, next) {
			why = "its height agrees with its pressure: the level is misplaced, not wrong"
		}
		st.flag(i, sounding.VarPressure, Bad, CheckPressureOrder, st.p[i], nan,
			"pressure %.1f hPa breaks the decreasing order; the level is dropped (%s)", st.p[i]/100, why)
	}
}

// nextKept returns the level index of the next kept position after pos, or −1.
func nextKept(idx []int, keep []bool, pos int) int {
	for q := pos + 1; q < len(idx); q++ {
		if keep[q] {
			return idx[q]
		}
	}
	return -1
}

// heightsAgree reports whether level i's reported height is consistent
// with its pressure when compared with the two kept levels a and b: the
// height order of the three matches their pressure order.
func heightsAgree(st *state, i, a, b int) bool {
	zi, za, zb := st.z[i], st.z[a], st.z[b]
	if math.IsNaN(zi) || math.IsNaN(za) || math.IsNaN(zb) {
		return false
	}
	pi := st.p[i]
	switch {
	case pi > st.p[a]:
		return zi < za
	case pi < st.p[b]:
		return zi > zb
	}
	return zi > za && zi < zb
}

// sameLevel reports whether two levels carry identical values.
func sameLevel(a, b *sounding.Level) bool {
	for v := range sounding.NumVars {
		x, y := value(a, v), value(b, v)
		if x != y && !(math.IsNaN(x) && math.IsNaN(y)) {
			return false
		}
	}
	return true
}

// heightOrder flags reported heights that break the increasing order
// (METHODS §6 "Monotonic height"), over every level with a height still
// usable after the hydrostatic check: heights outside one longest
// non-decreasing run are bad. Levels with a pressure and levels without
// one (wind-only levels, which the archive's files list after all pressure
// levels) are two separate runs. Equal heights are accepted because
// reported heights are rounded to whole metres and closely spaced levels
// can share one.
func (st *state) heightOrder() {
	withP, withoutP := st.sc.idx[:0], st.sc.idx2[:0]
	for i, z := range st.z {
		switch {
		case math.IsNaN(z):
		case math.IsNaN(st.p[i]) && st.s.Levels[i].Status[sounding.VarPressure] != sounding.Reported:
			withoutP = append(withoutP, i)
		case !math.IsNaN(st.p[i]):
			withP = append(withP, i)
		}
	}
	st.sc.idx, st.sc.idx2 = withP, withoutP
	st.heightRun(withP)
	st.heightRun(withoutP)
}

// heightRun flags the heights of idx outside one longest non-decreasing run.
func (st *state) heightRun(idx []int) {
	// Non-decreasing: make equal heights strictly increasing by a tiny
	// tie-breaker on the position (heights are whole or tenth metres).
	if st.heightsIncrease(idx) {
		return // the one longest run is all of idx: nothing to flag
	}
	keep := longestRun(st.sc, idx, st.heightKey)
	for pos, i := range idx {
		if !keep[pos] {
			st.flag(i, sounding.VarHeight, Bad, CheckHeightOrder, st.z[i], nan,
				"height %.0f gpm breaks the increasing order", st.z[i])
		}
	}
}

// heightKey is heightRun's key of level i: its height made strictly
// increasing over equal heights by the tie-breaker on the position.
func (st *state) heightKey(i int) float64 { return st.z[i] + 1e-6*float64(i)/float64(len(st.z)+1) }

// heightsIncrease reports whether heightKey strictly increases along idx,
// the common case, in which longestRun would keep every level.
func (st *state) heightsIncrease(idx []int) bool {
	if len(idx) == 0 {
		return true
	}
	prev := st.heightKey(idx[0])
	for _, i := range idx[1:] {
		k := st.heightKey(i)
		if !(prev < k) {
			return false
		}
		prev = k
	}
	return true
}

// pressuresDecrease reports whether p strictly decreases along idx, the
// common case, in which longestRun of −p would keep every level.
func pressuresDecrease(p []float64, idx []int) bool {
	for n := 1; n < len(idx); n++ {
		if !(p[idx[n]] < p[idx[n-1]]) {
			return false
		}
	}
	return true
}

// withinResolution reports whether level i, left out of the decreasing
// run, lies within the pressure resolution of the kept levels around it
// (last before, next after; −1 when none): a repeated or wavering reading
// of a high-resolution sonde rather than a misplaced level.
func (st *state) withinResolution(i, last, next int) bool {
	tol := st.cfg.PressureResolutionPa
	if !(tol > 0) || last < 0 || next < 0 {
		return false
	}
	return st.p[i] <= st.p[last]+tol && st.p[i] >= st.p[next]-tol
}
