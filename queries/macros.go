package queries

import (
	"fmt"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
)

// macros returns the CREATE MACRO statements Open runs on every store: the
// SQL fragments that several queries share, defined once here. Their
// values come from the Go definitions they mirror.
//
//	method_rank(m)          sort key of a mixing-height method: 0 for
//	                        'consensus', then the analyze method registry's
//	                        order; unknown names after every known one
//	season_rank(s)          sort key of a season code: schema.Seasons order
//	                        (DJF first), anything else last
//	season_name(s, lat)     the season's common name (schema.SeasonName),
//	                        flipped when lat (degrees north) is below 0;
//	                        null when lat is null or NaN (no hemisphere)
//	sun_class_rank(c)       sort key of a sun class: sun.Classes order (day
//	                        first), anything else last
//
// and the tests of status columns, so no SQL file types a status value by
// hand (the values come from the Go enums; see DEVELOPERS.md):
//
//	analysed(s)             s (soundings.analysis_status) is analyze.StatusOK:
//	                        a valid sounding
//	qc_ok(s), qc_suspect(s) s (qc_status) is qc.StatusOK, qc.StatusSuspect
//	mh_ok(s), mh_surface(s), mh_undefined(s)
//	                        s (a mixing-height status column) is
//	                        analyze.MixingHeightOK, …Surface, …Undefined
//	mh_defined(s)           s is ok or surface: the status gives a height
//	mixing_height_m(s, h)   the height of a mixing-height status s and
//	                        height h (m): 0 for surface, h for ok, null
//	                        otherwise
//	day_met(s)              s (episode_days.status) is analyze.DayMet
//	severity_bad(s), severity_suspect(s), severity_corrected(s)
//	                        s (qc_findings.severity) is qc.Bad, qc.Suspect,
//	                        qc.Corrected
//	qc_routine(c)           c (qc_findings.qc_check) is one of
//	                        qc.RoutineChecks, whose findings do not count
func macros() []string {
	names := append([]string{analyze.HeightConsensus}, analyze.MethodNames()...)
	north, south := map[string]string{}, map[string]string{}
	for _, code := range schema.Seasons {
		north[code], south[code] = schema.SeasonName(code, false), schema.SeasonName(code, true)
	}
	return []string{
		"CREATE MACRO method_rank(m) AS " + rankCase("m", names, 0),
		"CREATE MACRO season_rank(s) AS " + rankCase("s", schema.Seasons, 1),
		"CREATE MACRO season_name(s, lat) AS CASE WHEN lat IS NULL OR isnan(lat) THEN NULL WHEN lat < 0 THEN " + mapCase("s", schema.Seasons, south) +
			" ELSE " + mapCase("s", schema.Seasons, north) + " END",
		"CREATE MACRO sun_class_rank(c) AS " + rankCase("c", sun.Classes, 1),
		"CREATE MACRO analysed(s) AS s = " + sqlString(string(analyze.StatusOK)),
		"CREATE MACRO qc_ok(s) AS s = " + sqlString(string(qc.StatusOK)),
		"CREATE MACRO qc_suspect(s) AS s = " + sqlString(string(qc.StatusSuspect)),
		"CREATE MACRO mh_ok(s) AS s = " + sqlString(string(analyze.MixingHeightOK)),
		"CREATE MACRO mh_surface(s) AS s = " + sqlString(string(analyze.MixingHeightSurface)),
		"CREATE MACRO mh_undefined(s) AS s = " + sqlString(string(analyze.MixingHeightUndefined)),
		"CREATE MACRO mh_defined(s) AS s IN (" + sqlString(string(analyze.MixingHeightOK)) + ", " + sqlString(string(analyze.MixingHeightSurface)) + ")",
		"CREATE MACRO mixing_height_m(s, h) AS CASE s WHEN " + sqlString(string(analyze.MixingHeightSurface)) + " THEN 0.0 WHEN " +
			sqlString(string(analyze.MixingHeightOK)) + " THEN h END",
		"CREATE MACRO day_met(s) AS s = " + sqlString(string(analyze.DayMet)),
		"CREATE MACRO severity_bad(s) AS s = " + sqlString(qc.Bad.String()),
		"CREATE MACRO severity_suspect(s) AS s = " + sqlString(qc.Suspect.String()),
		"CREATE MACRO severity_corrected(s) AS s = " + sqlString(qc.Corrected.String()),
		"CREATE MACRO qc_routine(c) AS c IN (" + sqlList(qc.RoutineChecks()) + ")",
	}
}

// rankCase is a CASE expression giving values[i] the rank first+i and any
// other value first+len(values).
func rankCase[E ~string](arg string, values []E, first int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "CASE %s", arg)
	for i, v := range values {
		fmt.Fprintf(&b, " WHEN %s THEN %d", sqlString(string(v)), first+i)
	}
	fmt.Fprintf(&b, " ELSE %d END", first+len(values))
	return b.String()
}

// mapCase is a CASE expression mapping each of keys to m[key] (NULL for
// any other value).
func mapCase(arg string, keys []string, m map[string]string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "CASE %s", arg)
	for _, k := range keys {
		fmt.Fprintf(&b, " WHEN %s THEN %s", sqlString(k), sqlString(m[k]))
	}
	b.WriteString(" END")
	return b.String()
}

// sqlList is values as a comma-separated list of SQL string literals.
func sqlList[E ~string](values []E) string {
	q := make([]string, len(values))
	for i, v := range values {
		q[i] = sqlString(string(v))
	}
	return strings.Join(q, ", ")
}

// sqlString quotes s as a SQL string literal.
func sqlString(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }
