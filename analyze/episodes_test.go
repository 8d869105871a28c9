package analyze

import (
	"math"
	"math/rand"
	"testing"
	"time"
)

func date(m time.Month, d int) time.Time { return time.Date(2016, m, d, 0, 0, 0, 0, time.UTC) }

// holzDay is a day record for the Holzworth rule with the given afternoon
// mixing height and wind (NaN unknown).
func holzDay(st string, d time.Time, mh, wind float64) DayRecord {
	return DayRecord{StationID: st, Date: d, Soundings: 2, Morning: 0, Afternoon: 1,
		MorningSBIStrengthK: nan, MorningHeatDeficitJ: nan, MaxHeatDeficitJ: 1e6 * mh / 1000, StableFraction: nan,
		AfternoonMHM: mh, AfternoonWindMS: wind, VentilationM2S: mh * wind}
}

func holzworth(t *testing.T) Criterion {
	for _, c := range BuiltinCriteria() {
		if c.Name == CriterionPollutionPotential {
			return c
		}
	}
	t.Fatal("no Holzworth criterion")
	return Criterion{}
}

// TestEpisodesHolzworthRule applies Holzworth's (1972) thresholds as
// summarised in Boubel et al., Fundamentals of Air Pollution ch. 21
// ("mixing heights of 1500 m or less, with average speed through the
// mixing height of 4 m/s or less … for at least 2 days") to a
// constructed sequence, with this package's documented gap rule.
func TestEpisodesHolzworthRule(t *testing.T) {
	c := holzworth(t)
	days := []DayRecord{
		holzDay("A", date(1, 1), 2000, 2), // fails (deep)
		holzDay("A", date(1, 2), 1500, 4), // meets: both limits inclusive
		holzDay("A", date(1, 3), 800, 1),  // meets
		// 1-4 has no record: a 1-day gap stays inside
		holzDay("A", date(1, 5), 600, 3),    // meets
		holzDay("A", date(1, 6), 900, 5),    // fails (wind): ends the episode 1-2..1-5
		holzDay("A", date(1, 7), 700, 2),    // a single day: too short
		holzDay("A", date(1, 8), 1600, 2),   // fails
		holzDay("A", date(1, 9), 500, 1),    // meets
		holzDay("A", date(1, 10), 400, nan), // wind unknown
		holzDay("A", date(1, 11), 300, nan), // second unknown day: gap too long, ends at 1-9
		holzDay("A", date(1, 12), 300, 1),   // meets
		holzDay("A", date(1, 13), 300, 1),   // meets, last record: open end
		holzDay("B", date(1, 1), 100, 1),    // another station, same dates
		holzDay("B", date(1, 2), 100, 1),
	}
	got, err := FindEpisodes(days, c)
	if err != nil {
		t.Fatal(err)
	}
	type want struct {
		st                 string
		first, last        time.Time
		length, met, miss  int
		openStart, openEnd bool
		lowMH, lowVent     float64
	}
	wants := []want{
		{"A", date(1, 2), date(1, 5), 4, 3, 1, false, false, 600, 800 * 1},
		{"A", date(1, 12), date(1, 13), 2, 2, 0, true, true, 300, 300},
		{"B", date(1, 1), date(1, 2), 2, 2, 0, true, true, 100, 100},
	}
	if len(got) != len(wants) {
		t.Fatalf("%d episodes, want %d: %+v", len(got), len(wants), got)
	}
	for i, w := range wants {
		e := got[i]
		if e.StationID != w.st || !e.First.Equal(w.first) || !e.Last.Equal(w.last) || e.LengthDays != w.length ||
			e.DaysMet != w.met || e.DaysMissing != w.miss || e.OpenStart != w.openStart || e.OpenEnd != w.openEnd {
			t.Errorf("episode %d = %s %s..%s len %d met %d missing %d open %v/%v, want %+v", i, e.StationID,
				e.First.Format("01-02"), e.Last.Format("01-02"), e.LengthDays, e.DaysMet, e.DaysMissing, e.OpenStart, e.OpenEnd, w)
		}
		near(t, "lowest afternoon mixing height", e.LowestAfternoonMHM, w.lowMH, 0)
		near(t, "lowest ventilation", e.LowestVentilationM2S, w.lowVent, 0)
		if len(e.Days) != e.LengthDays {
			t.Errorf("episode %d lists %d days, length %d", i, len(e.Days), e.LengthDays)
		}
	}
	// The missing day is listed as Unknown and its absence adds no soundings.
	if d := got[0].Days[2]; !d.Date.Equal(date(1, 4)) || d.Status != Unknown {
		t.Errorf("day 3 of the first episode = %v %v, want 01-04 unknown", d.Date, d.Status)
	}
	if got[0].Soundings != 6 {
		t.Errorf("soundings = %d, want 6 (3 days of 2)", got[0].Soundings)
	}
	// Order does not matter.
	r := rand.New(rand.NewSource(1))
	for k := 0; k < 5; k++ {
		sh := append([]DayRecord(nil), days...)
		r.Shuffle(len(sh), func(i, j int) { sh[i], sh[j] = sh[j], sh[i] })
		again, _ := FindEpisodes(sh, c)
		if len(again) != len(got) {
			t.Fatalf("shuffled: %d episodes, want %d", len(again), len(got))
		}
		for i := range got {
			if !again[i].First.Equal(got[i].First) || again[i].LengthDays != got[i].LengthDays || again[i].StationID != got[i].StationID {
				t.Errorf("shuffled episode %d differs", i)
			}
		}
	}
	// A gap of 0 days allowed splits the first episode: 1-2..1-3 remains.
	c.MaxGapDays = 0
	strict, _ := FindEpisodes(days, c)
	if len(strict) == 0 || !strict[0].Last.Equal(date(1, 3)) || !strict[0].OpenEnd {
		t.Errorf("MaxGapDays 0: first episode %+v, want 01-02..01-03 with an open end", strict[0])
	}
	c.MinDays = 0
	if _, err := FindEpisodes(days, c); err == nil {
		t.Error("MinDays 0 accepted")
	}
}

// TestEpisodesAcrossYearEnd: an episode over New Year is one episode.
func TestEpisodesAcrossYearEnd(t *testing.T) {
	c := holzworth(t)
	var days []DayRecord
	for d := time.Date(2016, 12, 28, 0, 0, 0, 0, time.UTC); d.Year() < 2017 || d.Day() < 4; d = d.Add(24 * time.Hour) {
		days = append(days, holzDay("A", d, 500, 1))
	}
	got, _ := FindEpisodes(days, c)
	if len(got) != 1 || got[0].LengthDays != 7 {
		t.Fatalf("episodes %+v, want one of 7 days", got)
	}
}

func TestCriterionPersistentSBI(t *testing.T) {
	var pi Criterion
	for _, c := range BuiltinCriteria() {
		if c.Name == CriterionPersistentInversion {
			pi = c
		}
	}
	d := DayRecord{MorningSBI: Yes, MorningSBIStrengthK: 3, AfternoonSBI: Yes}
	if pi.Evaluate(d) != Yes {
		t.Error("morning and evening SBI: want met")
	}
	d.AfternoonSBI = Unknown
	if pi.Evaluate(d) != Unknown {
		t.Error("no evening sounding: want unknown")
	}
	d.MorningSBI = No
	if pi.Evaluate(d) != No {
		t.Error("no morning SBI: want failed whatever the evening")
	}
	pi.MinMorningSBIStrengthK = 4
	d = DayRecord{MorningSBI: Yes, MorningSBIStrengthK: 3, AfternoonSBI: Yes}
	if pi.Evaluate(d) != No {
		t.Error("3 K morning SBI with a 4 K minimum: want failed")
	}
}

// TestBuildDays pairs a US-style 12/00 UTC station (Sterling's longitude,
// 77.5° W): the 00 UTC launch of 2 January is about 19 h local mean solar
// time on 1 January, so it is 1 January's evening sounding.
func TestBuildDays(t *testing.T) {
	const lon = -77.5
	at := func(d, h int) time.Time { return time.Date(2016, 1, d, h, 0, 0, 0, time.UTC) }
	obs := []DayObs{
		{StationID: "S", LaunchTime: at(1, 11), LongitudeDeg: lon, SBIPresent: true, SBIStrengthK: 5, HeatDeficitJ: 3e6, StableFraction: 0.7, ParcelMHM: 0, TransportWindMS: 2},
		{StationID: "S", LaunchTime: at(1, 23), LongitudeDeg: lon, SBIPresent: true, SBIStrengthK: 1, HeatDeficitJ: 4e6, StableFraction: 0.5, ParcelMHM: 300, TransportWindMS: 3},
		{StationID: "S", LaunchTime: at(2, 11), LongitudeDeg: lon, SBIPresent: false, SBIStrengthK: nan, HeatDeficitJ: 1e6, StableFraction: nan, ParcelMHM: 200, TransportWindMS: 6},
		{StationID: "S", LaunchTime: at(2, 12), LongitudeDeg: nan}, // no position: left out
	}
	holz := map[DayKey]float64{{"S", date(1, 2)}: 900}
	days := BuildDays(obs, holz, DefaultDayConfig())
	if len(days) != 2 {
		t.Fatalf("%d days, want 2", len(days))
	}
	d1, d2 := days[0], days[1]
	if !d1.Date.Equal(date(1, 1)) || d1.Soundings != 2 || d1.Morning != 0 || d1.Afternoon != 1 {
		t.Errorf("day 1 = %+v", d1)
	}
	if d1.SBIPersists(0) != Yes || d1.DeepStable != Yes {
		t.Errorf("day 1: persists %v, deep stable %v, want yes, yes", d1.SBIPersists(0), d1.DeepStable)
	}
	// No Holzworth height for 1 January: the evening sounding's own parcel height.
	if d1.AfternoonMHM != 300 || d1.AfternoonMHSource != AfternoonFromSounding || d1.VentilationM2S != 900 {
		t.Errorf("day 1 afternoon %g (%s), ventilation %g", d1.AfternoonMHM, d1.AfternoonMHSource, d1.VentilationM2S)
	}
	near(t, "day 1 max heat deficit", d1.MaxHeatDeficitJ, 4e6, 0)
	near(t, "day 1 morning heat deficit", d1.MorningHeatDeficitJ, 3e6, 0)
	// 2 January: Holzworth height but no evening sounding, so no wind.
	if d2.AfternoonMHM != 900 || d2.AfternoonMHSource != AfternoonFromHolzworth || !math.IsNaN(d2.AfternoonWindMS) ||
		d2.SBIPersists(0) != No || d2.DeepStable != Unknown || d2.Soundings != 1 {
		t.Errorf("day 2 = %+v", d2)
	}
	// A second station's copies, interleaved and in reverse order, change
	// nothing of S's days and come first (sorted by station, then date).
	var mixed []DayObs
	for i := len(obs) - 1; i >= 0; i-- {
		r := obs[i]
		r.StationID = "R"
		mixed = append(mixed, obs[i], r)
	}
	both := BuildDays(mixed, holz, DefaultDayConfig())
	if len(both) != 4 || both[0].StationID != "R" || both[2].StationID != "S" {
		t.Fatalf("two stations: %d days, stations %v", len(both), both)
	}
	for i, d := range both[2:] {
		// Morning and Afternoon index into the input; compare what they pick.
		if !d.Date.Equal(days[i].Date) || d.Soundings != days[i].Soundings || d.AfternoonMHM != days[i].AfternoonMHM ||
			d.MorningSBI != days[i].MorningSBI || d.VentilationM2S != days[i].VentilationM2S && !math.IsNaN(d.VentilationM2S) ||
			mixed[d.Morning].LaunchTime != obs[days[i].Morning].LaunchTime {
			t.Errorf("two stations, S day %d = %+v, want %+v", i, d, days[i])
		}
	}
}
