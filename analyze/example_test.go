package analyze_test

import (
	"fmt"
	"math"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/sounding"
)

// level builds a level from hPa, m and °C (NaN for missing).
func level(kind sounding.LevelKind, pHPa, zM, tC, tdC float64) sounding.Level {
	l := sounding.NewLevel()
	l.Kind = kind
	l.PressurePa, l.HeightM, l.TemperatureK, l.DewpointK = pHPa*100, zM, tC+273.15, tdC+273.15
	return l
}

// A morning sounding (the METHODS §9 Part B example, invented station) with
// a surface-based inversion: heights of the significant levels are filled
// hypsometrically, and the inversion is reported above ground.
func ExampleAnalyze() {
	nan := math.NaN()
	s := &sounding.Sounding{StationID: "XQ0001", ElevationM: 15, Levels: []sounding.Level{
		level(sounding.KindSurface, 1019, 15, 14.4, 8.4),
		level(sounding.KindSignificant, 983, nan, 16.6, 11.6),
		level(sounding.KindSignificant, 962, nan, 18.2, 11.2),
		level(sounding.KindSignificant, 850, nan, 12.4, 6.4),
	}}
	r := analyze.Analyze(s, analyze.DefaultConfig())
	fmt.Println("status:", r.Status, "constants:", r.ConstantSet)
	for i, l := range s.Levels {
		fmt.Printf("%4.0f hPa %7.1f m derived=%v theta=%.2f K\n", l.PressurePa/100, r.HeightM[i], r.HeightDerived[i], r.ThetaK[i])
	}
	fmt.Printf("SBI: %.1f-%.1f m AGL, %+.1f K, %.2f K/km\n", r.SBI.BaseAGLM, r.SBI.TopAGLM, r.SBI.StrengthK, r.SBI.GradientKPerKm())
	fmt.Println("parcel mixing height:", r.Parcel.Status, r.Parcel.HeightAGLM)
	// Output:
	// status: ok constants: codata2018.v1
	// 1019 hPa    15.0 m derived=false theta=286.01 K
	//  983 hPa   320.3 m derived=true theta=291.17 K
	//  962 hPa   504.9 m derived=true theta=294.59 K
	//  850 hPa  1555.0 m derived=true theta=299.12 K
	// SBI: 0.0-489.9 m AGL, +3.8 K, 7.76 K/km
	// parcel mixing height: surface 0
}

// The parcel mixing height on an idealised potential-temperature profile
// (METHODS §9: θ = 291 + 2.4 K/km · z, parcel θ0 = 295.2 K).
func ExampleParcelMixingHeight() {
	z := []float64{0, 250, 500, 1000, 1500, 2000, 2500, 3000}
	theta := make([]float64, len(z))
	for i := range z {
		theta[i] = 291 + 2.4*z[i]/1000
	}
	h, status := analyze.ParcelMixingHeight(z, theta, 295.2, 5000)
	fmt.Printf("%s %.0f m\n", status, h)
	// Output: ok 1750 m
}

// The ventilation index of METHODS §9 (mixing height 1500 m, transport
// wind 5 m/s) in both units and in two category tables.
func ExampleVentilationIndex() {
	vi := analyze.VentilationIndex(1500, 5)
	fmt.Printf("%.0f m2/s = %.0f kt*ft\n", vi, vi*analyze.KtFtPerM2S)
	fmt.Println("nc_vis category:", analyze.NCVISTable().Category(vi))
	fmt.Println("generic category:", analyze.GenericVentilationTable().Category(vi))
	// Output:
	// 7500 m2/s = 47831 kt*ft
	// nc_vis category: 3
	// generic category: good
}
