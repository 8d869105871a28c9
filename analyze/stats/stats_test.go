package stats

import (
	"math"
	"testing"
)

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6f, want %.6f ± %g", name, got, want, tol)
	}
}

// TestQuantile checks METHODS §9 "Statistics" [D]: percentiles of 1..10,
// type 7 → p10 = 1.9, p50 = 5.5, p90 = 9.1; type 6 → p10 = 1.1, p90 = 9.9.
func TestQuantile(t *testing.T) {
	x := []float64{7, 3, 10, 1, 5, 2, 9, 4, 8, 6} // 1..10, unsorted on purpose
	tests := []struct {
		p    float64
		typ  QuantileType
		want float64
	}{
		{0.10, Type7, 1.9}, {0.50, Type7, 5.5}, {0.90, Type7, 9.1},
		{0.10, Type6, 1.1}, {0.90, Type6, 9.9},
		// Ends: type 7 returns min and max; type 6 clamps (h < 1 → x[1]).
		{0, Type7, 1}, {1, Type7, 10}, {0.05, Type6, 1}, {0.99, Type6, 10},
	}
	for _, tt := range tests {
		near(t, "quantile", Quantile(x, tt.p, tt.typ), tt.want, 1e-12)
	}
	if x[0] != 7 {
		t.Error("input modified")
	}
	for _, bad := range []float64{-0.1, 1.1, math.NaN()} {
		if !math.IsNaN(Quantile(x, bad, Type7)) {
			t.Errorf("p = %v accepted", bad)
		}
	}
	if !math.IsNaN(Quantile(nil, 0.5, Type7)) || !math.IsNaN(Quantile([]float64{1, math.NaN()}, 0.5, Type7)) ||
		!math.IsNaN(Quantile(x, 0.5, 5)) {
		t.Error("empty, NaN or unknown type accepted")
	}
	near(t, "single value", Quantile([]float64{4}, 0.3, Type7), 4, 0)
}

// TestMedianSorted checks the median against METHODS §9 "Statistics" [D]
// (type-7 p50 of 1..10 is 5.5) and the odd-count case by the definition
// of the median (middle order statistic; from memory).
func TestMedianSorted(t *testing.T) {
	near(t, "median of 1..10", MedianSorted([]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}), 5.5, 0)
	near(t, "median of 1..10 = type-7 p50", MedianSorted([]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}),
		Quantile([]float64{10, 1, 9, 2, 8, 3, 7, 4, 6, 5}, 0.5, Type7), 1e-12)
	near(t, "median of 1..9", MedianSorted([]float64{1, 2, 3, 4, 5, 6, 7, 8, 9}), 5, 0)
	near(t, "single value", MedianSorted([]float64{-3.5}), -3.5, 0)
	if !math.IsNaN(MedianSorted(nil)) {
		t.Error("median of nothing is not NaN")
	}
}

// TestMannKendall checks METHODS §9 "Statistics" [D]: [1..5] → S = 10,
// Var = 16.667, Z = 2.2045, p = 0.0275, Sen slope 1.0; [2,1,4,3,6,5,8,7,10,9]
// → S = 35, Var = 125, Z = 3.0411, p = 0.00236, Sen slope 1.0.
func TestMannKendall(t *testing.T) {
	tests := []struct {
		y                    []float64
		s, v, z, p, pTol, sl float64
	}{
		{[]float64{1, 2, 3, 4, 5}, 10, 16.667, 2.2045, 0.0275, 5e-5, 1.0},
		{[]float64{2, 1, 4, 3, 6, 5, 8, 7, 10, 9}, 35, 125, 3.0411, 0.00236, 5e-6, 1.0},
	}
	for _, tt := range tests {
		mk := MannKendallTest(tt.y)
		near(t, "S", mk.S, tt.s, 0)
		near(t, "Var", mk.VarS, tt.v, 5e-4)
		near(t, "Z", mk.Z, tt.z, 5e-5)
		near(t, "p", mk.P, tt.p, tt.pTol)
		near(t, "Sen", TheilSenSlope(nil, tt.y), tt.sl, 1e-12)
	}
	// Decreasing series: S and Z change sign, p is the same (symmetry).
	mk := MannKendallTest([]float64{5, 4, 3, 2, 1})
	near(t, "S down", mk.S, -10, 0)
	near(t, "Z down", mk.Z, -2.2045, 5e-5)
	// Ties: [1, 1, 2] has one tie group of 2: Var = (3·2·11 − 2·1·9)/18 = 48/18
	// (formula of METHODS §8).
	near(t, "tie Var", MannKendallTest([]float64{1, 1, 2}).VarS, 48.0/18, 1e-12)
	// NaN dropped; too short → NaN.
	near(t, "NaN dropped", MannKendallTest([]float64{1, math.NaN(), 2, 3, 4, 5}).S, 10, 0)
	if !math.IsNaN(MannKendallTest([]float64{1, 2}).Z) {
		t.Error("n = 2 gives a number")
	}
}

// TestTheilSen: slope in units of t (invented scaffolding: y = 3 + 0.5 t
// with one outlier, which the median ignores), and the edge cases.
func TestTheilSen(t *testing.T) {
	tt := []float64{2000, 2001, 2002, 2003, 2004, 2005}
	y := []float64{3, 3.5, 4, 40, 5, 5.5}
	near(t, "robust slope", TheilSenSlope([]float64{0, 1, 2, 4, 5}, []float64{3, 3.5, 4, 5, 5.5}), 0.5, 1e-12)
	if s := TheilSenSlope(tt, y); !(s >= 0.5 && s < 1) {
		t.Errorf("slope with outlier = %v", s)
	}
	if !math.IsNaN(TheilSenSlope(tt[:2], y)) || !math.IsNaN(TheilSenSlope(nil, []float64{1})) ||
		!math.IsNaN(TheilSenSlope([]float64{1, 1}, []float64{1, 2})) {
		t.Error("mismatched, single or equal-t input gives a number")
	}
}
