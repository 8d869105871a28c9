package analyze

import "github.com/sondeclim/sondeclim/sounding"

// Analyzer analyses soundings one after another with one configuration,
// keeping its memory (the wind, thermodynamic and gridded profiles, the
// height integration's order and virtual temperatures, the Richardson
// numbers, and the Result's own slices) from one sounding to the next, so
// that analysing a sounding allocates little more than the profile the
// Result hands on (Result.Profile). Its results are those of Analyze with
// the same configuration, bit for bit.
//
// An Analyzer is not safe for concurrent use: give each worker its own.
type Analyzer struct {
	cfg Config
	// The configuration's labels, recorded with every result, made once.
	constantSet, satVap, heatRef string
	sc                           scratch
	in                           methodInput
	res                          Result // the Result being filled (Analyze returns a copy)
}

// NewAnalyzer returns an Analyzer for the configuration cfg.
func NewAnalyzer(cfg Config) *Analyzer {
	return &Analyzer{cfg: cfg, constantSet: cfg.Constants.ID(), satVap: cfg.SatVap.String(),
		heatRef: cfg.HeatDeficit.Label()}
}

// Analyze computes the diagnostics of one sounding, as the function
// Analyze does with the Analyzer's configuration.
//
// The Result's slices (HeightM, HeightDerived, HeightAGLM, ThetaK,
// ThetaVK, MixingRatioKgKg, Inversions, MixedLayers and
// MixingHeights) are the Analyzer's: they hold this sounding's values
// until the next call, which overwrites them. Read or copy them before
// then. Result.Profile is the exception: its slices are the caller's, so
// that profiles can be kept for the afternoon pairing.
func (a *Analyzer) Analyze(s *sounding.Sounding) Result {
	a.sc.reset()
	return analyze(s, a.cfg, a)
}

// scratch is the memory of an analysis: slices handed out for one
// sounding and taken back, all at once, before the next (reset). The
// Result's slices come from it too, except Result.Profile's. A nil
// *scratch allocates each slice.
type scratch struct {
	f     arena[float64]
	i     arena[int]
	b     arena[bool]
	spans arena[layerSpan]
	inv   arena[Inversion]
	mh    arena[MixingHeight]
	mixed []MixedLayer // the mixed layers of the last sounding, kept for its room
}

func (sc *scratch) reset() {
	sc.f.reset()
	sc.i.reset()
	sc.b.reset()
	sc.spans.reset()
	sc.inv.reset()
	sc.mh.reset()
}

// bools returns n false values.
func (sc *scratch) bools(n int) []bool {
	if sc == nil {
		return make([]bool, n)
	}
	b := sc.b.take(n)
	clear(b)
	return b
}

// inversions returns n inversions, not cleared.
func (sc *scratch) inversions(n int) []Inversion {
	if sc == nil {
		return make([]Inversion, n)
	}
	return sc.inv.take(n)
}

// mixingHeights returns n mixing heights, not cleared.
func (sc *scratch) mixingHeights(n int) []MixingHeight {
	if sc == nil {
		return make([]MixingHeight, n)
	}
	return sc.mh.take(n)
}

// mixedLayers returns an empty slice to append mixed layers to, with the
// room the last sounding's grew (keepMixedLayers).
func (sc *scratch) mixedLayers() []MixedLayer {
	if sc == nil {
		return nil
	}
	return sc.mixed[:0]
}

// keepMixedLayers keeps the room of out, the slice mixedLayers returned
// with the layers appended, and returns the layers (nil for none) with no
// room beyond them.
func (sc *scratch) keepMixedLayers(out []MixedLayer) []MixedLayer {
	if len(out) == 0 {
		return nil
	}
	if sc == nil {
		return out
	}
	sc.mixed = out
	return out[:len(out):len(out)]
}

// floats returns n float64s, not cleared: the caller writes each before
// reading it.
func (sc *scratch) floats(n int) []float64 {
	if sc == nil {
		return make([]float64, n)
	}
	return sc.f.take(n)
}

// ints returns an empty slice of ints with room for n.
func (sc *scratch) ints(n int) []int {
	if sc == nil {
		return make([]int, 0, n)
	}
	return sc.i.take(n)[:0]
}

// layerSpans returns an empty slice of spans with room for n.
func (sc *scratch) layerSpans(n int) []layerSpan {
	if sc == nil {
		return make([]layerSpan, 0, n)
	}
	return sc.spans.take(n)[:0]
}

// arena hands out consecutive pieces of one backing array. A piece that
// does not fit is allocated on its own, and the next reset grows the
// array to hold everything taken since the previous one, so that from
// then on nothing is allocated for soundings of that size.
type arena[T any] struct {
	buf       []T
	off, used int
}

func (a *arena[T]) reset() {
	if a.used > len(a.buf) {
		a.buf = make([]T, a.used+a.used/4)
	}
	a.off, a.used = 0, 0
}

// take returns n elements as they were left (not cleared), with capacity
// n, so that appending to the piece never reaches into the next.
func (a *arena[T]) take(n int) []T {
	a.used += n
	if a.off+n > len(a.buf) {
		return make([]T, n)
	}
	p := a.buf[a.off : a.off+n : a.off+n]
	a.off += n
	return p
}
