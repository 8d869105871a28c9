package qc

import (
	"math"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/sounding"
)

// nearSurfaceProfile is invented scaffolding: a surface level 2 K warmer
// than a dry adiabat would allow 90 m up (about 32 K/km over the first
// 10 hPa), then a standard lapse rate, at a mid-latitude place.
func nearSurfaceProfile(launch time.Time) *sounding.Sounding {
	s := &sounding.Sounding{StationID: "XN1", LatitudeDeg: 40, LongitudeDeg: -100, ElevationM: 500,
		LaunchTime: launch, NominalTime: launch, DeclaredLevels: -1}
	add := func(kind sounding.LevelKind, pHPa, zM, tC float64) {
		l := sounding.NewLevel()
		l.Kind, l.PressurePa, l.HeightM, l.TemperatureK = kind, pHPa*100, zM, tC+273.15
		l.Status[sounding.VarPressure], l.Status[sounding.VarHeight], l.Status[sounding.VarTemperature] =
			sounding.Reported, sounding.Reported, sounding.Reported
		if math.IsNaN(zM) {
			l.Status[sounding.VarHeight] = sounding.Missing
		}
		s.Levels = append(s.Levels, l)
	}
	add(sounding.KindSurface, 955, 500, 20)
	add(sounding.KindSignificant, 945, math.NaN(), 17.1)
	add(sounding.KindStandard, 925, 773, 15.5)
	add(sounding.KindStandard, 850, 1478, 10.9)
	add(sounding.KindStandard, 700, 3090, 0.5)
	add(sounding.KindStandard, 500, 5690, -16)
	return s
}

// TestNightSuperadiabatic: a superadiabatic layer at the ground is allowed
// by day and suspect at night (METHODS §6 "Superadiabatic"; night = sun
// below the horizon, METHODS §8). At 40° N 100° W, 20 UTC in July is early
// afternoon local time and 09 UTC is 03 local, before dawn.
func TestNightSuperadiabatic(t *testing.T) {
	count := func(s *sounding.Sounding) (n int, msg string) {
		for _, f := range Check(s, DefaultConfig()).Findings {
			if f.Check == CheckSuperadiabatic {
				n++
				msg = f.Message
			}
		}
		return n, msg
	}
	day := nearSurfaceProfile(time.Date(2020, 7, 1, 20, 0, 0, 0, time.UTC))
	if n, msg := count(day); n != 0 {
		t.Errorf("by day: %d superadiabatic findings (%s), want none", n, msg)
	}
	night := nearSurfaceProfile(time.Date(2020, 7, 1, 9, 0, 0, 0, time.UTC))
	n, msg := count(night)
	if n != 1 || !strings.Contains(msg, "at night") {
		t.Errorf("at night: %d findings (%q), want one", n, msg)
	}
	if r := Check(night, DefaultConfig()); r.Flags[1][sounding.VarTemperature] != Suspect {
		t.Errorf("flag of the layer top: %v, want suspect", r.Flags[1][sounding.VarTemperature])
	}
	// Without a position the night is unknown and the layer stays excused.
	night.LatitudeDeg = math.NaN()
	if n, _ := count(night); n != 0 {
		t.Errorf("no position: %d findings, want none", n)
	}
}

// TestNightSuperadiabaticRate: on the real Sterling 2016 archive
// (PROVENANCE.md), which its producer has already quality-controlled,
// the night check must be rare. 4 of its 270 night soundings are flagged
// (measured); the limit of 5 % is common practice, no source.
func TestNightSuperadiabaticRate(t *testing.T) {
	ss := sterling(t)
	nights, flagged := 0, 0
	cfg := DefaultConfig()
	for _, s := range ss {
		st := newState(s, cfg)
		if !st.night() {
			continue
		}
		nights++
		for _, f := range Check(s, cfg).Findings {
			if f.Check == CheckSuperadiabatic && strings.Contains(f.Message, "at night") {
				flagged++
				break
			}
		}
	}
	t.Logf("Sterling 2016: %d of %d night soundings flagged for a superadiabatic layer at the ground", flagged, nights)
	if nights < 200 || flagged == 0 || float64(flagged) > 0.05*float64(nights) {
		t.Errorf("%d of %d night soundings flagged; expected a few, under 5 %%", flagged, nights)
	}
}
