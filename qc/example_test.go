package qc_test

import (
	"fmt"
	"math"

	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/sounding"
)

// level is scaffolding: pressure hPa, height gpm, temperature °C.
func level(kind sounding.LevelKind, pHPa, zM, tC float64) sounding.Level {
	l := sounding.NewLevel()
	l.Kind, l.PressurePa, l.HeightM, l.TemperatureK = kind, pHPa*100, zM, tC+273.15
	l.Status[sounding.VarPressure], l.Status[sounding.VarHeight], l.Status[sounding.VarTemperature] =
		sounding.Reported, sounding.Reported, sounding.Reported
	return l
}

// A sounding of the invented station XQ001 whose 500 hPa temperature was
// coded with the wrong sign: the two layers sharing it show hydrostatic
// residuals of the same sign, which vanish with the sign reversed, so the
// value is corrected, and Apply hands the corrected value to the analysis.
func Example() {
	s := &sounding.Sounding{StationID: "XQ001", ElevationM: 15, DeclaredLevels: -1}
	s.Levels = []sounding.Level{
		level(sounding.KindSurface, 1019, 15, 21.4),
		level(sounding.KindStandard, 850, 1563, 12.4),
		level(sounding.KindStandard, 700, 3152, -1.1),
		level(sounding.KindStandard, 500, 5750, +17.7), // should be −17.7
		level(sounding.KindStandard, 400, 7380, -29.7),
		level(sounding.KindStandard, 300, 9370, -45.1),
	}
	r := qc.Check(s, qc.DefaultConfig())
	fmt.Println("status:", r.Status)
	for _, f := range r.Findings {
		fmt.Printf("level %d %s: %s %s\n", f.Level, f.VariableName(), f.Check, f.Severity)
	}
	a := qc.Apply(s, r, false)
	fmt.Printf("analysis sees %.1f °C at 500 hPa\n", a.Levels[3].TemperatureK-273.15)
	fmt.Println("input unchanged:", math.Abs(s.Levels[3].TemperatureK-290.85) < 1e-9)
	// Output:
	// status: suspect
	// level 3 temperature: hydrostatic corrected
	// analysis sees -17.7 °C at 500 hPa
	// input unchanged: true
}
