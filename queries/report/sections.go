package report

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/queries"
)

// TrendMetrics are the quantities of the trends section, with their words.
var TrendMetrics = []struct{ Name, Words string }{
	{"mixing_height", "consensus mixing height (m)"},
	{"sbi_frequency", "surface-based inversion frequency (fraction)"},
}

// tables holds the store-wide query results of the report's sections,
// split by station.
type tables struct {
	climatology, episodes, persistence, afternoon, trends, qc map[string]*queries.Table
}

// loadTables runs each section's query once over the stations kept.
func loadTables(ctx context.Context, db *sql.DB, kept []string) (*tables, error) {
	t := &tables{}
	clim, err := queries.ClimatologyOf(ctx, db, queries.ClimatologyOptions{Stations: kept})
	if err != nil {
		return nil, err
	}
	summary, err := clim.Table("summary")
	if err != nil {
		return nil, err
	}
	names := seasonNames(summary)
	t.climatology = byStation(withSeasonLabel(summary, nil))
	if err := queries.EnsureEpisodes(ctx, db); err != nil {
		return nil, fmt.Errorf("episodes: %w", err)
	}
	ep, err := queries.EpisodeClimatology(ctx, db, queries.ClimatologyOptions{Stations: kept}, nil)
	if err != nil {
		return nil, err
	}
	t.episodes = byStation(withRuleWords(withSeasonLabel(ep, names)))
	g, err := queries.GuidanceOf(ctx, db, queries.GuidanceOptions{Stations: kept, Only: []string{"afternoon", "persistence"}})
	if err != nil {
		return nil, err
	}
	t.persistence = byStation(withSeasonLabel(g.Persistence, names))
	t.afternoon = byStation(withSeasonLabel(g.Afternoon, names))
	trends := &queries.Table{}
	for _, m := range TrendMetrics {
		tt, err := queries.Trends(ctx, db, queries.TrendOptions{Stations: kept, Metric: m.Name})
		if err != nil {
			return nil, err
		}
		trends = appendTrends(trends, tt, m.Words)
	}
	t.trends = byStation(withSeasonLabel(trends, names))
	q, err := queries.QCByCheck(ctx, db)
	if err != nil {
		return nil, err
	}
	t.qc = byStation(withQCWords(q))
	return t, nil
}

// fill sets the tables of one station's section.
func (t *tables) fill(s *Section) {
	get := func(m map[string]*queries.Table) *queries.Table {
		if x := m[s.ID]; x != nil {
			return x
		}
		return &queries.Table{}
	}
	s.Climatology = render(get(t.climatology), climatologyColumns)
	ep, none := withoutEmptyRules(get(t.episodes))
	s.Episodes, s.NoEpisodes = render(ep, episodeColumns), strings.Join(none, ", ")
	s.Persistence = render(get(t.persistence), persistenceColumns)
	s.Afternoon = render(get(t.afternoon), afternoonColumns)
	s.Trends = render(get(t.trends), trendColumns)
	s.TrendsNote = trendsNote(get(t.trends))
	s.QC = render(get(t.qc), qcColumns)
}

// withoutEmptyRules returns the episode rows of the rules that gave at
// least one episode in some season, and the names (rule_words) of the
// others, in the table's order.
func withoutEmptyRules(t *queries.Table) (*queries.Table, []string) {
	rule, n := slices.Index(t.Columns, "rule_words"), slices.Index(t.Columns, "n_episodes")
	if rule < 0 || n < 0 {
		return t, nil
	}
	total := map[string]int64{}
	var order []string
	for _, r := range t.Rows {
		name := fmt.Sprint(r[rule])
		if _, ok := total[name]; !ok {
			order = append(order, name)
		}
		c, _ := r[n].(int64)
		total[name] += c
	}
	out := &queries.Table{Columns: t.Columns}
	for _, r := range t.Rows {
		if total[fmt.Sprint(r[rule])] > 0 {
			out.Rows = append(out.Rows, r)
		}
	}
	var none []string
	for _, name := range order {
		if total[name] == 0 {
			none = append(none, name)
		}
	}
	return out, none
}

// trendsNote returns the sentence that replaces a station's trends table
// when none of its rows has a slope to judge (every season and hour has
// too few years), or "" when the table is worth showing.
func trendsNote(t *queries.Table) string {
	slope, years := slices.Index(t.Columns, "slope_per_decade"), slices.Index(t.Columns, "years")
	if slope < 0 || years < 0 {
		return ""
	}
	most := int64(0)
	for _, r := range t.Rows {
		if r[slope] != nil {
			return ""
		}
		if y, _ := r[years].(int64); y > most {
			most = y
		}
	}
	words := "years of a season and hour meet"
	if most == 1 {
		words = "year of a season and hour meets"
	}
	return fmt.Sprintf("No trend is judged: at most %d %s the coverage rule; at least %d are wanted.", most, words, queries.DefaultMinTrendYears)
}

// ruleWords describes a built-in episode rule in words, with its
// sources (titles checked; see the page's references).
func ruleWords(name string) string {
	switch name {
	case analyze.CriterionPersistentInversion:
		return "Persistent inversion: the morning surface-based inversion is still present on the same day's later sounding; " +
			"persistent cold-air pools that last several days are described by Whiteman et al. (2001)."
	case analyze.CriterionDeepStable:
		return "Deep stable layer (Wolyn and McKee 1989): on the morning sounding, at least 65 % of the lowest 1.5 km has a lapse " +
			"rate of 2.5 K/km or less."
	case analyze.CriterionHeatDeficit:
		return "Cold-air pool by heat deficit: the heat needed to mix the layer from the ground to the reference height to a uniform " +
			"potential temperature (Whiteman, Bian and Zhong 1999) is at least 4.04 MJ/m² on both soundings of the day. The " +
			"threshold is a setting; its published source (a Salt Lake Valley study) could not be confirmed for this report."
	case analyze.CriterionPollutionPotential:
		return "High pollution potential (Holzworth 1972): afternoon mixing height at most 1500 m and mean wind through the mixed " +
			"layer at most 4 m/s. Holzworth also asks for no precipitation, which soundings do not observe."
	}
	return name
}

// shortRule is the rule's name in a table cell.
func shortRule(name string) string {
	switch name {
	case analyze.CriterionPersistentInversion:
		return "persistent inversion"
	case analyze.CriterionDeepStable:
		return "deep stable layer"
	case analyze.CriterionHeatDeficit:
		return "heat-deficit pool"
	case analyze.CriterionPollutionPotential:
		return "pollution potential"
	}
	return name
}

// withRuleWords adds a column rule_words, the criterion in words.
func withRuleWords(t *queries.Table) *queries.Table {
	i := slices.Index(t.Columns, "criterion")
	out := &queries.Table{Columns: append(slices.Clone(t.Columns), "rule_words")}
	for _, r := range t.Rows {
		out.Rows = append(out.Rows, append(slices.Clone(r), shortRule(fmt.Sprint(r[i]))))
	}
	return out
}

// qcWords are the quality-control checks in words and what a finding does.
var qcWords = map[qc.CheckName][2]string{
	qc.CheckStructure:      {"structure of the report (header, level count, surface level)", "sounding not analysed"},
	qc.CheckUpstream:       {"removed by the archive's own quality control", "value missing; routine"},
	qc.CheckGross:          {"value outside physical limits", "value not used"},
	qc.CheckDewpoint:       {"dewpoint above temperature", "humidity not used"},
	qc.CheckNearSurfWind:   {"implausible wind just above the ground", "wind not used"},
	qc.CheckPressureOrder:  {"pressure not decreasing with height", "level or sounding not used"},
	qc.CheckHydrostatic:    {"heights inconsistent with temperatures", "heights recomputed or not used"},
	qc.CheckHeightOrder:    {"height not increasing", "level not used"},
	qc.CheckSpike:          {"isolated temperature spike", "value not used"},
	qc.CheckSuperadiabatic: {"superadiabatic layer above the surface layer", "values flagged suspect"},
	qc.CheckColdHumidity:   {"humidity at very cold temperatures", "humidity not used there; routine"},
	qc.CheckSurfPressure:   {"surface pressure against station elevation", "surface pressure not used"},
	qc.CheckCoverage:       {"too little of the lower troposphere", "sounding not analysed"},
}

// withQCWords adds the columns check_words and effect.
func withQCWords(t *queries.Table) *queries.Table {
	i := slices.Index(t.Columns, "qc_check")
	out := &queries.Table{Columns: append(slices.Clone(t.Columns), "check_words", "effect")}
	for _, r := range t.Rows {
		name := fmt.Sprint(r[i])
		w, ok := qcWords[qc.CheckName(name)]
		if !ok {
			w = [2]string{name, ""}
		}
		out.Rows = append(out.Rows, append(slices.Clone(r), w[0], w[1]))
	}
	return out
}

// appendTrends adds the rows of tt to acc with the columns metric_words,
// period and verdict (a plain reading of the trend and its uncertainty).
func appendTrends(acc *queries.Table, tt *queries.TrendTables, words string) *queries.Table {
	t := tt.Trends
	if acc.Columns == nil {
		acc.Columns = append(slices.Clone(t.Columns), "metric_words", "period", "verdict")
	}
	col := func(n string) int { return slices.Index(t.Columns, n) }
	iy, ifst, ilst, islope, ip, inote := col("years"), col("first_year"), col("last_year"), col("slope_per_decade"), col("mk_p"), col("note")
	for _, r := range t.Rows {
		period := "–"
		if r[ifst] != nil {
			period = fmt.Sprintf("%v–%v", r[ifst], r[ilst])
		}
		years, _ := r[iy].(int64)
		slope, hasSlope := r[islope].(float64)
		p, _ := r[ip].(float64)
		v := verdict(int(years), tt.Options.MinYears, slope, hasSlope, p)
		var notes []string
		for _, n := range strings.Split(text(r[inote]), "; ") {
			// The verdict already says when there are too few years.
			if n != "" && !strings.HasPrefix(n, "fewer than 3 years") && !strings.HasPrefix(n, "only ") {
				notes = append(notes, n)
			}
		}
		if len(notes) > 0 {
			v += " (" + strings.Join(notes, "; ") + ")"
		}
		row := append(slices.Clone(r), words, period, v)
		if int(years) < tt.Options.MinYears {
			// A slope from too few years is not shown, so that it is not
			// read as a trend.
			row[islope], row[ip] = nil, nil
		}
		acc.Rows = append(acc.Rows, row)
	}
	return acc
}

// verdict reads a trend honestly: too few years, no detectable trend, or a
// trend whose Mann–Kendall p (two-sided, years taken as independent) is
// below 0.05.
func verdict(years, minYears int, slope float64, hasSlope bool, p float64) string {
	switch {
	case !hasSlope:
		return "no trend computed: fewer than 3 years meet the coverage rule"
	case years < minYears:
		return fmt.Sprintf("too short to judge: %d years (at least %d wanted)", years, minYears)
	case math.IsNaN(p) || p >= 0.05:
		return fmt.Sprintf("no trend detectable (p = %.2f)", p)
	case slope > 0:
		return fmt.Sprintf("increasing (p = %.2f)", p)
	default:
		return fmt.Sprintf("decreasing (p = %.2f)", p)
	}
}
