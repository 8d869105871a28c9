package analyze

import (
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

var nan = math.NaN()

// lvl builds a level from display units (hPa, m, °C); NaN means missing.
func lvl(kind sounding.LevelKind, pHPa, zM, tC, tdC float64) sounding.Level {
	l := sounding.NewLevel()
	l.Kind = kind
	l.PressurePa, l.HeightM = pHPa*100, zM
	l.TemperatureK, l.DewpointK = tC+273.15, tdC+273.15
	for v, x := range map[sounding.Var]float64{sounding.VarPressure: pHPa, sounding.VarHeight: zM, sounding.VarTemperature: tC} {
		if !math.IsNaN(x) {
			l.Status[v] = sounding.Reported
		}
	}
	return l
}

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.4f, want %.4f ± %g", name, got, want, tol)
	}
}

// ttbb returns the METHODS §9 Part B snippet (TTBB 06001 72208 …) decoded:
// surface 1019 hPa at 15 m, 14.4/8.4 °C; 983 hPa 16.6/11.6; 962 hPa
// 18.2/11.2; 850 hPa 12.4/6.4. Station identity invented.
func ttbb() *sounding.Sounding {
	return &sounding.Sounding{StationID: "XQ0001", ElevationM: 15, Levels: []sounding.Level{
		lvl(sounding.KindSurface, 1019, 15, 14.4, 8.4),
		lvl(sounding.KindSignificant, 983, nan, 16.6, 11.6),
		lvl(sounding.KindSignificant, 962, nan, 18.2, 11.2),
		lvl(sounding.KindSignificant, 850, nan, 12.4, 6.4),
	}}
}

// ttaa returns the standard levels of the METHODS §9 TTAA example message
// (surface 1019 hPa, station at 15 m, up to 100 hPa) as decoded there.
// Station identity invented.
func ttaa() *sounding.Sounding {
	s := &sounding.Sounding{StationID: "XQ0002", ElevationM: 15}
	rows := [][4]float64{
		{1019, 15, 21.4, 15.4},
		{1000, 178, 20.6, 12.6},
		{925, 848, 16.8, 10.8},
		{850, 1563, 12.4, 6.4},
		{700, 3152, -1.1, -9.1},
		{500, 5750, -17.7, -31.7},
		{400, 7380, -29.7, -41.7},
		{300, 9370, -45.1, -55.1},
		{250, 10560, -52.9, -59.9},
		{200, 11980, -58.7, -65.7},
		{150, 13780, -60.9, -76.9},
		{100, 16270, -66.5, -85.5},
	}
	for i, r := range rows {
		k := sounding.KindStandard
		if i == 0 {
			k = sounding.KindSurface
		}
		s.Levels = append(s.Levels, lvl(k, r[0], r[1], r[2], r[3]))
	}
	return s
}
