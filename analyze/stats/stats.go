// Package stats holds the few statistics the climatologies need, with
// their definitions fixed and documented: sample quantiles of Hyndman &
// Fan (1996) types 7 and 6, the Mann–Kendall trend test with the tie
// correction, and the Theil–Sen slope.
//
// Functions take plain slices, ignore nothing silently (NaN handling is
// stated on each) and never modify their input.
package stats

import (
	"math"
	"sort"
)

// QuantileType selects a sample-quantile definition (Hyndman & Fan 1996).
type QuantileType uint8

const (
	// Type7 is linear interpolation between order statistics with
	// h = (n−1)p on 0-based sorted data: the default of R and NumPy, and
	// what DuckDB's quantile_cont computes.
	Type7 QuantileType = 7
	// Type6 uses h = (n+1)p on 1-based sorted data (Weibull plotting
	// positions; Excel PERCENTILE.EXC), clamped to the sample range.
	Type6 QuantileType = 6
)

// Quantile returns the p-quantile (0 ≤ p ≤ 1) of x by the given type.
// x need not be sorted; it is copied, not modified. NaN values make the
// result NaN (drop them first if that is what is meant); an empty x, p
// outside [0, 1] or an unknown type also give NaN.
//
// Type 7: h = (n−1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]), 0-based.
// Type 6: h = (n+1)p, the same interpolation on 1-based x, with h < 1
// giving x[1] and h > n giving x[n].
func Quantile(x []float64, p float64, typ QuantileType) float64 {
	n := len(x)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	s := make([]float64, n)
	copy(s, x)
	for _, v := range s {
		if math.IsNaN(v) {
			return math.NaN()
		}
	}
	sort.Float64s(s)
	var h float64 // 0-based position
	switch typ {
	case Type7:
		h = float64(n-1) * p
	case Type6:
		h = float64(n+1)*p - 1
	default:
		return math.NaN()
	}
	if h <= 0 {
		return s[0]
	}
	if h >= float64(n-1) {
		return s[n-1]
	}
	k := int(math.Floor(h))
	return s[k] + (h-float64(k))*(s[k+1]-s[k])
}

// MedianSorted returns the median of values sorted in ascending order:
// the middle value, or the mean of the middle two for an even count (the
// type-7 quantile at p = 0.5, computed as (a+b)/2); NaN when empty. It is
// the one median of the project (consensus mixing height, level spacing,
// Theil–Sen slope, figure captions); callers sort, so a caller on a hot
// path can sort a buffer of its own in place.
func MedianSorted(sorted []float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return sorted[n/2]
	}
	return (sorted[n/2-1] + sorted[n/2]) / 2
}

// MannKendall is the result of the Mann–Kendall trend test.
type MannKendall struct {
	S    float64 // Σ_{i<j} sign(y_j − y_i)
	VarS float64 // variance of S under no trend, tie-corrected
	Z    float64 // standardised statistic with continuity correction
	P    float64 // two-sided p-value from N(0, 1)
}

// MannKendallTest returns the Mann–Kendall statistic of the series y in
// time order:
//
//	S = Σ_{i<j} sign(y_j − y_i)
//	Var(S) = [n(n−1)(2n+5) − Σ_g t_g(t_g−1)(2t_g+5)]/18  (t_g: size of tie group g)
//	Z = (S − 1)/√Var if S > 0, (S + 1)/√Var if S < 0, else 0
//	p = 2(1 − Φ(|Z|)) = erfc(|Z|/√2).
//
// NaN values are dropped first. Fewer than 3 values give NaN fields.
// The test assumes independent values; for autocorrelated series use a
// prewhitening or variance correction before trusting p.
func MannKendallTest(y []float64) MannKendall {
	v := dropNaN(y)
	n := len(v)
	if n < 3 {
		nan := math.NaN()
		return MannKendall{nan, nan, nan, nan}
	}
	var s float64
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			switch {
			case v[j] > v[i]:
				s++
			case v[j] < v[i]:
				s--
			}
		}
	}
	sorted := append([]float64(nil), v...)
	sort.Float64s(sorted)
	fn := float64(n)
	vs := fn * (fn - 1) * (2*fn + 5)
	for i := 0; i < n; {
		j := i
		for j < n && sorted[j] == sorted[i] {
			j++
		}
		if t := float64(j - i); t > 1 {
			vs -= t * (t - 1) * (2*t + 5)
		}
		i = j
	}
	vs /= 18
	var z float64
	switch {
	case s > 0:
		z = (s - 1) / math.Sqrt(vs)
	case s < 0:
		z = (s + 1) / math.Sqrt(vs)
	}
	return MannKendall{S: s, VarS: vs, Z: z, P: math.Erfc(math.Abs(z) / math.Sqrt2)}
}

// TheilSenSlope returns the median of all pairwise slopes
// (y_j − y_i)/(t_j − t_i), i < j, over pairs with t_j ≠ t_i. t may be nil,
// meaning t_i = i (slope per step). Pairs where either value is NaN are
// skipped. NaN when no pair remains or when t and y differ in length. The
// median of an even number of slopes is the mean of the middle two.
func TheilSenSlope(t, y []float64) float64 {
	if t != nil && len(t) != len(y) {
		return math.NaN()
	}
	at := func(i int) float64 {
		if t == nil {
			return float64(i)
		}
		return t[i]
	}
	var sl []float64
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			dt := at(j) - at(i)
			d := (y[j] - y[i]) / dt
			if dt != 0 && !math.IsNaN(d) {
				sl = append(sl, d)
			}
		}
	}
	if len(sl) == 0 {
		return math.NaN()
	}
	sort.Float64s(sl)
	return MedianSorted(sl)
}

func dropNaN(y []float64) []float64 {
	v := make([]float64, 0, len(y))
	for _, x := range y {
		if !math.IsNaN(x) {
			v = append(v, x)
		}
	}
	return v
}
