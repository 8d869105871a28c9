package analyze

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"math/rand"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/formats"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// readValidation returns every sounding of every real validation file
// (../shared/validation, all formats; PROVENANCE.md), in file order,
// skipping the test when the folder is absent. Rejected items are left
// out; a file no format detects (PROVENANCE.md itself) is passed over.
func readValidation(t *testing.T) []*sounding.Sounding {
	t.Helper()
	dir := realdata.Dir(t)
	var out []*sounding.Sounding
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || filepath.Ext(path) == ".md" {
			return err
		}
		return input.Each(path, 0, func(member string, r io.Reader) error {
			br := bufio.NewReaderSize(r, 4096)
			prefix, _ := br.Peek(4096)
			rd, err := formats.Open("", prefix, br, path, member, formats.Options{})
			if errors.Is(err, ingest.ErrUnknownInput) {
				return nil
			} else if err != nil {
				return err
			}
			for {
				s, err := rd.Next()
				var pe *ingest.ParseError
				switch {
				case errors.Is(err, io.EOF):
					return nil
				case errors.As(err, &pe):
					continue
				case err != nil:
					return err
				}
				out = append(out, s)
			}
		})
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestAnalyzerReuse guards the reuse of an Analyzer's working memory: every
// real validation sounding analysed by one long-lived Analyzer, in file
// order, reversed, shuffled, and interleaved with soundings that stop the
// analysis early or have no levels, gives the Result that a fresh
// analysis (Analyze) gives, bit for bit. The reference is the same code
// without reuse, so this checks only that nothing leaks from one sounding
// to the next; the science is checked by the other tests.
func TestAnalyzerReuse(t *testing.T) {
	ss := readValidation(t)
	if len(ss) < 100 {
		t.Fatalf("only %d validation soundings read", len(ss))
	}
	cfg := DefaultConfig()
	show := func(r Result) string { return fmt.Sprintf("%+v", r) } // %v prints every float exactly (shortest form that reads back the same bits)
	want := make(map[*sounding.Sounding]string, len(ss))
	levels := 0
	for _, s := range ss {
		want[s] = show(Analyze(s, cfg))
		levels += len(s.Levels)
	}
	t.Logf("%d soundings, %d levels", len(ss), levels)
	tiny := &sounding.Sounding{Levels: ss[0].Levels[:1], ElevationM: ss[0].ElevationM}
	want[tiny] = show(Analyze(tiny, cfg))
	empty := &sounding.Sounding{}
	want[empty] = show(Analyze(empty, cfg))

	reversed := make([]*sounding.Sounding, len(ss))
	for i, s := range ss {
		reversed[len(ss)-1-i] = s
	}
	shuffled := append([]*sounding.Sounding(nil), ss...)
	rand.New(rand.NewSource(16)).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	var mixed []*sounding.Sounding
	for i, s := range shuffled {
		mixed = append(mixed, s)
		if i%7 == 0 {
			mixed = append(mixed, tiny, nil, empty)
		}
	}
	a := NewAnalyzer(cfg)
	for name, order := range map[string][]*sounding.Sounding{"file": ss, "reversed": reversed, "shuffled": shuffled, "mixed": mixed} {
		bad := 0
		for i, s := range order {
			got := show(a.Analyze(s))
			w, ok := want[s]
			if s == nil {
				w, ok = show(Analyze(nil, cfg)), true
			}
			if !ok || got != w {
				bad++
				if bad <= 3 {
					t.Errorf("%s order, sounding %d (%v): reused Analyzer differs from a fresh analysis\n got %.300s\nwant %.300s", name, i, s != nil, got, w)
				}
			}
		}
		if bad > 0 {
			t.Errorf("%s order: %d of %d soundings differ", name, bad, len(order))
		}
	}
}

// TestSpanMatchesMinMax checks span.with, which calls math.Min and
// math.Max only where a bound can change, against math.Min and math.Max
// applied to every value (the definition), bit for bit, on sequences of
// signed zeros, infinities, NaN and ordinary values.
func TestSpanMatchesMinMax(t *testing.T) {
	negZero := math.Copysign(0, -1)
	vals := []float64{0, negZero, 1, -1, math.Inf(1), math.Inf(-1), math.NaN(), 1e-300, -2.5, 300.125}
	rng := rand.New(rand.NewSource(3))
	for trial := 0; trial < 20000; trial++ {
		s, lo, hi := newSpan(), math.Inf(1), math.Inf(-1)
		for k := 0; k < 1+rng.Intn(6); k++ {
			v := vals[rng.Intn(len(vals))]
			s = s.with(v)
			if !math.IsNaN(v) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
			if math.Float64bits(s.lo) != math.Float64bits(lo) || math.Float64bits(s.hi) != math.Float64bits(hi) {
				t.Fatalf("trial %d: span (%v, %v), math.Min/Max give (%v, %v)", trial, s.lo, s.hi, lo, hi)
			}
		}
	}
}

// TestSincosDeg checks the whole-degree table of the wind components
// against math.Sincos(d·π/180) computed on the spot, bit for bit, for
// every direction from 0 to 360° in steps of 0.01° (whole degrees from
// the table, the rest computed).
func TestSincosDeg(t *testing.T) {
	for k := 0; k <= 36000; k++ {
		d := float64(k) / 100
		gs, gc := sincosDeg(d)
		ws, wc := math.Sincos(d * math.Pi / 180)
		if math.Float64bits(gs) != math.Float64bits(ws) || math.Float64bits(gc) != math.Float64bits(wc) {
			t.Fatalf("sincosDeg(%v) = %v, %v; math.Sincos gives %v, %v", d, gs, gc, ws, wc)
		}
	}
}

// TestMixingRatioWithoutDewpoint checks the shortcut levelValues takes
// for a level without a dewpoint: for every saturation formula and a
// range of pressures, the full computation on a NaN dewpoint gives
// exactly the bits of math.NaN().
func TestMixingRatioWithoutDewpoint(t *testing.T) {
	eps := DefaultConfig().Constants.Epsilon
	for f := thermo.SatVapFormula(0); f.String() != fmt.Sprintf("satvap(%d)", uint8(f)); f++ {
		for _, p := range []float64{math.NaN(), -1, 0, 500, 50000, 101325, math.Inf(1)} {
			w := thermo.MixingRatio(thermo.VapourPressureFromDewpoint(math.NaN(), f), p, eps)
			if math.Float64bits(w) != math.Float64bits(math.NaN()) {
				t.Errorf("%s at %v Pa: %x, want the bits of math.NaN()", f, p, math.Float64bits(w))
			}
		}
	}
}
