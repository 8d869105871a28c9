package analyze

import (
	"math"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/internal/benchcpu"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// benchSounding returns a 100-level sounding (invented scaffolding): a
// surface inversion over a mixed layer and a stable free troposphere, with
// heights reported only every tenth level, winds at every level and a
// position and launch time, so that every method runs.
func benchSounding() *sounding.Sounding {
	s := &sounding.Sounding{StationID: "XQ0099", ElevationM: 100, LatitudeDeg: 40, LongitudeDeg: -80,
		LaunchTime: time.Date(2016, 7, 1, 11, 0, 0, 0, time.UTC)}
	for i := 0; i < 100; i++ {
		p := 1000 - 8.5*float64(i)
		tc := 10 - 0.0065*8.5*float64(i)*9
		if i < 5 {
			tc = 5 + float64(i)
		}
		z := nan
		if i%10 == 0 {
			z = 100 + 75*float64(i)
		}
		k := sounding.KindSignificant
		if i == 0 {
			k = sounding.KindSurface
		}
		l := lvl(k, p, z, tc, tc-5)
		l.WindSpeedMS, l.WindDirectionDeg = 2+0.2*float64(i), 180+float64(i)
		s.Levels = append(s.Levels, l)
	}
	return s
}

func BenchmarkAnalyze100Levels(b *testing.B) {
	s := benchSounding()
	cfg := DefaultConfig()
	b.ReportAllocs()
	for b.Loop() {
		r := Analyze(s, cfg)
		if r.Status != StatusOK {
			b.Fatal(r.Status)
		}
	}
}

// BenchmarkBulkStability100Levels times what episodes add to every
// sounding's analysis (the heat deficit and the stable-layer fraction),
// on the same sounding as BenchmarkAnalyze100Levels, to compare the two.
func BenchmarkBulkStability100Levels(b *testing.B) {
	s := benchSounding()
	cfg := DefaultConfig()
	r := Analyze(s, cfg)
	var z, p, tk, th []float64
	for i, l := range s.Levels {
		if math.IsNaN(r.HeightAGLM[i]) || math.IsNaN(l.TemperatureK) {
			continue
		}
		z, p, tk = append(z, r.HeightAGLM[i]), append(p, l.PressurePa), append(tk, l.TemperatureK)
		th = append(th, thermo.PotentialTemperature(l.TemperatureK, l.PressurePa, cfg.Constants.Kappa, cfg.Constants.P0Pa))
	}
	top := cfg.HeatDeficit.TopAGL(z, p, 0)
	b.ReportAllocs()
	for b.Loop() {
		h := HeatDeficit(z, p, tk, th, top, cfg.Constants.Cpd, cfg.Constants.Rd)
		f := StableLayerFraction(z, tk, cfg.StableLayer.DepthM, cfg.StableLayer.MaxLapseKPerKm)
		if math.IsNaN(h) || math.IsNaN(f) {
			b.Fatal("heat deficit or stable fraction not computed")
		}
	}
}

// BenchmarkAnalyzeSterling analyses every sounding of the real Sterling
// 2016 file (PROVENANCE.md; about 198 levels each, as read, without
// quality control) with one Analyzer, as an ingest worker does; ns/level
// compares with the ingest's CPU time per level.
func BenchmarkAnalyzeSterling(b *testing.B) {
	ss := readSterling(b)
	levels := benchcpu.Levels(ss)
	a := NewAnalyzer(DefaultConfig())
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		for _, s := range ss {
			if r := a.Analyze(s); r.Status == "" {
				b.Fatal("no status")
			}
		}
	}
	benchcpu.PerLevel(b, cpu0, levels)
}
