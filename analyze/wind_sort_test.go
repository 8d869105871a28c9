package analyze

import (
	"math/rand/v2"
	"slices"
	"sort"
	"testing"
)

// TestWindSortStable: the run-merging sort of a wind profile gives the
// order of the standard library's sort.Stable (the reference), on runs of
// rising heights with ties, as real profiles hold, and on random heights.
func TestWindSortStable(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 500 {
		n := rng.IntN(60)
		w := windProfile{z: make([]float64, n), u: make([]float64, n), v: make([]float64, n)}
		z := 0.0
		for i := range n {
			switch {
			case trial%2 == 0:
				w.z[i] = float64(rng.IntN(20)) // random, many ties
			case rng.IntN(8) == 0:
				z = float64(rng.IntN(50)) // a new run starts lower
			default:
				z += float64(rng.IntN(3)) // rising, with ties
			}
			if trial%2 == 1 {
				w.z[i] = z
			}
			w.u[i], w.v[i] = float64(i), -float64(i) // the original position
		}
		ref := windProfile{z: slices.Clone(w.z), u: slices.Clone(w.u), v: slices.Clone(w.v)}
		sort.Stable(ref)
		w = w.sortStable()
		if !slices.Equal(w.z, ref.z) || !slices.Equal(w.u, ref.u) || !slices.Equal(w.v, ref.v) {
			t.Fatalf("trial %d: got z %v u %v, sort.Stable gives z %v u %v", trial, w.z, w.u, ref.z, ref.u)
		}
	}
}
