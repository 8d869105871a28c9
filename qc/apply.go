package qc

import (
	"math"

	"github.com/sondeclim/sondeclim/sounding"
)

// Apply returns a copy of s in which every value the analysis must not use
// is NaN: bad values always, suspect values unless useSuspect is true.
// Corrected values are replaced by their correction (with status Derived).
// The copy has the same levels in the same order, so per-level results stay
// aligned with s and with r.Flags. s is not modified.
//
// Dependent values follow the value they derive from:
//
//   - a level whose pressure is not usable keeps only its height and wind
//     (its thermodynamic values cannot be placed);
//   - an unusable temperature also removes a dewpoint that was derived from
//     it (T − dewpoint depression), and a corrected temperature recomputes
//     that dewpoint;
//   - an unusable dewpoint depression removes the dewpoint;
//   - a relative humidity between 100 % and the accepted maximum is clipped
//     to 100 % (METHODS §6 "accept to 105 % and clip").
//
// Status entries are left as the source gave them (except Derived for
// corrected values); r says why a value is NaN. Apply does not look at
// r.Status: whether the sounding enters statistics at all is the caller's
// decision (see Report.Usable). A report whose Flags do not match the
// levels of s (a report of another sounding) changes nothing but the
// clipping. A nil s gives nil.
func Apply(s *sounding.Sounding, r Report, useSuspect bool) *sounding.Sounding {
	if s == nil {
		return nil
	}
	return ApplyInto(new(sounding.Sounding), s, r, useSuspect)
}

// ApplyInto is Apply writing the copy into dst, whose Levels' memory it
// reuses when large enough, and returns dst (nil for a nil s). Everything
// dst held before is overwritten; dst must not be s. A caller that
// analyses one copy at a time can so keep one copy's memory instead of
// allocating and zeroing every sounding's levels again; the copy is
// valid until dst is next used.
func ApplyInto(dst, s *sounding.Sounding, r Report, useSuspect bool) *sounding.Sounding {
	if s == nil {
		return nil
	}
	levels := dst.Levels[:0]
	*dst = *s
	dst.Levels = append(levels, s.Levels...)
	c := dst
	aligned := len(r.Flags) == len(c.Levels)
	for i := range c.Levels {
		l := &c.Levels[i]
		if aligned && unusable(&r.Flags[i]) {
			applyLevel(l, r.Flags[i], useSuspect)
		}
		if l.RelHumidityPct > 100 {
			l.RelHumidityPct = 100
		}
	}
	if aligned {
		for _, f := range r.Findings {
			if f.Severity == Corrected && f.Level >= 0 && f.Level < len(c.Levels) && f.Var == sounding.VarTemperature &&
				r.Flags[f.Level][f.Var] == Corrected {
				l := &c.Levels[f.Level]
				l.TemperatureK = f.NewValue
				l.Status[sounding.VarTemperature] = sounding.Derived
				if l.Status[sounding.VarDewpointDepression] == sounding.Reported && !math.IsNaN(l.DewpointDepressionK) {
					l.DewpointK = f.NewValue - l.DewpointDepressionK
				}
			}
		}
	}
	return c
}

// unusable reports whether any flag of fl is Suspect, Bad or Corrected:
// whether applyLevel may have anything to drop. Good (0) and Missing (1)
// have no bit above the lowest and the others have one, so one test of
// the flags or-ed together tells.
func unusable(fl *[sounding.NumVars]Flag) bool {
	var or Flag
	for _, f := range fl {
		or |= f
	}
	return or&^1 != 0
}

// applyLevel sets the values of l whose flag is Bad, or Suspect unless
// useSuspect, to NaN.
func applyLevel(l *sounding.Level, fl [sounding.NumVars]Flag, useSuspect bool) {
	drop := func(f Flag) bool { return f == Bad || (f == Suspect && !useSuspect) }
	if drop(fl[sounding.VarPressure]) {
		l.PressurePa, l.TemperatureK, l.DewpointK = nan, nan, nan
		l.DewpointDepressionK, l.RelHumidityPct = nan, nan
	}
	if drop(fl[sounding.VarHeight]) {
		l.HeightM = nan
	}
	if drop(fl[sounding.VarTemperature]) {
		l.TemperatureK = nan
		if l.Status[sounding.VarDewpointDepression] == sounding.Reported {
			l.DewpointK = nan
		}
	}
	if drop(fl[sounding.VarDewpointDepression]) {
		l.DewpointDepressionK, l.DewpointK = nan, nan
	}
	if drop(fl[sounding.VarRelHumidity]) {
		l.RelHumidityPct = nan
	}
	if drop(fl[sounding.VarWindDirection]) {
		l.WindDirectionDeg = nan
	}
	if drop(fl[sounding.VarWindSpeed]) {
		l.WindSpeedMS = nan
	}
	if drop(fl[sounding.VarElapsedTime]) {
		l.ElapsedS = nan
	}
}
