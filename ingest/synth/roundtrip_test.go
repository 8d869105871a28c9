package synth_test

import (
	"bytes"
	"errors"
	"io"
	"math"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/sounding"
)

// TestRoundTrip reads a generated year back with the project's reader for
// the version-2 format and checks that every sounding and level arrives
// with the values written (format: igra2-data-format.txt, METHODS §7.2).
func TestRoundTrip(t *testing.T) {
	cfg := synth.Config{Seed: 11, StartYear: 2012, Years: 1, StationIndex: 4}
	st := cfg.Station()
	var buf bytes.Buffer
	n, err := synth.Write(&buf, cfg)
	if err != nil {
		t.Fatal(err)
	}
	r := archivev2.NewReader(bytes.NewReader(buf.Bytes()), "synth.txt", "")
	got := 0
	day := time.Date(2012, 1, 1, 0, 0, 0, 0, time.UTC)
	for {
		s, err := r.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("sounding %d: %v", got+1, err)
		}
		want := day.Add(time.Duration(12*(got%2)) * time.Hour)
		if got%2 == 1 {
			day = day.AddDate(0, 0, 1)
		}
		got++
		if s.StationID != st.ID || !s.NominalTime.Equal(want) {
			t.Fatalf("sounding %d: %s at %v, want %s at %v", got, s.StationID, s.NominalTime, st.ID, want)
		}
		// 00 UTC releases happen during the last hour of the previous day.
		if lag := s.NominalTime.Sub(s.LaunchTime); !s.LaunchTimeReported || lag < 0 || lag > time.Hour {
			t.Fatalf("sounding %d: launch %v for nominal %v", got, s.LaunchTime, s.NominalTime)
		}
		if math.Abs(s.LatitudeDeg-st.LatitudeDeg) > 1e-4 || math.Abs(s.LongitudeDeg-st.LongitudeDeg) > 1e-4 || s.ElevationM != st.ElevationM {
			t.Fatalf("sounding %d: position %v %v %v, want %+v", got, s.LatitudeDeg, s.LongitudeDeg, s.ElevationM, st)
		}
		if s.DeclaredLevels != len(s.Levels) {
			t.Fatalf("sounding %d: declared %d levels, read %d", got, s.DeclaredLevels, len(s.Levels))
		}
		checkLevels(t, got, s)
	}
	if got != n {
		t.Errorf("read %d soundings, wrote %d", got, n)
	}
}

func checkLevels(t *testing.T, i int, s *sounding.Sounding) {
	t.Helper()
	kinds := map[sounding.LevelKind]int{}
	trop := 0
	for j, l := range s.Levels {
		kinds[l.Kind]++
		if l.Tropopause {
			trop++
		}
		if l.Kind == sounding.KindWindOnly {
			if !math.IsNaN(l.PressurePa) || math.IsNaN(l.HeightM) || math.IsNaN(l.WindSpeedMS) {
				t.Fatalf("sounding %d level %d: wind-only level %+v", i, j, l)
			}
			continue
		}
		if math.IsNaN(l.PressurePa) || math.IsNaN(l.TemperatureK) || math.IsNaN(l.DewpointK) || l.DewpointK > l.TemperatureK {
			t.Fatalf("sounding %d level %d: %+v", i, j, l)
		}
		if l.TemperatureK < 180 || l.TemperatureK > 330 {
			t.Fatalf("sounding %d level %d: temperature %.1f K", i, j, l.TemperatureK)
		}
		hasZ := l.Status[sounding.VarHeight] == sounding.Reported
		if hasZ != (l.Kind != sounding.KindSignificant) || hasZ == math.IsNaN(l.HeightM) {
			t.Fatalf("sounding %d level %d: %s level with height %v (status %v)", i, j, l.Kind, l.HeightM, l.Status[sounding.VarHeight])
		}
		if l.Status[sounding.VarTemperature] != sounding.Reported || l.UpstreamTier[sounding.VarTemperature] != 'B' {
			t.Fatalf("sounding %d level %d: temperature status %v tier %q", i, j, l.Status[sounding.VarTemperature], l.UpstreamTier[sounding.VarTemperature])
		}
	}
	if s.Levels[0].Kind != sounding.KindSurface || kinds[sounding.KindSurface] != 1 || kinds[sounding.KindWindOnly] != 10 || kinds[sounding.KindStandard] < 9 || trop != 1 {
		t.Fatalf("sounding %d: level kinds %v, %d tropopauses", i, kinds, trop)
	}
}
