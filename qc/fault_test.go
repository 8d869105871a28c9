package qc

import (
	"fmt"
	"math"
	"strconv"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

// key identifies a finding for comparisons (NaN-safe).
func key(f Finding) string {
	return fmt.Sprintf("%d|%s|%s|%s|%v|%v|%s", f.Level, f.VariableName(), f.Check, f.Severity, f.Value, f.NewValue, f.Message)
}

// diff returns the findings of got that base lacks and those of base that
// got lacks (as multisets).
func diff(base, got []Finding) (added, removed []Finding) {
	count := map[string]int{}
	for _, f := range base {
		count[key(f)]++
	}
	for _, f := range got {
		if count[key(f)] > 0 {
			count[key(f)]--
		} else {
			added = append(added, f)
		}
	}
	seen := map[string]int{}
	for _, f := range got {
		seen[key(f)]++
	}
	for _, f := range base {
		if seen[key(f)] > 0 {
			seen[key(f)]--
		} else {
			removed = append(removed, f)
		}
	}
	return added, removed
}

// expect describes the single finding a fault must produce.
type expect struct {
	level    int
	variable string
	check    CheckName
	severity Flag
}

// fault is one injected error: pick chooses a target level in a sounding
// (ok false when the sounding does not suit), apply damages a copy.
type fault struct {
	name  string
	pick  func(s *sounding.Sounding, base Report) (k int, ok bool)
	apply func(s *sounding.Sounding, k int) *sounding.Sounding
	want  func(s *sounding.Sounding, k int) expect
	// removedOK says whether a baseline finding may disappear (only for
	// levels the fault deletes).
	removedOK func(f Finding, damaged *sounding.Sounding) bool
	check     func(t *testing.T, orig, damaged *sounding.Sounding, r Report, k int)
}

// cleanAround reports whether the baseline has no finding of this
// pipeline's checks other than the routine cold-humidity summary, so that
// an injected fault is the only thing to see.
func cleanAround(base Report) bool {
	for _, f := range base.Findings {
		if f.Check != CheckColdHumidity && f.Check != CheckUpstream {
			return false
		}
	}
	return true
}

// anchorNeighbours returns the previous and next levels with pressure,
// reported height and temperature around k, or −1.
func anchorNeighbours(s *sounding.Sounding, k int) (int, int) {
	ok := func(i int) bool {
		l := &s.Levels[i]
		return !math.IsNaN(l.PressurePa) && !math.IsNaN(l.TemperatureK) && l.Status[sounding.VarHeight] == sounding.Reported
	}
	a, b := -1, -1
	for i := k - 1; i >= 0; i-- {
		if ok(i) {
			a = i
			break
		}
		if !math.IsNaN(s.Levels[i].PressurePa) && s.Levels[i].Status[sounding.VarHeight] == sounding.Reported {
			return -1, -1
		}
	}
	for i := k + 1; i < len(s.Levels); i++ {
		if ok(i) {
			b = i
			break
		}
		if !math.IsNaN(s.Levels[i].PressurePa) && s.Levels[i].Status[sounding.VarHeight] == sounding.Reported {
			return -1, -1
		}
	}
	return a, b
}

// thicknessBetween is the hypsometric thickness (m) from level a to b of s
// with the default configuration.
func thicknessBetween(s *sounding.Sounding, a, b int) float64 {
	st := newState(s, DefaultConfig())
	return st.thickness(a, b, st.t, st.td)
}

func tolOf(thick float64) float64 {
	c := DefaultConfig()
	return math.Max(c.HydrostaticTolM, c.HydrostaticTolFrac*thick)
}

// transposeHundreds swaps the thousands and hundreds digits of a height
// (e.g. 5675 → 6575) and reports whether the number had them and changed.
func transposeHundreds(z float64) (float64, bool) {
	s := strconv.Itoa(int(z))
	if len(s) < 4 || float64(int(z)) != z {
		return z, false
	}
	b := []byte(s)
	i := len(b) - 4
	if b[i] == b[i+1] {
		return z, false
	}
	b[i], b[i+1] = b[i+1], b[i]
	v, _ := strconv.Atoi(string(b))
	return float64(v), true
}

var faults = []fault{
	{
		// A temperature with its sign reversed, at a level with a reported
		// height, cold enough and between layers thick enough that the
		// error exceeds three tolerances in both layers (so the fault is
		// hydrostatically visible by construction).
		name: "sign of one temperature",
		pick: func(s *sounding.Sounding, base Report) (int, bool) {
			for k := range s.Levels {
				l := &s.Levels[k]
				if l.Kind == sounding.KindSurface || !(l.TemperatureK < c0-30) || !(l.PressurePa > 20000) || l.Status[sounding.VarHeight] != sounding.Reported {
					continue
				}
				a, b := anchorNeighbours(s, k)
				if a < 0 || b < 0 {
					continue
				}
				t1, t2 := thicknessBetween(s, a, k), thicknessBetween(s, k, b)
				shift := (c0 - l.TemperatureK) / l.TemperatureK // half of 2|t|, relative
				if shift*t1 > 3*tolOf(t1) && shift*t2 > 3*tolOf(t2) {
					return k, true
				}
			}
			return 0, false
		},
		apply: func(s *sounding.Sounding, k int) *sounding.Sounding {
			c := clone(s)
			l := &c.Levels[k]
			l.TemperatureK = 2*c0 - l.TemperatureK
			if !math.IsNaN(l.DewpointDepressionK) {
				l.DewpointK = l.TemperatureK - l.DewpointDepressionK
			}
			return c
		},
		want: func(s *sounding.Sounding, k int) expect {
			return expect{k, "temperature", CheckHydrostatic, Corrected}
		},
		check: func(t *testing.T, orig, damaged *sounding.Sounding, r Report, k int) {
			// The correction restores the original value exactly, and Apply
			// hands it to the analysis.
			a := Apply(damaged, r, false)
			if math.Abs(a.Levels[k].TemperatureK-orig.Levels[k].TemperatureK) > 1e-9 {
				t.Errorf("Apply: temperature %.2f K, want the original %.2f K", a.Levels[k].TemperatureK, orig.Levels[k].TemperatureK)
			}
		},
	},
	{
		// Two digits of one height transposed (thousands ↔ hundreds), at a
		// level between two other height levels, large enough to exceed
		// three tolerances.
		name: "two digits of one height transposed",
		pick: func(s *sounding.Sounding, base Report) (int, bool) {
			for k := range s.Levels {
				l := &s.Levels[k]
				if l.Kind == sounding.KindSurface || math.IsNaN(l.TemperatureK) || l.Status[sounding.VarHeight] != sounding.Reported {
					continue
				}
				a, b := anchorNeighbours(s, k)
				if a < 0 || b < 0 {
					continue
				}
				z, ok := transposeHundreds(l.HeightM)
				t1, t2 := thicknessBetween(s, a, k), thicknessBetween(s, k, b)
				if ok && math.Abs(z-l.HeightM) > 3*math.Max(tolOf(t1), tolOf(t2)) && math.Abs(z-l.HeightM) < 0.8*math.Min(t1, t2) {
					return k, true
				}
			}
			return 0, false
		},
		apply: func(s *sounding.Sounding, k int) *sounding.Sounding {
			c := clone(s)
			c.Levels[k].HeightM, _ = transposeHundreds(c.Levels[k].HeightM)
			return c
		},
		want: func(s *sounding.Sounding, k int) expect { return expect{k, "height", CheckHydrostatic, Bad} },
	},
	{
		// A dewpoint 3 K above the temperature, at a level warmer than the
		// cold-humidity limit and above 700 hPa (little vapour, so dropping
		// it barely changes the virtual temperature).
		name: "dewpoint above the temperature",
		pick: func(s *sounding.Sounding, base Report) (int, bool) {
			for k := range s.Levels {
				l := &s.Levels[k]
				if l.PressurePa < 70000 && l.TemperatureK > c0-30 && l.Status[sounding.VarDewpointDepression] == sounding.Reported &&
					l.Status[sounding.VarTemperature] == sounding.Reported {
					return k, true
				}
			}
			return 0, false
		},
		apply: func(s *sounding.Sounding, k int) *sounding.Sounding {
			c := clone(s)
			l := &c.Levels[k]
			l.DewpointDepressionK = -3
			l.DewpointK = l.TemperatureK + 3
			return c
		},
		want: func(s *sounding.Sounding, k int) expect {
			return expect{k, "dewpoint_depression", CheckDewpoint, Bad}
		},
	},
	{
		// Two adjacent pressure levels with temperatures and heights swapped
		// in the lower troposphere. The longest decreasing run keeps the
		// later of the two, so the level now at position k is dropped.
		name: "two levels swapped",
		pick: func(s *sounding.Sounding, base Report) (int, bool) {
			for k := 1; k+2 < len(s.Levels); k++ {
				a, b := &s.Levels[k], &s.Levels[k+1]
				if a.PressurePa > 85000 && b.PressurePa > 80000 && a.Kind != sounding.KindSurface &&
					!math.IsNaN(a.TemperatureK) && !math.IsNaN(b.TemperatureK) {
					return k, true
				}
			}
			return 0, false
		},
		apply: func(s *sounding.Sounding, k int) *sounding.Sounding {
			c := clone(s)
			c.Levels[k], c.Levels[k+1] = c.Levels[k+1], c.Levels[k]
			return c
		},
		want: func(s *sounding.Sounding, k int) expect { return expect{k, "pressure", CheckPressureOrder, Bad} },
		check: func(t *testing.T, orig, damaged *sounding.Sounding, r Report, k int) {
			// The whole dropped level is gone from the analysis copy; its
			// neighbour is untouched.
			a := Apply(damaged, r, true)
			if !math.IsNaN(a.Levels[k].PressurePa) || !math.IsNaN(a.Levels[k].TemperatureK) {
				t.Errorf("Apply kept the out-of-order level: p %v T %v", a.Levels[k].PressurePa, a.Levels[k].TemperatureK)
			}
			if a.Levels[k+1].PressurePa != orig.Levels[k].PressurePa {
				t.Errorf("Apply changed the level kept in order")
			}
		},
	},
	{
		// The sounding ends at 900 hPa (burst or lost signal): every level
		// from the first one above 900 hPa on is cut, wind-only levels
		// included, and the header count matches what is left.
		name: "sounding cut at 900 hPa",
		pick: func(s *sounding.Sounding, base Report) (int, bool) {
			for k := range s.Levels {
				if s.Levels[k].PressurePa < 90000 {
					return k, k >= 3
				}
			}
			return 0, false
		},
		apply: func(s *sounding.Sounding, k int) *sounding.Sounding {
			c := clone(s)
			c.Levels = c.Levels[:k]
			c.DeclaredLevels = k
			return c
		},
		want: func(s *sounding.Sounding, k int) expect { return expect{-1, "sounding", CheckCoverage, Suspect} },
		removedOK: func(f Finding, damaged *sounding.Sounding) bool {
			return f.Level >= len(damaged.Levels)
		},
		check: func(t *testing.T, orig, damaged *sounding.Sounding, r Report, k int) {
			if r.Status != "insufficient:shallow" || r.Usable() {
				t.Errorf("status %q (usable %v), want insufficient:shallow, not usable", r.Status, r.Usable())
			}
		},
	},
}

// TestFaultInjection damages one real sounding at a time (sources: the
// Sterling 2016 zip member and the Wien 2015 gzip file of the archive's
// version-2 format, PROVENANCE.md) and checks that exactly the expected
// finding appears on the right level and variable, that nothing else
// changes in that sounding, and that the findings of every other sounding
// of the file are unchanged. Expected findings follow METHODS §6 (residual
// patterns after Collins 2001; gross humidity; monotonic pressure;
// coverage).
func TestFaultInjection(t *testing.T) {
	cfg := DefaultConfig()
	for _, file := range []struct {
		name string
		read func(testing.TB) []*sounding.Sounding
	}{{"Sterling 2016", sterling}, {"Wien 2015", wien}} {
		ss := file.read(t)
		base := make([]Report, len(ss))
		for i, s := range ss {
			base[i] = Check(s, cfg)
		}
		for _, ft := range faults {
			t.Run(file.name+"/"+ft.name, func(t *testing.T) {
				// Up to five clean soundings, spread over the file.
				var targets, levels []int
				for i := 0; i < len(ss) && len(targets) < 5; i += 7 {
					if base[i].Status != StatusOK || !cleanAround(base[i]) {
						continue
					}
					if kk, ok := ft.pick(ss[i], base[i]); ok {
						targets, levels = append(targets, i), append(levels, kk)
					}
				}
				if len(targets) == 0 {
					t.Fatalf("no sounding suits the fault")
				}
				for n, target := range targets {
					injectOne(t, ft, ss, base, target, levels[n], cfg)
				}
			})
		}
	}
}

// injectOne damages sounding target at level k and compares every report
// of the file with the baseline.
func injectOne(t *testing.T, ft fault, ss []*sounding.Sounding, base []Report, target, k int, cfg Config) {
	t.Helper()
	orig := ss[target]
	damaged := ft.apply(orig, k)
	want := ft.want(orig, k)
	t.Logf("target %s level %d (line %d)", orig.LaunchTime.Format("2006-01-02T15"), k, orig.Levels[k].Line)

	// The whole file again, with the damaged sounding in place.
	all := append([]*sounding.Sounding(nil), ss...)
	all[target] = damaged
	for i, s := range all {
		r := Check(s, cfg)
		added, removed := diff(base[i].Findings, r.Findings)
		if i != target {
			if len(added)+len(removed) > 0 || r.Status != base[i].Status {
				t.Errorf("untouched sounding %d changed: +%v −%v", i, added, removed)
			}
			continue
		}
		if len(added) != 1 {
			t.Fatalf("%d new findings, want exactly 1: %+v", len(added), added)
		}
		f := added[0]
		if f.Level != want.level || f.VariableName() != want.variable || f.Check != want.check || f.Severity != want.severity {
			t.Errorf("finding %d/%s/%s/%s, want %d/%s/%s/%s (%s)", f.Level, f.VariableName(), f.Check, f.Severity,
				want.level, want.variable, want.check, want.severity, f.Message)
		}
		for _, g := range removed {
			if ft.removedOK == nil || !ft.removedOK(g, damaged) {
				t.Errorf("baseline finding disappeared: %+v", g)
			}
		}
		t.Logf("finding: %s", f.Message)
		if ft.check != nil {
			ft.check(t, orig, damaged, r, k)
		}
	}
}
