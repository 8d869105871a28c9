package qc

import (
	"math"

	"github.com/sondeclim/sondeclim/sounding"
)

// Candidate is what ChooseDuplicate needs to know about one of two
// soundings with the same station and launch time.
type Candidate struct {
	// LowLevels is the number of levels with a usable pressure and
	// temperature (not bad) at pressures of 500 hPa and more.
	LowLevels int
	// BadFindings is the number of bad findings of this pipeline's checks
	// (Report.Counts).
	BadFindings int
	// Format is the reader's format name (sounding.Source.Format).
	Format string
	// File, Member and Line locate the sounding in the input.
	File, Member string
	Line         int
}

// CandidateOf summarises s and its report r for ChooseDuplicate.
func CandidateOf(s *sounding.Sounding, r Report) Candidate {
	c := Candidate{Format: s.Source.Format, File: s.Source.File, Member: s.Source.Member, Line: s.Source.Line}
	c.BadFindings, _, _ = r.Counts()
	for i := range s.Levels {
		l := &s.Levels[i]
		if !(l.PressurePa >= 50000) || math.IsNaN(l.TemperatureK) {
			continue
		}
		if i < len(r.Flags) && (r.Flags[i][sounding.VarPressure] == Bad || r.Flags[i][sounding.VarTemperature] == Bad) {
			continue
		}
		c.LowLevels++
	}
	return c
}

// FormatPreference ranks source formats for ChooseDuplicate, most
// preferred first: the archive's version-2 files have passed the
// archive's own quality control; high-resolution files keep every level;
// coded messages come as they were sent. Formats not listed rank last.
var FormatPreference = []string{"archive-v2", "netcdf-sonde", "wmo-temp", "tidy-csv"}

func formatRank(f string) int {
	for i, g := range FormatPreference {
		if g == f {
			return i
		}
	}
	return len(FormatPreference)
}

// ChooseDuplicate decides which of two soundings of the same station and
// launch time to keep, returning 0 for a or 1 for b and the reason, for the
// record of which was kept. The precedence is:
//
//  1. more levels with usable temperature at 500 hPa and below (the part
//     the boundary-layer analysis uses): reason "more_low_levels";
//  2. fewer bad findings: "fewer_bad_findings";
//  3. the preferred format (FormatPreference): "preferred_format";
//  4. the later source position (file, then member, then line, compared
//     as text and number), because a correction is sent after the report
//     it corrects: "later_source";
//
// and when all of these tie, a: "identical_first_kept".
func ChooseDuplicate(a, b Candidate) (keep int, reason string) {
	pick := func(bWins bool, why string) (int, string) {
		if bWins {
			return 1, why
		}
		return 0, why
	}
	switch {
	case a.LowLevels != b.LowLevels:
		return pick(b.LowLevels > a.LowLevels, "more_low_levels")
	case a.BadFindings != b.BadFindings:
		return pick(b.BadFindings < a.BadFindings, "fewer_bad_findings")
	case formatRank(a.Format) != formatRank(b.Format):
		return pick(formatRank(b.Format) < formatRank(a.Format), "preferred_format")
	case a.File != b.File:
		return pick(b.File > a.File, "later_source")
	case a.Member != b.Member:
		return pick(b.Member > a.Member, "later_source")
	case a.Line != b.Line:
		return pick(b.Line > a.Line, "later_source")
	}
	return 0, "identical_first_kept"
}
