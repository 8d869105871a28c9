package qc

import (
	"bufio"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"sync"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/formats"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/sounding"
)

// realSoundings reads every sounding of every file under
// ../shared/validation (PROVENANCE.md: archive-v2, BUFR, netCDF and TEMP
// files) that a registered format reads; files no format detects (the
// format descriptions, the station list) are passed over, and items a
// reader rejects are left out.
func realSoundings(tb testing.TB) []*sounding.Sounding {
	tb.Helper()
	root := realdata.Dir(tb)
	var ss []*sounding.Sounding
	err := filepath.WalkDir(root, func(path string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		return input.Each(path, 0, func(member string, r io.Reader) error {
			br := bufio.NewReaderSize(r, 4096)
			prefix, _ := br.Peek(4096)
			rd, err := formats.Open("", prefix, br, path, member, formats.Options{})
			if err != nil {
				return nil // not a sounding file
			}
			for {
				s, err := rd.Next()
				if err == io.EOF {
					return nil
				}
				if err != nil {
					continue // one rejected item; the reader carries on
				}
				ss = append(ss, s)
			}
		})
	})
	if err != nil {
		tb.Fatal(err)
	}
	return ss
}

// perturbed returns copies of some of ss with the faults the checks look
// for (a temperature with its sign reversed, two levels swapped, a height
// off by 500 m, a temperature spike), so that the rarer paths of the
// checks (the sign-flip trial, the order runs, the layer blame) also run
// on reused working memory. Scaffolding: the faults are invented.
func perturbed(ss []*sounding.Sounding) []*sounding.Sounding {
	rng := rand.New(rand.NewPCG(16, 1))
	var out []*sounding.Sounding
	for n, s := range ss {
		if n%7 != 0 || len(s.Levels) < 6 {
			continue
		}
		c := clone(s)
		k := 1 + rng.IntN(len(c.Levels)-2)
		l := &c.Levels[k]
		switch n % 4 {
		case 0:
			l.TemperatureK = 2*c0 - l.TemperatureK
		case 1:
			c.Levels[k], c.Levels[k+1] = c.Levels[k+1], c.Levels[k]
		case 2:
			l.HeightM += 500
		case 3:
			l.TemperatureK += 12
		}
		out = append(out, c)
	}
	return out
}

// poison fills all of sc's memory, up to each slice's capacity, with
// values no check could mistake for its own results, so a check that read
// memory an earlier sounding left behind would give another report.
func (sc *scratch) poison() {
	fill := func(x []float64) {
		x = x[:cap(x)]
		for i := range x {
			x[i] = -1e300 * float64(i%3)
		}
	}
	fillInt := func(x []int) {
		x = x[:cap(x)]
		for i := range x {
			x[i] = 1 << 40
		}
	}
	fill(sc.work)
	fill(sc.z)
	fill(sc.t)
	fill(sc.td)
	fillInt(sc.idx)
	fillInt(sc.idx2)
	fillInt(sc.tails)
	fillInt(sc.prev)
	keep := sc.keep[:cap(sc.keep)]
	for i := range keep {
		keep[i] = true
	}
	layers := sc.layers[:cap(sc.layers)]
	for i := range layers {
		layers[i] = layer{a: -5, b: 1 << 40, thickness: 1e300, residual: -1e300, evaluated: true, explained: true}
	}
}

// sameReport reports whether a and b are equal, floats bit for bit.
func sameReport(a, b Report) bool {
	if a.Status != b.Status || len(a.Flags) != len(b.Flags) || len(a.Findings) != len(b.Findings) {
		return false
	}
	for i := range a.Flags {
		if a.Flags[i] != b.Flags[i] {
			return false
		}
	}
	bits := math.Float64bits
	for i, f := range a.Findings {
		g := b.Findings[i]
		if f.Level != g.Level || f.Var != g.Var || f.Check != g.Check || f.Severity != g.Severity ||
			bits(f.Value) != bits(g.Value) || bits(f.NewValue) != bits(g.NewValue) || f.Message != g.Message {
			return false
		}
	}
	return true
}

// TestScratchReuse: the working memory reused from sounding to sounding
// changes no report. Every real validation sounding (PROVENANCE.md), and
// copies of some with invented faults, is checked with fresh memory, as
// before the reuse, and then with one reused and poisoned memory in
// forward, reverse and shuffled order, and through Check's pool from two
// goroutines; every report must be equal to the fresh one, bit for bit.
// The expected reports come from the same checks, so this guards the
// reuse only; what the checks find is tested against sources elsewhere.
func TestScratchReuse(t *testing.T) {
	ss := realSoundings(t)
	ss = append(ss, perturbed(ss)...)
	levels, maxLevels := 0, 0
	for _, s := range ss {
		levels += len(s.Levels)
		maxLevels = max(maxLevels, len(s.Levels))
	}
	t.Logf("%d soundings, %d levels (at most %d in one)", len(ss), levels, maxLevels)
	if len(ss) < 1000 || maxLevels < 1000 {
		t.Fatalf("%d soundings, longest %d levels: the validation files should give more than 1000 soundings and a high-resolution one", len(ss), maxLevels)
	}
	cfg := DefaultConfig()
	fresh := make([]Report, len(ss))
	flagged := map[CheckName]int{}
	for i, s := range ss {
		fresh[i] = check(s, cfg, new(scratch))
		for _, f := range fresh[i].Findings {
			flagged[f.Check]++
		}
	}
	for _, c := range []CheckName{CheckHydrostatic, CheckPressureOrder, CheckHeightOrder, CheckSpike, CheckSuperadiabatic, CheckCoverage} {
		if flagged[c] == 0 {
			t.Errorf("no %s finding: the reuse of that check's memory goes untested", c)
		}
	}

	order := make([]int, len(ss))
	for i := range order {
		order[i] = i
	}
	reverse := make([]int, len(ss))
	for i := range reverse {
		reverse[i] = len(ss) - 1 - i
	}
	shuffled := append([]int(nil), order...)
	rand.New(rand.NewPCG(2, 16)).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	for name, ord := range map[string][]int{"forward": order, "reverse": reverse, "shuffled": shuffled} {
		sc := new(scratch)
		bad := 0
		for _, i := range ord {
			sc.poison()
			if r := check(ss[i], cfg, sc); !sameReport(r, fresh[i]) {
				if bad++; bad <= 3 {
					t.Errorf("%s order: sounding %d (%s %s) differs with reused memory", name, i, ss[i].StationID, ss[i].LaunchTime)
				}
			}
		}
	}

	var wg sync.WaitGroup
	errs := make([]int, 2)
	for g := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for n := g; n < len(shuffled); n += 2 {
				if i := shuffled[n]; !sameReport(Check(ss[i], cfg), fresh[i]) {
					errs[g]++
				}
			}
		}()
	}
	wg.Wait()
	if errs[0]+errs[1] > 0 {
		t.Errorf("Check through the pool: %d reports differ from fresh memory", errs[0]+errs[1])
	}
}

// applyBefore is Apply as it was before ApplyInto (every level copied
// into a new slice, applyLevel on every level of an aligned report),
// kept to check that the reusing version gives the same copies.
// Scaffolding: the code's own earlier form, not an outside source.
func applyBefore(s *sounding.Sounding, r Report, useSuspect bool) *sounding.Sounding {
	if s == nil {
		return nil
	}
	c := *s
	c.Levels = append([]sounding.Level(nil), s.Levels...)
	aligned := len(r.Flags) == len(c.Levels)
	for i := range c.Levels {
		l := &c.Levels[i]
		if aligned {
			applyLevel(l, r.Flags[i], useSuspect)
		}
		if l.RelHumidityPct > 100 {
			l.RelHumidityPct = 100
		}
	}
	if aligned {
		for _, f := range r.Findings {
			if f.Severity == Corrected && f.Level >= 0 && f.Level < len(c.Levels) && f.Var == sounding.VarTemperature &&
				r.Flags[f.Level][f.Var] == Corrected {
				l := &c.Levels[f.Level]
				l.TemperatureK = f.NewValue
				l.Status[sounding.VarTemperature] = sounding.Derived
				if l.Status[sounding.VarDewpointDepression] == sounding.Reported && !math.IsNaN(l.DewpointDepressionK) {
					l.DewpointK = f.NewValue - l.DewpointDepressionK
				}
			}
		}
	}
	return &c
}

// sameBits reports whether a and b hold the same values, floats compared
// bit for bit (so NaN equals NaN and −0 differs from 0), pointers by
// address.
func sameBits(a, b reflect.Value) bool {
	switch a.Kind() {
	case reflect.Float64, reflect.Float32:
		return math.Float64bits(a.Float()) == math.Float64bits(b.Float())
	case reflect.Struct:
		for i := range a.NumField() {
			if !sameBits(a.Field(i), b.Field(i)) {
				return false
			}
		}
		return true
	case reflect.Array:
		for i := range a.Len() {
			if !sameBits(a.Index(i), b.Index(i)) {
				return false
			}
		}
		return true
	case reflect.Slice:
		if a.Len() != b.Len() || a.IsNil() != b.IsNil() {
			return false
		}
		for i := range a.Len() {
			if !sameBits(a.Index(i), b.Index(i)) {
				return false
			}
		}
		return true
	case reflect.Pointer, reflect.Map, reflect.Func, reflect.Chan, reflect.UnsafePointer:
		return a.Pointer() == b.Pointer()
	case reflect.Interface:
		return a.IsNil() == b.IsNil() && (a.IsNil() || sameBits(a.Elem(), b.Elem()))
	case reflect.String:
		return a.String() == b.String()
	case reflect.Bool:
		return a.Bool() == b.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return a.Int() == b.Int()
	}
	return a.Uint() == b.Uint()
}

// TestApplyIntoReuse: ApplyInto with one reused copy gives, for every
// real validation sounding (PROVENANCE.md) and copies with invented
// faults, in shuffled order and with both settings of useSuspect, the
// same copy as Apply and as Apply's earlier form (applyBefore), bit for
// bit, and leaves the source unchanged. The reused copy's levels are
// poisoned between calls. Scaffolding for the reuse, as
// TestScratchReuse; what Apply drops is tested in TestApply.
func TestApplyIntoReuse(t *testing.T) {
	ss := realSoundings(t)
	ss = append(ss, perturbed(ss)...)
	cfg := DefaultConfig()
	reps := make([]Report, len(ss))
	for i, s := range ss {
		reps[i] = Check(s, cfg)
	}
	order := rand.New(rand.NewPCG(3, 16)).Perm(len(ss))
	dst := new(sounding.Sounding)
	bad, dropped := 0, 0
	for n, i := range order {
		s, useSuspect := ss[i], n%3 == 0
		before := clone(s)
		want := applyBefore(s, reps[i], useSuspect)
		for k := range dst.Levels[:cap(dst.Levels)] {
			dst.Levels[:cap(dst.Levels)][k] = sounding.Level{PressurePa: 1e300, Kind: 9, Line: -7}
		}
		dst.StationID = "poisoned"
		got := ApplyInto(dst, s, reps[i], useSuspect)
		plain := Apply(s, reps[i], useSuspect)
		if got != dst {
			t.Fatal("ApplyInto did not return dst")
		}
		for k := range want.Levels {
			if !sameBits(reflect.ValueOf(want.Levels[k]), reflect.ValueOf(s.Levels[k])) {
				dropped++
			}
		}
		w, g, p := *want, *got, *plain
		ok := sameBits(reflect.ValueOf(w.Levels), reflect.ValueOf(g.Levels)) &&
			sameBits(reflect.ValueOf(w.Levels), reflect.ValueOf(p.Levels))
		w.Levels, g.Levels, p.Levels = nil, nil, nil
		ok = ok && sameBits(reflect.ValueOf(w), reflect.ValueOf(g)) && sameBits(reflect.ValueOf(w), reflect.ValueOf(p)) &&
			sameBits(reflect.ValueOf(*before).FieldByName("Levels"), reflect.ValueOf(*s).FieldByName("Levels"))
		if !ok {
			if bad++; bad <= 3 {
				t.Errorf("sounding %d (%s %s, useSuspect %v): copies differ", i, s.StationID, s.LaunchTime, useSuspect)
			}
		}
	}
	if dropped == 0 {
		t.Error("no level changed by Apply: the test compares nothing but copies")
	}
	if ApplyInto(dst, nil, Report{}, false) != nil {
		t.Error("ApplyInto of nil: want nil")
	}
}

// TestUnusable: the word test of ApplyInto agrees with the flags' meaning
// for each flag alone at each variable.
func TestUnusable(t *testing.T) {
	for v := range sounding.NumVars {
		for _, f := range []Flag{Good, Missing, Suspect, Bad, Corrected} {
			var fl [sounding.NumVars]Flag
			for k := range fl {
				fl[k] = Missing
			}
			fl[v] = f
			if got, want := unusable(&fl), f == Suspect || f == Bad || f == Corrected; got != want {
				t.Errorf("%s at %s: unusable %v, want %v", f, v, got, want)
			}
		}
	}
}

// TestAnyRemoved compares the one-word test with the plain definition
// (some status equals RemovedUpstream) for every combination of the four
// defined statuses at the eight variables, and for random bytes beyond
// them.
func TestAnyRemoved(t *testing.T) {
	var st [sounding.NumVars]sounding.Status
	check := func() {
		want := false
		for _, x := range st {
			want = want || x == sounding.RemovedUpstream
		}
		if got := anyRemoved(&st); got != want {
			t.Fatalf("%v: anyRemoved %v, want %v", st, got, want)
		}
	}
	for c := range 1 << (2 * sounding.NumVars) {
		for v := range st {
			st[v] = sounding.Status(c >> (2 * v) & 3)
		}
		check()
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 100000 {
		for v := range st {
			st[v] = sounding.Status(rng.UintN(256))
		}
		check()
	}
}
