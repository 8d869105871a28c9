package synth

import (
	"math"
	"math/rand/v2"
	"strconv"
)

// Info describes an invented station.
type Info struct {
	ID           string  // 11-character station id, "ZZXSYN" + five digits
	Name         string  // invented place name
	LatitudeDeg  float64 // degrees north
	LongitudeDeg float64 // degrees east (negative west)
	ElevationM   float64 // station elevation above mean sea level, m
}

// MaxStationIndex is the largest valid [Config.StationIndex].
const MaxStationIndex = 99998

var (
	namePrefixes = [...]string{"MARROW", "TELLIN", "QUILLAN", "HOLLICK", "DUNSTRAL", "BRENNICK", "ORVELL", "CASKET", "WENDRY", "PALLISH"}
	nameSuffixes = [...]string{"VALE", "BASIN", "FLATS", "BENCH", "HOLLOW", "GAP", "BOTTOM", "DRAW"}
)

// Station returns the default invented station (index 0), the one described
// in the package documentation.
func Station() Info { return StationAt(0) }

// StationAt returns the invented station with the given index. Index 0 is
// the default station; other indices give other stations on the same
// invented high plain, each with its own id, position and elevation,
// always the same for the same index. Indices outside
// [0, MaxStationIndex] are clamped into that range.
func StationAt(index int) Info {
	index = min(max(index, 0), MaxStationIndex)
	id := strconv.Itoa(index + 1)
	for len(id) < 5 {
		id = "0" + id
	}
	info := Info{ID: "ZZXSYN" + id}
	np, ns := len(namePrefixes), len(nameSuffixes)
	info.Name = namePrefixes[index%np] + " " + nameSuffixes[(index/np)%ns]
	if index >= np*ns {
		info.Name += " " + strconv.Itoa(index/(np*ns)+1)
	}
	if index == 0 {
		info.LatitudeDeg, info.LongitudeDeg, info.ElevationM = 42.37, -101.85, 560
		return info
	}
	r := rand.New(rand.NewPCG(uint64(index), 0x5f3759df0badcafe))
	info.LatitudeDeg = round4(36 + 12*r.Float64())
	info.LongitudeDeg = round4(-112 + 20*r.Float64())
	info.ElevationM = math.Round(300 + 600*r.Float64())
	return info
}

func round4(x float64) float64 { return math.Round(x*1e4) / 1e4 }

// climate holds the seasonal parameters of a station. Temperatures in °C,
// mixing ratios in kg/kg, heights in m.
type climate struct {
	tmaxWinter, tmaxSummer float64 // mean afternoon surface temperature, mid-winter and mid-summer
	dtrWinter, dtrSummer   float64 // mean diurnal range
	wWinter, wSummer       float64 // mean surface mixing ratio
	utcOffsetH             float64 // local solar time minus UTC, h (longitude/15)
	surfacePa              float64 // mean surface pressure
}

// climateOf derives a station's climate from its latitude and elevation:
// 0.7 K colder per degree of latitude northward and 6.5 K/km colder with
// elevation (common practice, no source), and the surface pressure of the
// U.S. Standard Atmosphere 1976 at the station elevation.
func climateOf(s Info) climate {
	shift := -0.7*(s.LatitudeDeg-42.37) - 0.0065*(s.ElevationM-560)
	return climate{
		tmaxWinter: -2 + shift,
		tmaxSummer: 30 + shift,
		dtrWinter:  11,
		dtrSummer:  15,
		wWinter:    0.0024,
		wSummer:    0.0080,
		utcOffsetH: s.LongitudeDeg / 15,
		// USSA76 troposphere (METHODS §1.7): p = 101325 (1 − 0.0065 H/288.15)^5.25588.
		surfacePa: 101325 * math.Pow(1-0.0065*s.ElevationM/288.15, 5.25588),
	}
}
