package figures

import (
	"io"
	"math"
	"sort"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
)

// benchStation returns the figure data of an invented station with ten
// years of soundings at 00 and 12 UTC (scaffolding for the benchmark:
// smooth seasonal shapes, no source), sized like a long archive station:
// 24 boxes and bars, about 2,900 inversion strengths and 400 episode days.
func benchStation() StationData {
	st := Station{ID: "XBENCH1", Name: "INVENTED BENCH", First: time.Date(2006, 1, 1, 0, 0, 0, 0, time.UTC),
		Last: time.Date(2015, 12, 31, 12, 0, 0, 0, time.UTC), Soundings: 7300, Valid: 7100}
	h := &MonthlyHeights{Station: st, Method: Consensus}
	f := &SBIFrequency{Station: st}
	for m := 1; m <= 12; m++ {
		season := math.Cos(2 * math.Pi * float64(m-7) / 12) // 1 in July, -1 in January
		for _, hour := range []int{0, 12} {
			mid := 900 + 500*season
			if hour == 12 {
				mid = 300 + 150*season
			}
			h.Boxes = append(h.Boxes, HeightBox{Month: m, Hour: hour, N: 290, Undefined: 5,
				P10: 0.3 * mid, P25: 0.6 * mid, P50: mid, P75: 1.5 * mid, P90: 2.1 * mid})
			sbi := int(150 - 90*season)
			if hour == 0 {
				sbi /= 2
			}
			f.Cells = append(f.Cells, FrequencyCell{Month: m, Hour: hour, Valid: 295, SBI: sbi})
		}
	}
	s := &SBIStrength{Station: st, BySeason: map[string][]float64{}}
	for i, season := range Seasons {
		n := 1000 - 250*i
		for k := 0; k < n; k++ {
			s.BySeason[season] = append(s.BySeason[season], 12*math.Pow(float64(k)/float64(n), 2))
		}
		sort.Float64s(s.BySeason[season])
	}
	c := newEpisodeCalendar()
	c.Station, c.FirstYear, c.LastYear = st, 2006, 2015
	for y := 2006; y <= 2015; y++ {
		for d := 0; d < 40; d++ {
			c.Days = append(c.Days, CalendarDay{Rule: d % len(c.Rules), Date: time.Date(y, 1, 1+d*9, 0, 0, 0, 0, time.UTC), Met: d%7 != 0})
		}
	}
	return StationData{Heights: h, Frequency: f, Strength: s, Calendar: c}
}

// BenchmarkStationFigures draws and encodes the four climatology figures
// of one station as PNG (the work of a store-wide figures run per drawn
// station, without the queries).
func BenchmarkStationFigures(b *testing.B) {
	d := benchStation()
	if d.Calendar.Rules[0] != analyze.BuiltinCriteria()[0].Name {
		b.Fatal("calendar rules out of order")
	}
	b.ReportAllocs()
	for b.Loop() {
		for _, f := range d.Figures() {
			if err := f.Render(io.Discard, "png"); err != nil {
				b.Fatal(err)
			}
		}
	}
}
