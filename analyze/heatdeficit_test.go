package analyze

import (
	"math"
	"sort"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// layerProfile samples a hydrostatic dry layer every dz metres from the
// ground (p0 Pa, T0 K) to top m, with temperature T(z) = T0 − Γz
// (lapse Γ in K/m; Γ = 0 isothermal) and the exact hydrostatic pressure:
// p = p0 exp(−g z/(Rd T0)) when isothermal, p = p0 (T/T0)^(g/(Rd Γ))
// otherwise.
func layerProfile(c thermo.Constants, p0, t0, lapse, top, dz float64) (z, p, t, th []float64) {
	for h := 0.0; h <= top+1e-9; h += dz {
		tk := t0 - lapse*h
		var pk float64
		if lapse == 0 {
			pk = p0 * math.Exp(-c.G0*h/(c.Rd*t0))
		} else {
			pk = p0 * math.Pow(tk/t0, c.G0/(c.Rd*lapse))
		}
		z, p, t = append(z, h), append(p, pk), append(t, tk)
		th = append(th, thermo.PotentialTemperature(tk, pk, c.Kappa, c.P0Pa))
	}
	return
}

// Closed forms of H = cp ∫0^h ρ (θh − θ) dz for a hydrostatic dry layer.
// Hydrostatic balance gives ρ dz = −dp/g, so cp θh ∫ρ dz = cp θh (p0 − ph)/g
// exactly. With θ = T (P0/p)^κ and ρ = p/(Rd T), ρθ = P0^κ p^(1−κ)/Rd, so
// the second term is (cp P0^κ/Rd) ∫0^h p^(1−κ) dz:
//
//   - isothermal, p = p0 e^(−z/Hs), Hs = Rd T/g, dz = −Hs dp/p:
//     ∫ p^(1−κ) dz = Hs ∫_{ph}^{p0} p^(−κ) dp = Hs (p0^(1−κ) − ph^(1−κ))/(1−κ);
//   - constant lapse Γ ≠ 0, p = p0 (T/T0)^n, n = g/(Rd Γ), dz = −dT/Γ:
//     ∫ p^(1−κ) dz = p0^(1−κ) ∫_{Th}^{T0} (T/T0)^m dT/Γ
//     = p0^(1−κ) T0 (1 − (Th/T0)^(m+1)) / (Γ (m+1)),  m = n(1−κ).
//
// Derived here from the definition (textbook hydrostatics and Poisson's
// equation, METHODS §1.2), independent of the code's trapezoidal rule in z.
func closedFormHeatDeficit(c thermo.Constants, p0, t0, lapse, h float64) float64 {
	k := c.Kappa
	var ph, integral float64
	if lapse == 0 {
		hs := c.Rd * t0 / c.G0
		ph = p0 * math.Exp(-h/hs)
		integral = hs * (math.Pow(p0, 1-k) - math.Pow(ph, 1-k)) / (1 - k)
	} else {
		th := t0 - lapse*h
		n := c.G0 / (c.Rd * lapse)
		ph = p0 * math.Pow(th/t0, n)
		m := n * (1 - k)
		integral = math.Pow(p0, 1-k) * t0 * (1 - math.Pow(th/t0, m+1)) / (lapse * (m + 1))
	}
	thetaH := thermo.PotentialTemperature(t0-lapse*h, ph, k, c.P0Pa)
	return c.Cpd*thetaH*(p0-ph)/c.G0 - c.Cpd*math.Pow(c.P0Pa, k)/c.Rd*integral
}

func TestHeatDeficitClosedForms(t *testing.T) {
	c := thermo.Default()
	dryAdiabatic := c.G0 / c.Cpd // K/m, θ constant
	cases := []struct {
		name          string
		t0, lapse, h  float64
		wantMJ, tolMJ float64 // an order-of-magnitude anchor, or 0 to skip
	}{
		// Isothermal 1 km at 270 K: dθ/dz ≈ θ g/(cp T) ≈ 10 K/km, so
		// ∫(θh−θ)dz ≈ ½·10 K/km·(1 km)² = 5000 K m and H ≈ cp ρ 5000 ≈
		// 1005·1.2·5000 ≈ 6 MJ m⁻² (hand estimate).
		{"isothermal 1 km", 270, 0, 1000, 6, 1},
		{"standard lapse 1 km", 288.15, 0.0065, 1000, 0, 0},
		{"inversion 10 K/km over 500 m", 265, -0.010, 500, 0, 0},
		{"isothermal 2.2 km", 260, 0, 2200, 0, 0},
		{"dry adiabatic", 290, dryAdiabatic, 1500, 0, 0.001},
	}
	for _, tc := range cases {
		z, p, tk, th := layerProfile(c, 95000, tc.t0, tc.lapse, tc.h, 10)
		got := HeatDeficit(z, p, tk, th, tc.h, c.Cpd, c.Rd)
		want := closedFormHeatDeficit(c, 95000, tc.t0, tc.lapse, tc.h)
		if tc.lapse == dryAdiabatic {
			near(t, tc.name+" H (MJ m-2)", got/1e6, 0, tc.tolMJ)
			continue
		}
		if !(math.Abs(got-want) <= 1e-4*math.Abs(want)) {
			t.Errorf("%s: H = %.6g J m-2, closed form %.6g (rel. diff %.2g)", tc.name, got, want, (got-want)/want)
		}
		if tc.tolMJ > 0 {
			near(t, tc.name+" H (MJ m-2)", got/1e6, tc.wantMJ, tc.tolMJ)
		}
		// Sparse levels (every 250 m) still within 1 %: linear θ between
		// levels is close for such smooth layers.
		z, p, tk, th = layerProfile(c, 95000, tc.t0, tc.lapse, tc.h, tc.h/4)
		if got := HeatDeficit(z, p, tk, th, tc.h, c.Cpd, c.Rd); !(math.Abs(got-want) <= 0.01*math.Abs(want)) {
			t.Errorf("%s, 5 levels: H = %.6g, closed form %.6g", tc.name, got, want)
		}
	}
}

func TestHeatDeficitEdges(t *testing.T) {
	c := thermo.Default()
	z, p, tk, th := layerProfile(c, 95000, 270, 0, 1000, 100)
	for _, tc := range []struct {
		name string
		top  float64
	}{{"top above the profile", 1200}, {"top at the ground", 0}, {"top below ground", -50}, {"NaN top", math.NaN()}} {
		if h := HeatDeficit(z, p, tk, th, tc.top, c.Cpd, c.Rd); !math.IsNaN(h) {
			t.Errorf("%s: H = %g, want NaN", tc.name, h)
		}
	}
	if h := HeatDeficit(z[:1], p[:1], tk[:1], th[:1], 500, c.Cpd, c.Rd); !math.IsNaN(h) {
		t.Errorf("one level: H = %g, want NaN", h)
	}
	// A missing level is skipped, not taken as zero: removing the 500 m
	// level of an isothermal layer changes H by well under 1 %.
	full := HeatDeficit(z, p, tk, th, 1000, c.Cpd, c.Rd)
	th2 := append([]float64(nil), th...)
	th2[5] = math.NaN()
	if h := HeatDeficit(z, p, tk, th2, 1000, c.Cpd, c.Rd); !(math.Abs(h-full) < 0.01*full) {
		t.Errorf("NaN level: H = %g, with it %g", h, full)
	}
	// A top between levels: H grows monotonically with h in a stable
	// layer (θh rises and the layer deepens).
	if a, b := HeatDeficit(z, p, tk, th, 850, c.Cpd, c.Rd), HeatDeficit(z, p, tk, th, 900, c.Cpd, c.Rd); !(a < b && b < full) {
		t.Errorf("H(850) = %g, H(900) = %g, H(1000) = %g: want increasing", a, b, full)
	}
	// A superadiabatic layer (lapse 12 K/km) has negative H, kept.
	z, p, tk, th = layerProfile(c, 95000, 300, 0.012, 300, 10)
	if h := HeatDeficit(z, p, tk, th, 300, c.Cpd, c.Rd); !(h < 0) {
		t.Errorf("superadiabatic: H = %g, want < 0", h)
	}
}

func TestHeatDeficitReference(t *testing.T) {
	z := []float64{0, 500, 1000, 1500}
	p := []float64{90000, 85000, 80000, 75000}
	for _, tc := range []struct {
		cfg   HeatDeficitConfig
		label string
		top   float64
	}{
		{HeatDeficitConfig{Reference: HeatDeficitAGL, HeightM: 1000}, "agl_1000m", 1000},
		{HeatDeficitConfig{Reference: HeatDeficitMSL, HeightM: 2200}, "msl_2200m", 2200 - 1289},
		// 850 hPa is a profile level: exactly its height.
		{HeatDeficitConfig{Reference: HeatDeficitPressure, PressurePa: 85000}, "p_850hpa", 500},
		{HeatDeficitConfig{Reference: "rim"}, "", math.NaN()},
	} {
		if got := tc.cfg.Label(); got != tc.label {
			t.Errorf("Label = %q, want %q", got, tc.label)
		}
		got := tc.cfg.TopAGL(z, p, 1289)
		if !(got == tc.top || math.IsNaN(got) && math.IsNaN(tc.top)) {
			t.Errorf("%s: TopAGL = %g, want %g", tc.label, got, tc.top)
		}
	}
}

// TestHeatDeficitSterling checks the heat deficit of real winter morning
// soundings (Sterling, Virginia, January 2016, PROVENANCE.md) against an
// independent integration written here: the hydrostatic pressure form
// H = (cp/g) ∫_{ph}^{ps} [θh − θ(p)] dp (ρ dz = −dp/g), evaluated from the
// raw levels' pressure and temperature, θ interpolated linearly in ln p and
// summed by the midpoint rule on a 0.1 hPa grid. The code integrates in
// height with the gas-law density instead, so the two agree only as far as
// the sounding's heights are hydrostatic (they are filled with the virtual
// temperature, the density here uses T: about 0.2 % in January) and the
// discretisations agree: 1.5 % is allowed.
func TestHeatDeficitSterling(t *testing.T) {
	all := readSterling(t)
	cfg := DefaultConfig()
	c := cfg.Constants
	checked := 0
	for _, s := range all {
		if s.NominalTime.Month() != time.January || s.NominalTime.Hour() != 12 {
			continue
		}
		r := Analyze(s, cfg)
		if r.Status != StatusOK || math.IsNaN(r.HeatDeficit.JPerM2) {
			continue
		}
		// The raw thermodynamic levels, surface first, decreasing p.
		var lp, lth []float64
		for _, i := range profileOrder(s, r) {
			l := s.Levels[i]
			lp = append(lp, math.Log(l.PressurePa))
			lth = append(lth, thermo.PotentialTemperature(l.TemperatureK, l.PressurePa, c.Kappa, c.P0Pa))
		}
		// Pressure at h: from the analysed heights (the only use of them).
		ph := pressureAtHeight(s, r, r.HeatDeficit.TopAGLM)
		ps := math.Exp(lp[0])
		thAt := func(p float64) float64 {
			x := math.Log(p)
			for k := 1; k < len(lp); k++ {
				if x >= lp[k] {
					f := (lp[k-1] - x) / (lp[k-1] - lp[k])
					return lth[k-1] + f*(lth[k]-lth[k-1])
				}
			}
			return math.NaN()
		}
		thH := thAt(ph)
		const dp = 10.0 // Pa
		sum := 0.0
		for p := ps - dp/2; p > ph; p -= dp {
			sum += (thH - thAt(p)) * dp
		}
		want := c.Cpd / c.G0 * sum
		got := r.HeatDeficit.JPerM2
		if !(math.Abs(got-want) <= 0.015*math.Abs(want)+2e4) {
			t.Errorf("%s %s: H = %.4g J m-2, pressure-form integration %.4g", s.StationID, s.LaunchTime.Format(time.RFC3339), got, want)
		}
		if checked < 3 {
			t.Logf("%s: H = %.4f MJ m-2, pressure form %.4f", s.LaunchTime.Format(time.RFC3339), got/1e6, want/1e6)
		}
		checked++
	}
	if checked < 20 {
		t.Fatalf("only %d January 12 UTC soundings checked", checked)
	}
	t.Logf("heat deficit checked on %d January 12 UTC Sterling soundings", checked)
}

// profileOrder returns the indices of s's levels with pressure,
// temperature and an analysed height, by decreasing pressure, repeated
// pressures dropped.
func profileOrder(s *sounding.Sounding, r Result) []int {
	var idx []int
	for i, l := range s.Levels {
		if l.PressurePa > 0 && l.TemperatureK > 0 && !math.IsNaN(r.HeightAGLM[i]) {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return s.Levels[idx[a]].PressurePa > s.Levels[idx[b]].PressurePa })
	out := idx[:0]
	for _, i := range idx {
		if len(out) > 0 && s.Levels[i].PressurePa == s.Levels[out[len(out)-1]].PressurePa {
			continue
		}
		out = append(out, i)
	}
	return out
}

// pressureAtHeight interpolates ln p linearly in the analysed height AGL.
func pressureAtHeight(s *sounding.Sounding, r Result, z float64) float64 {
	idx := profileOrder(s, r)
	for k := 1; k < len(idx); k++ {
		z0, z1 := r.HeightAGLM[idx[k-1]], r.HeightAGLM[idx[k]]
		if z <= z1 && z1 > z0 {
			f := (z - z0) / (z1 - z0)
			lp0, lp1 := math.Log(s.Levels[idx[k-1]].PressurePa), math.Log(s.Levels[idx[k]].PressurePa)
			return math.Exp(lp0 + f*(lp1-lp0))
		}
	}
	return math.NaN()
}

// TestStableLayerFraction applies the definition of Wolyn & McKee (1989,
// abstract: "if 65% of the lowest 1.5 km of the 1200 UTC sounding has a
// lapse rate of 2.5°C km−1 or less") to constructed profiles whose answer
// follows from the layer depths.
func TestStableLayerFraction(t *testing.T) {
	cfg := DefaultStableLayerConfig()
	cases := []struct {
		name string
		z, t []float64
		want float64
	}{
		{"isothermal", []float64{0, 1500}, []float64{270, 270}, 1},
		{"standard lapse 6.5 K/km", []float64{0, 2000}, []float64{288, 275}, 0},
		// 0-500 m inversion, 500-2000 m at 9.8 K/km: 500/1500.
		{"shallow inversion", []float64{0, 500, 2000}, []float64{265, 270, 255.3}, 1.0 / 3},
		// 0-1200 m at 2 K/km (stable), 1200-1600 m at 8 K/km: 1200/1500,
		// the upper layer clipped at 1500 m.
		{"deep stable", []float64{0, 1200, 1600}, []float64{270, 267.6, 264.4}, 0.8},
		// Exactly 2.5 K/km counts as stable ("or less").
		{"at the threshold", []float64{0, 1500}, []float64{270, 266.25}, 1},
		{"too shallow", []float64{0, 1400}, []float64{270, 270}, math.NaN()},
	}
	for _, tc := range cases {
		got := StableLayerFraction(tc.z, tc.t, cfg.DepthM, cfg.MaxLapseKPerKm)
		if math.IsNaN(tc.want) {
			if !math.IsNaN(got) {
				t.Errorf("%s: fraction %g, want NaN", tc.name, got)
			}
			continue
		}
		near(t, tc.name, got, tc.want, 1e-9)
	}
}
