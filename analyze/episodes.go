package analyze

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"
)

// Criterion is a rule a local day meets, fails or cannot be judged on
// (DayRecord), and the run rule that turns such days into episodes. Every
// condition that is set must hold (NaN thresholds and false flags are not
// set); a condition whose input is missing makes the day Unknown, never
// met or failed.
type Criterion struct {
	Name   string // snake_case, recorded in every episode row
	Source string // where the rule comes from

	// PersistentSBI: the morning SBI (at least MinMorningSBIStrengthK) is
	// still present on the afternoon/evening sounding.
	PersistentSBI          bool
	MinMorningSBIStrengthK float64 // K; used with PersistentSBI (NaN or 0: any SBI)
	DeepStable             bool    // the morning deep stable layer of Wolyn & McKee (1989)
	// MinHeatDeficitMJ: the morning and the afternoon heat deficits are
	// both at least this, MJ m⁻² (a day with one of them below it fails
	// even when the other is unknown).
	MinHeatDeficitMJ   float64
	MaxAfternoonMHM    float64 // m AGL
	MaxAfternoonWindMS float64 // m/s
	MaxVentilationM2S  float64 // m² s⁻¹
	// Condition is a user's rule (ParseRule), nil for the built-ins; it
	// must hold besides any of the conditions above.
	Condition *Condition

	// MinDays is the least number of days meeting the rule in an episode
	// (missing days inside do not count towards it). MaxGapDays is the
	// longest run of Unknown days (no sounding, or the needed one
	// missing) that stays inside an episode: such days neither end it nor
	// count as met, and are reported in Episode.DaysMissing; a longer gap
	// ends it before the gap.
	MinDays    int
	MaxGapDays int
}

// Names of the built-in criteria.
const (
	CriterionPersistentInversion = "persistent_inversion_whiteman2001"
	CriterionDeepStable          = "deep_stable_layer_wolyn_mckee1989"
	CriterionHeatDeficit         = "heat_deficit_pool"
	CriterionPollutionPotential  = "pollution_potential_holzworth1972"
)

// BuiltinCriteria returns the built-in criteria, each with a minimum
// length of 2 days and a tolerated gap of 1 missing day (proposal, no
// source: one lost sounding should not split a multi-day episode, two in
// a row leave too little known):
//
//   - persistent_inversion_whiteman2001: the morning SBI is still present
//     on the afternoon/evening sounding, on consecutive days. Persistent
//     cold-air pools are those "lasting multiple days" (Whiteman et al.
//     2001, as summarised in Lareau et al. 2013, BAMS 94, 51); the
//     same-day persistence test is this project's sounding proxy.
//   - deep_stable_layer_wolyn_mckee1989: at least 65 % of the lowest
//     1.5 km of the morning sounding has a lapse rate ≤ 2.5 K/km (Wolyn &
//     McKee 1989, Mon. Wea. Rev., abstract), on consecutive days.
//   - heat_deficit_pool: the heat deficit of both the morning and the
//     afternoon/evening sounding is at least 4.04 MJ m⁻², so the pool
//     outlasts the day's heating
//     (the Salt Lake Valley threshold quoted in METHODS §3, from memory
//     there; it belongs to a reference height near the valley's rim, so
//     set HeatDeficitConfig and this threshold together for a basin).
//   - pollution_potential_holzworth1972: afternoon mixing height ≤ 1500 m
//     and mean wind through the mixed layer ≤ 4 m/s, lasting at least 2
//     days (Holzworth 1972, EPA AP-101, as summarised in Boubel et al.,
//     Fundamentals of Air Pollution, 3rd ed., ch. 21). Holzworth also
//     required no precipitation; soundings do not observe precipitation,
//     so this criterion cannot apply that condition and counts more days
//     than his.
func BuiltinCriteria() []Criterion {
	nan := math.NaN()
	base := Criterion{MinMorningSBIStrengthK: nan, MinHeatDeficitMJ: nan, MaxAfternoonMHM: nan,
		MaxAfternoonWindMS: nan, MaxVentilationM2S: nan, MinDays: 2, MaxGapDays: 1}
	pi, dsl, hd, hp := base, base, base, base
	pi.Name, pi.Source, pi.PersistentSBI = CriterionPersistentInversion, "Whiteman et al. 2001 (persistent cold-air pools last multiple days); same-day SBI persistence", true
	dsl.Name, dsl.Source, dsl.DeepStable = CriterionDeepStable, "Wolyn & McKee 1989, Mon. Wea. Rev.", true
	hd.Name, hd.Source, hd.MinHeatDeficitMJ = CriterionHeatDeficit, "heat deficit threshold 4.04 MJ m-2 (Salt Lake Valley, from memory)", 4.04
	hp.Name, hp.Source = CriterionPollutionPotential, "Holzworth 1972, EPA AP-101 (precipitation not observed by soundings)"
	hp.MaxAfternoonMHM, hp.MaxAfternoonWindMS = 1500, 4
	return []Criterion{pi, dsl, hd, hp}
}

// Validate reports a criterion that cannot be used.
func (c Criterion) Validate() error {
	switch {
	case c.Name == "":
		return fmt.Errorf("episode criterion: empty name")
	case c.MinDays < 1:
		return fmt.Errorf("episode criterion %s: minimum length %d days, want ≥ 1", c.Name, c.MinDays)
	case c.MaxGapDays < 0:
		return fmt.Errorf("episode criterion %s: maximum gap %d days, want ≥ 0", c.Name, c.MaxGapDays)
	case !c.PersistentSBI && !c.DeepStable && math.IsNaN(c.MinHeatDeficitMJ) && math.IsNaN(c.MaxAfternoonMHM) &&
		math.IsNaN(c.MaxAfternoonWindMS) && math.IsNaN(c.MaxVentilationM2S) && c.Condition == nil:
		return fmt.Errorf("episode criterion %s: no condition set", c.Name)
	}
	return nil
}

// Evaluate judges one day.
func (c Criterion) Evaluate(d DayRecord) Tri {
	r := Yes
	cmp := func(v float64, ok func(float64) bool) Tri {
		if math.IsNaN(v) {
			return Unknown
		}
		return TriOf(ok(v))
	}
	if c.PersistentSBI {
		min := c.MinMorningSBIStrengthK
		if math.IsNaN(min) {
			min = 0
		}
		r = r.And(d.SBIPersists(min))
	}
	if c.DeepStable {
		r = r.And(d.DeepStable)
	}
	if t := c.MinHeatDeficitMJ; !math.IsNaN(t) {
		atLeast := func(v float64) bool { return v >= t }
		r = r.And(cmp(d.MorningHeatDeficitJ/1e6, atLeast)).And(cmp(d.AfternoonHeatDeficitJ/1e6, atLeast))
	}
	if t := c.MaxAfternoonMHM; !math.IsNaN(t) {
		r = r.And(cmp(d.AfternoonMHM, func(v float64) bool { return v <= t }))
	}
	if t := c.MaxAfternoonWindMS; !math.IsNaN(t) {
		r = r.And(cmp(d.AfternoonWindMS, func(v float64) bool { return v <= t }))
	}
	if t := c.MaxVentilationM2S; !math.IsNaN(t) {
		r = r.And(cmp(d.VentilationM2S, func(v float64) bool { return v <= t }))
	}
	if c.Condition != nil {
		r = r.And(c.Condition.Eval(d))
	}
	return r
}

// Definition writes the criterion in the rule syntax of ParseRule, with
// its minimum length and gap allowance: the text recorded with every
// episode (the episodes table's rule column), so stored results say what
// rule made them. A built-in's definition, parsed as a user rule under
// another name, finds the same episodes. The deep-stable-layer fraction
// (DayConfig.MinStableFraction) and the choice of morning and afternoon
// soundings are the day configuration's, not the rule's.
func (c Criterion) Definition() string {
	var parts []string
	if c.PersistentSBI {
		if m := c.MinMorningSBIStrengthK; !math.IsNaN(m) && m > 0 {
			parts = append(parts, "morning_sbi_strength_k >= "+strconv.FormatFloat(m, 'g', -1, 64))
		}
		parts = append(parts, "sbi_persists")
	}
	if c.DeepStable {
		parts = append(parts, "deep_stable_layer")
	}
	num := func(col, op string, v float64) {
		if !math.IsNaN(v) {
			parts = append(parts, col+" "+op+" "+strconv.FormatFloat(v, 'g', -1, 64))
		}
	}
	num("morning_heat_deficit_mj_m2", ">=", c.MinHeatDeficitMJ)
	num("afternoon_heat_deficit_mj_m2", ">=", c.MinHeatDeficitMJ)
	num("afternoon_mixing_height_m", "<=", c.MaxAfternoonMHM)
	num("afternoon_transport_wind_ms", "<=", c.MaxAfternoonWindMS)
	num("afternoon_ventilation_m2s", "<=", c.MaxVentilationM2S)
	if c.Condition != nil {
		s := c.Condition.String()
		if len(parts) > 0 && c.Condition.op == "or" {
			s = "(" + s + ")"
		}
		parts = append(parts, s)
	}
	return fmt.Sprintf("%s; min_days=%d; max_gap=%d", strings.Join(parts, " and "), c.MinDays, c.MaxGapDays)
}

// Episode is one run of consecutive local days meeting a criterion at
// one station.
type Episode struct {
	StationID, Criterion string
	First, Last          time.Time // local solar dates (midnight UTC) of the first and last day meeting the rule
	LengthDays           int       // calendar days from First to Last inclusive
	DaysMet              int       // days meeting the rule
	DaysMissing          int       // Unknown days inside (LengthDays − DaysMet)
	Soundings            int       // soundings of the days from First to Last
	// OpenStart (OpenEnd): the day before First (after Last) is Unknown or
	// outside the station's record, so the episode may have begun earlier
	// (ended later) than the record shows.
	OpenStart, OpenEnd bool
	// Extremes over the days meeting the rule (NaN when none is known):
	PeakHeatDeficitJ     float64 // J m⁻², largest heat deficit of any sounding of those days
	LowestAfternoonMHM   float64 // m AGL
	LowestVentilationM2S float64 // m² s⁻¹
	// Days lists every day from First to Last with its answer (Yes or
	// Unknown), for the "which days" table.
	Days []EpisodeDay

	pendingSoundings int // soundings of absorbed Unknown days not yet counted
}

// EpisodeDay is one day inside an episode.
type EpisodeDay struct {
	Date   time.Time
	Status Tri // Yes (met) or Unknown (missing)
}

// EpisodeDayStatus names an EpisodeDay's Status in the column
// episode_days.status.
type EpisodeDayStatus string

// Statuses of a day inside an episode.
const (
	DayMet     EpisodeDayStatus = "met"     // the day meets the rule
	DayMissing EpisodeDayStatus = "missing" // unknown, kept inside by the gap allowance
)

// EpisodeDayStatuses returns the statuses in the order above.
func EpisodeDayStatuses() []EpisodeDayStatus { return []EpisodeDayStatus{DayMet, DayMissing} }

// StatusName returns DayMet for a day that meets the rule, else DayMissing.
func (d EpisodeDay) StatusName() EpisodeDayStatus {
	if d.Status == Yes {
		return DayMet
	}
	return DayMissing
}

const day = 24 * time.Hour

// FindEpisodes returns the episodes of criterion c in days (any order,
// any number of stations), sorted by station and first day. The days of a
// station are taken as one calendar sequence from its first to its last
// record; a date without a record is Unknown. The result depends only on
// the set of day records, so computing it over a station's whole record
// gives the same episodes however the soundings were partitioned or
// ordered. An invalid criterion gives no episodes and its error.
func FindEpisodes(days []DayRecord, c Criterion) ([]Episode, error) {
	if err := c.Validate(); err != nil {
		return nil, err
	}
	byStationDate := func(a, b DayRecord) int {
		if c := strings.Compare(a.StationID, b.StationID); c != 0 {
			return c
		}
		return a.Date.Compare(b.Date)
	}
	sorted := days // BuildDays returns them sorted: no copy, no sort
	if !slices.IsSortedFunc(days, byStationDate) {
		sorted = slices.Clone(days)
		slices.SortStableFunc(sorted, byStationDate)
	}
	var out []Episode
	for lo := 0; lo < len(sorted); {
		hi := lo
		for hi < len(sorted) && sorted[hi].StationID == sorted[lo].StationID {
			hi++
		}
		out = append(out, stationEpisodes(sorted[lo:hi], c)...)
		lo = hi
	}
	return out, nil
}

// stationEpisodes scans one station's days (sorted by date, possibly with
// repeated dates, of which the first counts).
func stationEpisodes(days []DayRecord, c Criterion) []Episode {
	var out []Episode
	var cur *Episode
	var pending []EpisodeDay // Unknown days after the last met day of cur
	lastUnknownBefore := true
	closeRun := func(openEnd bool) {
		if cur != nil && cur.DaysMet >= c.MinDays {
			cur.OpenEnd = openEnd
			cur.LengthDays = len(cur.Days)
			cur.DaysMissing = cur.LengthDays - cur.DaysMet
			out = append(out, *cur)
		}
		cur, pending = nil, nil
	}
	i := 0
	first, last := days[0].Date, days[len(days)-1].Date
	for d := first; !d.After(last); d = d.Add(day) {
		var rec *DayRecord
		for i < len(days) && days[i].Date.Before(d) {
			i++
		}
		if i < len(days) && days[i].Date.Equal(d) {
			rec = &days[i]
		}
		st := Unknown
		if rec != nil {
			st = c.Evaluate(*rec)
		}
		switch {
		case st == Yes && cur == nil:
			cur = &Episode{StationID: rec.StationID, Criterion: c.Name, First: d, OpenStart: lastUnknownBefore,
				PeakHeatDeficitJ: math.NaN(), LowestAfternoonMHM: math.NaN(), LowestVentilationM2S: math.NaN()}
			fallthrough
		case st == Yes:
			for _, p := range pending {
				cur.Days = append(cur.Days, p)
			}
			pending = nil
			cur.Days = append(cur.Days, EpisodeDay{Date: d, Status: Yes})
			cur.Last = d
			cur.DaysMet++
			cur.add(rec)
		case st == Unknown && cur != nil:
			if len(pending) == c.MaxGapDays {
				closeRun(true)
			} else {
				pending = append(pending, EpisodeDay{Date: d, Status: Unknown})
				if rec != nil {
					cur.pendingSoundings += rec.Soundings
				}
			}
		case st == No:
			closeRun(len(pending) > 0)
		}
		lastUnknownBefore = st == Unknown
	}
	closeRun(true) // the record ends: the episode may go on
	return out
}

// add folds a met day into the episode's totals (with the soundings of
// the Unknown days just absorbed).
func (e *Episode) add(d *DayRecord) {
	e.Soundings += d.Soundings + e.pendingSoundings
	e.pendingSoundings = 0
	lowest := func(cur, v float64) float64 {
		if math.IsNaN(cur) || v < cur {
			return v
		}
		return cur
	}
	if h := d.MaxHeatDeficitJ; !math.IsNaN(h) && (math.IsNaN(e.PeakHeatDeficitJ) || h > e.PeakHeatDeficitJ) {
		e.PeakHeatDeficitJ = h
	}
	if !math.IsNaN(d.AfternoonMHM) {
		e.LowestAfternoonMHM = lowest(e.LowestAfternoonMHM, d.AfternoonMHM)
	}
	if !math.IsNaN(d.VentilationM2S) {
		e.LowestVentilationM2S = lowest(e.LowestVentilationM2S, d.VentilationM2S)
	}
}
