package qc

import (
	"encoding/binary"
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

// fromBytes builds a sounding from arbitrary bytes: 10 bytes per level
// (kind, then pressure, height, temperature, depression, RH, wind speed,
// direction, elapsed time and a status byte, each decoded so that special
// values such as NaN, ±Inf, zero and negative numbers occur). Unit
// scaffolding for the fuzz test.
func fromBytes(b []byte) *sounding.Sounding {
	s := &sounding.Sounding{DeclaredLevels: -1, ElevationM: math.NaN()}
	if len(b) > 0 {
		switch b[0] % 4 {
		case 1:
			s.ElevationM = float64(int8(b[0])) * 10
		case 2:
			s.ElevationM = math.Inf(1)
		}
		b = b[1:]
	}
	val := func(x byte, scale, off float64) float64 {
		switch x {
		case 0:
			return math.NaN()
		case 1:
			return math.Inf(1)
		case 2:
			return math.Inf(-1)
		case 3:
			return 0
		}
		return float64(x)*scale + off
	}
	for len(b) >= 10 {
		l := sounding.NewLevel()
		l.Kind = sounding.LevelKind(b[0] % 5)
		l.PressurePa = val(b[1], 450, -5000)
		l.HeightM = val(b[2], 150, -1000)
		l.TemperatureK = val(b[3], 1.5, 150)
		l.DewpointDepressionK = val(b[4], 0.5, -10)
		l.RelHumidityPct = val(b[5], 0.5, -5)
		l.WindSpeedMS = val(b[6], 0.6, -5)
		l.WindDirectionDeg = val(b[7], 1.6, -10)
		l.ElapsedS = val(b[8], 30, -60)
		l.DewpointK = l.TemperatureK - l.DewpointDepressionK
		for v := range sounding.NumVars {
			l.Status[v] = sounding.Status((b[9] >> (v % 4)) % 4)
		}
		s.Levels = append(s.Levels, l)
		b = b[10:]
	}
	if len(b) > 0 {
		s.DeclaredLevels = int(b[0]) - 1
	}
	return s
}

// FuzzCheck: Check and Apply never panic, and their results keep their
// invariants, whatever the sounding.
func FuzzCheck(f *testing.F) {
	f.Add([]byte{})
	f.Add([]byte{1, 1, 200, 10, 190, 20, 100, 10, 100, 4, 0})
	seed := make([]byte, 1, 301)
	for i := range 30 { // a plausible decreasing profile, then noise
		seed = append(seed, 2, byte(220-7*i), byte(8+5*i), byte(100-2*i), 20, 120, 30, 100, byte(4+i), 0)
	}
	f.Add(seed)
	var buf [8]byte
	binary.LittleEndian.PutUint64(buf[:], math.Float64bits(math.NaN()))
	f.Add(append([]byte{0}, buf[:]...))
	f.Fuzz(func(t *testing.T, b []byte) {
		s := fromBytes(b)
		cfg := DefaultConfig()
		r := Check(s, cfg)
		if r.Status == "" {
			t.Fatal("empty status")
		}
		if len(r.Flags) != len(s.Levels) && len(s.Levels) > 0 && r.Usable() {
			t.Fatalf("%d flag rows for %d levels", len(r.Flags), len(s.Levels))
		}
		for _, fd := range r.Findings {
			if fd.Level < -1 || fd.Level >= len(s.Levels) {
				t.Fatalf("finding on level %d of %d", fd.Level, len(s.Levels))
			}
		}
		a := Apply(s, r, b != nil && len(b)%2 == 0)
		if len(a.Levels) != len(s.Levels) {
			t.Fatalf("Apply: %d levels, want %d", len(a.Levels), len(s.Levels))
		}
		// Check is deterministic, and the working memory its pool reuses
		// from input to input changes nothing: a run with fresh memory
		// gives the same report, bit for bit.
		r2 := check(s, cfg, new(scratch))
		if added, removed := diff(r.Findings, r2.Findings); r.Status != r2.Status || len(added)+len(removed) > 0 || !sameReport(r, r2) {
			t.Fatalf("run with fresh memory differs")
		}
	})
}

// sounding100 is an invented 100-level profile (standard-atmosphere
// temperatures, heights from the USSA76 pressure altitude, 10 hPa apart).
func sounding100() *sounding.Sounding {
	s := &sounding.Sounding{StationID: "XQ100", DeclaredLevels: 100, ElevationM: 110.9}
	for i := range 100 {
		p := 100000 - float64(i)*900
		l := sounding.NewLevel()
		l.Kind = sounding.KindSignificant
		if i == 0 {
			l.Kind = sounding.KindSurface
		}
		l.PressurePa = p
		l.HeightM = math.Round(standardHeight(p))
		l.TemperatureK = 288.15 - 0.0065*standardHeight(p)
		l.DewpointDepressionK = 5
		l.DewpointK = l.TemperatureK - 5
		l.RelHumidityPct = 60
		l.WindSpeedMS, l.WindDirectionDeg = 10, 270
		for _, v := range []sounding.Var{sounding.VarPressure, sounding.VarHeight, sounding.VarTemperature,
			sounding.VarDewpointDepression, sounding.VarRelHumidity, sounding.VarWindSpeed, sounding.VarWindDirection} {
			l.Status[v] = sounding.Reported
		}
		s.Levels = append(s.Levels, l)
	}
	return s
}

// standardHeight is the USSA76 pressure altitude below 11 km (METHODS §1.7).
func standardHeight(p float64) float64 {
	return 288.15 / 0.0065 * (1 - math.Pow(p/101325, 1/5.25588))
}

func BenchmarkCheck100Levels(b *testing.B) {
	s := sounding100()
	cfg := DefaultConfig()
	if r := Check(s, cfg); !r.Usable() {
		b.Fatalf("scaffold profile not usable: %s %+v", r.Status, r.Findings)
	}
	b.ReportAllocs()
	for b.Loop() {
		Check(s, cfg)
	}
}

func BenchmarkApply100Levels(b *testing.B) {
	s := sounding100()
	r := Check(s, DefaultConfig())
	b.ReportAllocs()
	for b.Loop() {
		Apply(s, r, false)
	}
}
