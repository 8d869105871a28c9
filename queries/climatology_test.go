package queries

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat"

	"github.com/sondeclim/sondeclim/schema"
)

// type7 is the Hyndman & Fan type-7 sample quantile as written in
// METHODS.md §8: h = (n−1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]) on
// 0-based sorted x. It returns NaN for empty x.
func type7(x []float64, p float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := slices.Clone(x)
	slices.Sort(s)
	h := float64(len(s)-1) * p
	lo := int(math.Floor(h))
	if lo+1 >= len(s) {
		return s[lo]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}

// gonumType7 computes the type-7 quantile with gonum. gonum's stat.Quantile
// with stat.LinInterp is Hyndman & Fan type 4 (position n·p, 1-based; see
// its source and doc), not type 7, so it is evaluated at the shifted
// probability p' = ((n−1)p + 1)/n, whose type-4 position n·p' equals the
// type-7 position (n−1)p + 1 (algebra, from the two definitions).
func gonumType7(x []float64, p float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	return stat.Quantile(((n-1)*p+1)/n, stat.LinInterp, s, nil)
}

func TestType7Reference(t *testing.T) {
	x := []float64{10, 1, 9, 2, 8, 3, 7, 4, 6, 5} // 1..10, unsorted
	// Source: METHODS.md §9 "Percentiles of 1..10: type 7 → p10 = 1.9,
	// p50 = 5.5, p90 = 9.1" [D].
	for _, c := range []struct{ p, want float64 }{{0.1, 1.9}, {0.5, 5.5}, {0.9, 9.1}} {
		if got := type7(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("type7(1..10, %v) = %v, want %v", c.p, got, c.want)
		}
		if got := gonumType7(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("gonumType7(1..10, %v) = %v, want %v", c.p, got, c.want)
		}
	}
	// The pitfall the shift avoids: plain LinInterp at p = 0.1 gives
	// position n·p = 1, the smallest value, not 1.9 (type 4 vs type 7).
	if got := stat.Quantile(0.1, stat.LinInterp, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, nil); got == 1.9 {
		t.Errorf("gonum LinInterp now agrees with type 7 (%v); revisit gonumType7", got)
	}
}

// climRow is one expected row of the climatology; NaN stands for NULL.
type climRow struct {
	station, season         string
	hour                    int64
	n, valid, ok, surf, und int64
	p                       [5]float64 // p10, p25, p50, p75, p90 in m
	freq, strength, top     float64
}

// checkRow compares one result row with the expectation.
func checkRow(t *testing.T, cols []string, got []any, want climRow) {
	t.Helper()
	ints := []int64{want.hour, want.n, want.valid, want.ok, want.surf, want.und}
	floats := append(want.p[:], want.freq, want.strength, want.top)
	if got[0] != want.station || got[1] != want.season {
		t.Errorf("row %s/%s: got %v/%v", want.station, want.season, got[0], got[1])
	}
	for i, w := range ints {
		if got[2+i] != w {
			t.Errorf("%s %s %02d: %s = %v, want %d", want.station, want.season, want.hour, cols[2+i], got[2+i], w)
		}
	}
	for i, w := range floats {
		g := got[8+i]
		switch f, ok := g.(float64); {
		case math.IsNaN(w) && g == nil:
		case ok && math.Abs(f-w) <= 1e-9*math.Max(1, math.Abs(w)):
		default:
			t.Errorf("%s %s %02d: %s = %v, want %v (NaN = NULL)", want.station, want.season, want.hour, cols[8+i], g, w)
		}
	}
}

var climColumns = []string{"station_id", "season", "nominal_hour", "n_soundings", "n_valid",
	"n_parcel_ok", "n_parcel_surface", "n_parcel_undefined",
	"mixing_height_p10_m", "mixing_height_p25_m", "mixing_height_p50_m", "mixing_height_p75_m", "mixing_height_p90_m",
	"sbi_frequency", "sbi_median_strength_k", "sbi_median_top_agl_m"}

func TestClimatologyByHand(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	tab, err := Climatology(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(tab.Columns, climColumns) {
		t.Fatalf("columns = %q", tab.Columns)
	}
	// Hand computation, type 7 (METHODS.md §8: h = (n−1)p on 0-based sorted x).
	//
	// XA001 DJF 00: valid heights {0 (surface), 100, 200, 300}, n = 4,
	// h = 3p: p10 h=0.3 → 0+0.3·100 = 30; p25 h=0.75 → 75; p50 h=1.5 →
	// 100+0.5·100 = 150; p75 h=2.25 → 200+0.25·100 = 225; p90 h=2.7 → 270.
	// SBI in 2 of 5 valid → 0.4; median strength (2+5)/2 = 3.5 K, top
	// (150+350)/2 = 250 m. The invalid sounding (9999 m, SBI 99 K) is only
	// counted in n_soundings.
	//
	// XA001 DJF 12: one surface sounding → every percentile 0; SBI 1/1.
	//
	// XA001 MAM 00: no valid sounding → statistics NULL.
	//
	// XA001 JJA 12: sorted {600, 900, 1200, 1500, 2100}, n = 5, h = 4p:
	// p10 h=0.4 → 600+0.4·300 = 720; p25 h=1 → 900; p50 h=2 → 1200;
	// p75 h=3 → 1500; p90 h=3.6 → 1500+0.6·600 = 1860. No SBI → 0, medians NULL.
	//
	// XB002 SON 00: all three undefined → percentiles NULL; SBI 1/3.
	want := []climRow{
		{"XA001", "DJF", 0, 6, 5, 3, 1, 1, [5]float64{30, 75, 150, 225, 270}, 0.4, 3.5, 250},
		{"XA001", "DJF", 12, 1, 1, 0, 1, 0, [5]float64{0, 0, 0, 0, 0}, 1, 3, 40},
		{"XA001", "MAM", 0, 1, 0, 0, 0, 0, [5]float64{nan, nan, nan, nan, nan}, nan, nan, nan},
		{"XA001", "JJA", 12, 5, 5, 5, 0, 0, [5]float64{720, 900, 1200, 1500, 1860}, 0, nan, nan},
		{"XB002", "SON", 0, 3, 3, 0, 0, 3, [5]float64{nan, nan, nan, nan, nan}, 1.0 / 3, 1.25, 80},
	}
	if len(tab.Rows) != len(want) {
		t.Fatalf("%d rows, want %d", len(tab.Rows), len(want))
	}
	for i, w := range want {
		checkRow(t, tab.Columns, tab.Rows[i], w)
	}
}

// TestClimatologyAgainstGo compares the SQL percentiles with the two Go
// type-7 computations on a larger invented sample spread over seasons.
func TestClimatologyAgainstGo(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	seasons := []string{"DJF", "MAM", "JJA", "SON"}
	heights := make(map[string][]float64)
	var rows []schema.SoundingRow
	for i := range 400 {
		season := seasons[i%4]
		year := int32(2000 + i%7)
		switch r := rng.Float64(); {
		case r < 0.1:
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "undefined", nan, ptr(false), nan, nan))
		case r < 0.25:
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "surface", 0, ptr(false), nan, nan))
			heights[season] = append(heights[season], 0)
		default:
			h := math.Round(rng.ExpFloat64()*800*10) / 10
			rows = append(rows, sounding("XC003", season, year, 0, "ok", "ok", h, ptr(false), nan, nan))
			heights[season] = append(heights[season], h)
		}
	}
	// The caller sorts rows; any order within a partition must give the
	// same statistics.
	db := openStore(t, writeStore(t, t.TempDir(), rows))
	tab, err := Climatology(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Rows) != 4 {
		t.Fatalf("%d rows, want 4", len(tab.Rows))
	}
	ps := []float64{0.10, 0.25, 0.50, 0.75, 0.90}
	for i, r := range tab.Rows {
		season := seasons[i]
		if r[1] != season {
			t.Fatalf("row %d season %v, want %s (order DJF, MAM, JJA, SON)", i, r[1], season)
		}
		for j, p := range ps {
			got := r[8+j].(float64)
			a, b := type7(heights[season], p), gonumType7(heights[season], p)
			if math.Abs(got-a) > 1e-9 || math.Abs(got-b) > 1e-9 {
				t.Errorf("%s p%.0f: SQL %v, Go type 7 %v, gonum shifted %v", season, p*100, got, a, b)
			}
		}
	}
}

func BenchmarkClimatology(b *testing.B) {
	var rows []schema.SoundingRow
	seasons := []string{"DJF", "MAM", "JJA", "SON"}
	for i := range 20_000 {
		rows = append(rows, sounding("XD004", seasons[i%4], int32(1990+i%30), int32(12*(i%2)),
			"ok", "ok", float64(i%3000), ptr(i%3 == 0), 2, 200))
	}
	db := openStore(b, writeStore(b, b.TempDir(), rows))
	b.ResetTimer()
	for range b.N {
		if _, err := Climatology(context.Background(), db); err != nil {
			b.Fatal(err)
		}
	}
}
