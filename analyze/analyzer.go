package analyze

import "github.com/sondeclim/sondeclim/sounding"

// Analyzer analyses soundings one after another with one configuration,
// keeping its working memory (the wind, thermodynamic and gridded
// profiles, the height integration's order and virtual temperatures, the
// Richardson numbers) from one sounding to the next, so that analysing a
// sounding allocates little more than what its Result keeps. Its results
// are those of Analyze with the same configuration, bit for bit.
//
// An Analyzer is not safe for concurrent use: give each worker its own.
type Analyzer struct {
	cfg Config
	// The configuration's labels, recorded with every result, made once.
	constantSet, satVap, heatRef string
	sc                           scratch
	in                           methodInput
}

// NewAnalyzer returns an Analyzer for the configuration cfg.
func NewAnalyzer(cfg Config) *Analyzer {
	return &Analyzer{cfg: cfg, constantSet: cfg.Constants.ID(), satVap: cfg.SatVap.String(),
		heatRef: cfg.HeatDeficit.Label()}
}

// Analyze computes the diagnostics of one sounding, as the function
// Analyze does with the Analyzer's configuration. The Result is the
// caller's: nothing in it is reused by a later call.
func (a *Analyzer) Analyze(s *sounding.Sounding) Result {
	a.sc.reset()
	return analyze(s, a.cfg, a)
}

// scratch is the working memory of an analysis: slices handed out for one
// sounding and taken back, all at once, before the next (reset). Nothing
// a Result keeps comes from it. A nil *scratch allocates each slice.
type scratch struct {
	f     arena[float64]
	i     arena[int]
	spans arena[layerSpan]
}

func (sc *scratch) reset() {
	sc.f.reset()
	sc.i.reset()
	sc.spans.reset()
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
