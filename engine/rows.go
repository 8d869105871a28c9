package engine

import (
	"math"
	"slices"
	"sync"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/sounding"
)

// result is one analysed sounding: its soundings-table row and what the
// afternoon pairing needs (the profile, whose slices are the caller's; the
// rest of an Analyzer's Result is overwritten by its next sounding). Its
// other rows go to a schema.PartRows.
type result struct {
	sounding schema.SoundingRow
	status   analyze.Status
	profile  analyze.ParcelProfile
}

// appliedCopies holds the QC-applied copies (*sounding.Sounding) that
// analyzeOne analyses, one sounding's memory serving the next: the copy
// is read only by the Analyzer, whose Result holds slices of its own and
// nothing of its input.
var appliedCopies sync.Pool

// analyzeOne runs the analysis of one sounding, using only the values its
// quality control allows, with the worker's Analyzer az, and appends its
// rows to out, which it does before az analyses another sounding. res
// holds the analysis meanwhile; the caller passes the same one for every
// sounding (a Result of its own per sounding went to the heap).
func analyzeOne(s *sounding.Sounding, rep qc.Report, az *analyze.Analyzer, useSuspect bool, out *schema.PartRows, res *analyze.Result) result {
	if rep.Usable() {
		c, _ := appliedCopies.Get().(*sounding.Sounding)
		if c == nil {
			c = new(sounding.Sounding)
		}
		*res = az.Analyze(qc.ApplyInto(c, s, rep, useSuspect))
		appliedCopies.Put(c)
	} else {
		// Excluded by QC: still written, counted as attempted but not
		// valid, with the QC reason as its analysis status.
		*res = az.Analyze(nil)
		res.Status = analyze.Status("qc_" + rep.Status)
	}
	row := schema.AppendSounding(out, s, rep, res)
	return result{sounding: row, status: res.Status, profile: res.Profile}
}

// afternoonRows pairs the morning soundings of one station-year with the
// day's maximum temperature (a daily-maxima file when given, else the same
// local day's afternoon sounding) and computes the afternoon mixing height
// (Holzworth). results are the station-year's soundings, context those of
// the head of the next year (context.go), both in launch-time order;
// context soundings serve as afternoon soundings only, so the rows are
// one per morning sounding of results.
func afternoonRows(results, context []result, maxima analyze.DailyMaxima, cfg analyze.PairingConfig) []schema.AfternoonRow {
	all := results
	if len(context) > 0 {
		all = append(slices.Clip(results), context...)
	}
	days := make([]analyze.DaySounding, len(all))
	for i := range all {
		r := &all[i]
		days[i] = analyze.DaySounding{StationID: r.sounding.StationID, LaunchTime: r.sounding.LaunchTime,
			LongitudeDeg: r.sounding.LongitudeDeg, Profile: r.profile}
		if r.status != analyze.StatusOK {
			days[i].LongitudeDeg = math.NaN() // not analysable: neither morning nor afternoon
		}
	}
	var rows []schema.AfternoonRow
	for _, e := range analyze.PairAfternoon(days, maxima, cfg) {
		if e.Morning >= len(results) {
			continue // a morning of the next year: its own partition's row
		}
		rows = append(rows, schema.AfternoonRowOf(results[e.Morning].sounding, e))
	}
	return rows
}
