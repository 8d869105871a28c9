package qc

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/sondeclim/sondeclim/sounding"
)

// Check runs every quality-control check on s with the thresholds of cfg
// and returns the report. It is a pure function of s and cfg: s is not
// modified and no other sounding is consulted. It never panics on input:
// NaN values, an empty sounding, one level or unsorted levels give
// findings, not failures. A nil s is rejected as empty.
//
// The checks run in this order, each seeing the values earlier ones
// flagged (bad or suspect) as missing and corrected values as corrected:
// structure; the archive's removed codes; gross limits, dewpoint above
// temperature and near-surface wind; pressure order; hydrostatic
// consistency; height order; temperature spikes; superadiabatic layers;
// cold humidity; surface pressure against elevation; coverage. A value gets
// at most one finding, from the first check that flags it.
func Check(s *sounding.Sounding, cfg Config) Report {
	sc, _ := scratches.Get().(*scratch)
	if sc == nil {
		sc = new(scratch)
	}
	rep := check(s, cfg, sc)
	scratches.Put(sc)
	return rep
}

// check is Check with the working memory sc, which it may grow and leaves
// holding nothing the report needs: the report's Flags and Findings are
// always allocated afresh, since callers keep reports.
func check(s *sounding.Sounding, cfg Config, sc *scratch) Report {
	st := newStateIn(s, cfg, sc)
	if st.structure() {
		st.upstream()
		st.gross()
		st.pressureOrder()
		st.hydrostatic()
		st.heightOrder()
		st.spikes()
		st.superadiabatic()
		st.coldHumidity()
		st.surfacePressure()
		st.coverage()
		st.mostlyBad()
	}
	st.finish()
	return st.rep
}

// scratches holds the working memory (*scratch) of finished Check calls
// for the next ones: the report keeps none of it, and allocating and
// zeroing it afresh for every sounding cost about a fifth of QC's time.
var scratches sync.Pool

// scratch is the working memory of one check call, reused from sounding
// to sounding: every slice is resliced to length 0 (or to the length it
// needs and overwritten) before use, so no value of an earlier sounding
// is read. Each slice has one user at a time; the comments name them.
type scratch struct {
	work        []float64 // the state's p, z, t, td and dpd (5 floats a level)
	tvc         []tvEntry // the state's Tv cache (tvCache)
	lnc         []lnEntry // the state's ln p ratio cache (lnCache)
	idx         []int     // the levels a check walks: pressureOrder, hydrostatic's anchors, spikes, superadiabatic, coverage; heightOrder's levels with a pressure
	idx2        []int     // heightOrder's levels without a pressure
	tails, prev []int     // longestRun
	keep        []bool    // longestRun's result
	layers      []layer   // hydrostatic
	z           []float64 // heightsAGL's result (superadiabatic)
	t, td       []float64 // signFlip's trial temperatures and dewpoints
}

// state is the working state of one Check call.
type state struct {
	s   *sounding.Sounding
	cfg Config
	rep Report
	// Working values, indexed like s.Levels: NaN where missing or already
	// flagged, the new value where corrected. p in Pa, z in gpm (reported
	// heights only), t and td in K, dpd in K.
	p, z, t, td, dpd []float64
	// tv caches each level's virtual temperature with the working values
	// it was computed from (see virtualTAt); ln the logarithms of the
	// pressure ratios of neighbouring levels (see lnRatio).
	tv      tvCache
	ln      lnCache
	elev    float64 // station elevation, gpm; NaN if unknown
	surface int     // index of the first surface level, −1 if none
	sc      *scratch
}

// newState returns the state of a check of s with fresh working memory.
func newState(s *sounding.Sounding, cfg Config) *state { return newStateIn(s, cfg, new(scratch)) }

// newStateIn returns the state of a check of s working in sc.
func newStateIn(s *sounding.Sounding, cfg Config, sc *scratch) *state {
	st := &state{s: s, cfg: cfg, elev: math.NaN(), surface: -1, sc: sc}
	if s == nil {
		return st
	}
	levels := s.Levels
	n := len(levels)
	st.rep.Flags = make([][sounding.NumVars]Flag, n)
	sc.work = slices.Grow(sc.work[:0], 5*n)[:5*n]
	buf := sc.work
	st.p, st.z, st.t, st.td, st.dpd = buf[:n], buf[n:2*n], buf[2*n:3*n], buf[3*n:4*n], buf[4*n:5*n]
	sc.tvc = slices.Grow(sc.tvc[:0], n)[:n]
	sc.lnc = slices.Grow(sc.lnc[:0], n)[:n]
	st.tv, st.ln = sc.tvc, sc.lnc
	// Local slices of length n, indexed by the levels' range: no bounds
	// test per value.
	p, z, t, td, dpd := st.p[:n], st.z[:n], st.t[:n], st.td[:n], st.dpd[:n]
	tvc, lnc, flags := st.tv[:n], st.ln[:n], st.rep.Flags[:n]
	surface := -1
	for i := range levels {
		l := &levels[i]
		p[i] = finite(l.PressurePa)
		tvc[i].p = nan // nothing cached
		lnc[i].pa = nan
		z[i] = math.NaN()
		if l.Status[sounding.VarHeight] == sounding.Reported {
			z[i] = finite(l.HeightM)
		}
		t[i] = finite(l.TemperatureK)
		td[i] = finite(l.DewpointK)
		dpd[i] = finite(l.DewpointDepressionK)
		missingValues(&flags[i], l)
		if l.Kind == sounding.KindSurface && surface < 0 {
			surface = i
		}
	}
	st.surface = surface
	st.elev = finite(s.ElevationM)
	if math.IsNaN(st.elev) && st.surface >= 0 {
		st.elev = st.z[st.surface]
	}
	return st
}

// missingValues sets the flag of each variable of l whose value (as value
// gives it) is NaN to Missing, variable by variable without value's switch
// (newState does this for every variable of every level).
func missingValues(fl *[sounding.NumVars]Flag, l *sounding.Level) {
	set := func(v sounding.Var, x float64) {
		if math.IsNaN(x) {
			fl[v] = Missing
		}
	}
	set(sounding.VarPressure, l.PressurePa)
	set(sounding.VarHeight, l.HeightM)
	set(sounding.VarTemperature, l.TemperatureK)
	set(sounding.VarRelHumidity, l.RelHumidityPct)
	dpd := l.DewpointDepressionK
	if math.IsNaN(dpd) && !math.IsNaN(l.DewpointK) && !math.IsNaN(l.TemperatureK) {
		dpd = l.TemperatureK - l.DewpointK // dewpoint given directly
	}
	set(sounding.VarDewpointDepression, dpd)
	set(sounding.VarWindDirection, l.WindDirectionDeg)
	set(sounding.VarWindSpeed, l.WindSpeedMS)
	set(sounding.VarElapsedTime, l.ElapsedS)
}

// finite returns x, or NaN when x is ±Inf.
func finite(x float64) float64 {
	if math.IsInf(x, 0) {
		return math.NaN()
	}
	return x
}

// value returns the level's value of variable v in SI units.
func value(l *sounding.Level, v sounding.Var) float64 {
	switch v {
	case sounding.VarPressure:
		return l.PressurePa
	case sounding.VarHeight:
		return l.HeightM
	case sounding.VarTemperature:
		return l.TemperatureK
	case sounding.VarRelHumidity:
		return l.RelHumidityPct
	case sounding.VarDewpointDepression:
		return dewpointDepression(l)
	case sounding.VarWindDirection:
		return l.WindDirectionDeg
	case sounding.VarWindSpeed:
		return l.WindSpeedMS
	case sounding.VarElapsedTime:
		return l.ElapsedS
	}
	return math.NaN()
}

// dewpointDepression returns value(l, VarDewpointDepression): the
// level's dewpoint depression in K, or T − Td for sources that give the
// dewpoint directly.
func dewpointDepression(l *sounding.Level) float64 {
	if math.IsNaN(l.DewpointDepressionK) && !math.IsNaN(l.DewpointK) && !math.IsNaN(l.TemperatureK) {
		return l.TemperatureK - l.DewpointK // dewpoint given directly
	}
	return l.DewpointDepressionK
}

// flag records a finding on (level, v) unless that value already has one,
// sets its flag and updates the working values: a bad or suspect value
// becomes missing for the later checks, a corrected one takes newValue.
// A bad pressure removes the whole level. It reports whether the finding
// was recorded.
func (st *state) flag(level int, v sounding.Var, sev Flag, check CheckName, val, newValue float64, format string, a ...any) bool {
	f := Finding{Level: level, Var: v, Check: check, Severity: sev, Value: val, NewValue: newValue,
		Message: fmt.Sprintf(format, a...)}
	if level < 0 || v >= AllVars {
		st.rep.Findings = append(st.rep.Findings, f)
		return true
	}
	if cur := st.rep.Flags[level][v]; cur != Good && !(cur == Missing && check == CheckUpstream) {
		return false
	}
	if sev != Corrected {
		f.NewValue = math.NaN()
	}
	st.rep.Findings = append(st.rep.Findings, f)
	st.rep.Flags[level][v] = sev
	switch v {
	case sounding.VarPressure:
		if sev != Corrected {
			st.p[level], st.z[level], st.t[level], st.td[level], st.dpd[level] = nan, nan, nan, nan, nan
		}
	case sounding.VarHeight:
		st.z[level] = pick(sev, newValue)
	case sounding.VarTemperature:
		st.t[level] = pick(sev, newValue)
		if sev == Corrected && !math.IsNaN(st.dpd[level]) {
			st.td[level] = newValue - st.dpd[level]
		} else if sev != Corrected && st.s.Levels[level].Status[sounding.VarDewpointDepression] == sounding.Reported {
			st.td[level] = nan // derived from the bad temperature
		}
	case sounding.VarDewpointDepression:
		st.dpd[level], st.td[level] = nan, nan
	}
	return true
}

var nan = math.NaN()

func pick(sev Flag, newValue float64) float64 {
	if sev == Corrected {
		return newValue
	}
	return nan
}

// sev returns Bad when bad is true, else Suspect.
func sev(bad bool) Flag {
	if bad {
		return Bad
	}
	return Suspect
}

// RoutineChecks returns the checks whose findings say nothing new about
// the sounding: values the archive itself removed, and humidity at very
// cold temperatures, which nearly every sounding has. They are listed but
// do not change the status (the SQL summaries leave them out too, through
// the qc_routine macro of package queries).
func RoutineChecks() []CheckName { return slices.Clone(routineChecks[:]) }

var routineChecks = [...]CheckName{CheckUpstream, CheckColdHumidity}

// routine reports whether check is one of RoutineChecks.
func routine(check CheckName) bool { return slices.Contains(routineChecks[:], check) }

// finish sets the status when no check set one: suspect when any finding
// other than a routine one exists, else ok.
func (st *state) finish() {
	if st.rep.Status != "" {
		return
	}
	st.rep.Status = StatusOK
	for _, f := range st.rep.Findings {
		if !routine(f.Check) {
			st.rep.Status = StatusSuspect
			return
		}
	}
}

// reject sets a rejected status with a sounding-wide structure finding.
func (st *state) reject(reason, format string, a ...any) {
	st.flag(-1, AllVars, Bad, CheckStructure, nan, nan, format, a...)
	st.rep.Status = rejected(reason)
}

// structure checks the sounding as a whole and reports whether the other
// checks can run.
func (st *state) structure() bool {
	s := st.s
	switch {
	case s == nil || len(s.Levels) == 0:
		st.reject("empty", "sounding has no levels")
		return false
	case s.DeclaredLevels >= 0 && s.DeclaredLevels != len(s.Levels):
		st.reject("level_count", "header declares %d levels, %d present", s.DeclaredLevels, len(s.Levels))
		return false
	case st.cfg.RequireSurface && st.surface < 0:
		st.reject("no_surface", "no surface level")
		return false
	case st.surface < 0:
		st.flag(-1, AllVars, Suspect, CheckStructure, nan, nan, "no surface level; the lowest level stands in for it")
	}
	for _, p := range st.p {
		if !math.IsNaN(p) {
			return true
		}
	}
	st.reject("no_pressure", "no level has a pressure")
	return false
}

// upstream flags the values the source's own quality control removed as
// bad ("bad (upstream)", METHODS §6).
func (st *state) upstream() {
	for i := range st.s.Levels {
		if !anyRemoved(&st.s.Levels[i].Status) {
			continue // the common case: one word test instead of eight
		}
		for v := range sounding.NumVars {
			if st.s.Levels[i].Status[v] == sounding.RemovedUpstream {
				st.flag(i, v, Bad, CheckUpstream, nan, nan, "%s removed by the source's own quality control", v)
			}
		}
	}
}

// The eight statuses of a level fit one 64-bit word (anyRemoved).
var _ [8 - sounding.NumVars]struct{}
var _ [sounding.NumVars - 8]struct{}

// anyRemoved reports whether any of a level's statuses is RemovedUpstream.
// It reads the eight one-byte statuses as one little-endian word, XORs
// each byte with RemovedUpstream and tests for a zero byte with the
// borrow trick (w − 0x01…01) &^ w & 0x80…80, which is non-zero exactly
// when some byte of w is zero.
func anyRemoved(st *[sounding.NumVars]sounding.Status) bool {
	w := uint64(st[0]) | uint64(st[1])<<8 | uint64(st[2])<<16 | uint64(st[3])<<24 |
		uint64(st[4])<<32 | uint64(st[5])<<40 | uint64(st[6])<<48 | uint64(st[7])<<56
	const ones, highs = 0x0101010101010101, 0x8080808080808080
	w ^= ones * uint64(sounding.RemovedUpstream)
	return (w-ones)&^w&highs != 0
}
