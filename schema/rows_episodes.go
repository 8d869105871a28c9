package schema

import "time"

// Tables derived over each station's whole record when they are queried
// (package queries, AttachEpisodes), not stored in partitions: a run of
// days crosses the station-year partitions, so computing it from the
// stored per-sounding rows at query time keeps it independent of how the
// store was partitioned, appended to or ordered.
const (
	TableDays        = "days"         // rows of DayRow
	TableEpisodes    = "episodes"     // rows of EpisodeRow
	TableEpisodeDays = "episode_days" // rows of EpisodeDayRow
	TableRuleMonths  = "rule_months"  // rows of RuleMonthRow
)

// DayRow is one row of the `days` table: one station's local solar day
// with at least one analysable sounding, and the per-day quantities the
// episode criteria use.
type DayRow struct {
	StationID    string    `col:"station_id" doc:"station identifier"`
	LocalDate    time.Time `col:"local_date" doc:"local solar date (midnight UTC of that date), from the launch time and the station's longitude"`
	Year         int32     `col:"year" doc:"calendar year of local_date"`
	Month        int32     `col:"month" doc:"calendar month of local_date, 1-12"`
	Season       string    `col:"season" doc:"meteorological season of local_date: DJF, MAM, JJA or SON"`
	SeasonYear   int32     `col:"season_year" doc:"year the season belongs to; December is counted with the following year"`
	Soundings    int32     `col:"soundings" doc:"count; analysable soundings launched that local day"`
	HasMorning   bool      `col:"has_morning" doc:"true when a sounding was launched in the morning window (03-10 h local mean solar time)"`
	HasAfternoon bool      `col:"has_afternoon" doc:"true when a sounding was launched in the afternoon/evening window (12-20 h local mean solar time)"`

	MorningSBI       *bool   `col:"morning_sbi" doc:"surface-based inversion on the morning sounding; null without one"`
	MorningSBIK      float64 `col:"morning_sbi_strength_k" doc:"K; strength of the morning surface-based inversion"`
	AfternoonSBI     *bool   `col:"afternoon_sbi" doc:"surface-based inversion on the afternoon/evening sounding; null without one (in winter the evening launch can be after sunset)"`
	SBIPersists      *bool   `col:"sbi_persists" doc:"true when the morning surface-based inversion is still present on the afternoon/evening sounding; null when either sounding is missing"`
	MorningHDMJ      float64 `col:"morning_heat_deficit_mj_m2" doc:"MJ/m2; heat deficit of the morning sounding (see soundings.heat_deficit_reference)"`
	AfternoonHDMJ    float64 `col:"afternoon_heat_deficit_mj_m2" doc:"MJ/m2; heat deficit of the afternoon/evening sounding"`
	MaxHDMJ          float64 `col:"max_heat_deficit_mj_m2" doc:"MJ/m2; largest heat deficit of the day's soundings"`
	StableFraction   float64 `col:"stable_layer_fraction" doc:"0-1; stable fraction of the lowest 1.5 km on the morning sounding (Wolyn and McKee 1989)"`
	DeepStable       *bool   `col:"deep_stable_layer" doc:"true when stable_layer_fraction is at least 0.65 (Wolyn and McKee 1989); null when unknown"`
	AfternoonMHM     float64 `col:"afternoon_mixing_height_m" doc:"m above ground; afternoon mixing height: Holzworth (afternoon_mixing) when defined, else the afternoon sounding's own parcel mixing height"`
	AfternoonMHFrom  string  `col:"afternoon_mixing_height_source" values:"afternoon_source" doc:"{values}; empty when unknown"`
	AfternoonWindMS  float64 `col:"afternoon_transport_wind_ms" doc:"m/s; transport wind of the afternoon/evening sounding (mean wind from the ground to its mixing height)"`
	AfternoonVentM2S float64 `col:"afternoon_ventilation_m2s" doc:"m2/s; afternoon_mixing_height_m times afternoon_transport_wind_ms"`
}

// EpisodeRow is one row of the `episodes` table: one run of consecutive
// local days meeting a criterion at one station.
type EpisodeRow struct {
	StationID   string    `col:"station_id" doc:"station identifier"`
	Criterion   string    `col:"criterion" doc:"name of the rule the days meet (persistent_inversion_whiteman2001, deep_stable_layer_wolyn_mckee1989, heat_deficit_pool, pollution_potential_holzworth1972, or a user rule)"`
	Rule        string    `col:"rule" doc:"the rule's definition in the syntax of --rule (sondeclim climatology -h): its condition on the days table's columns, min_days and max_gap"`
	FirstDay    time.Time `col:"first_day" doc:"local solar date of the first day meeting the rule"`
	LastDay     time.Time `col:"last_day" doc:"local solar date of the last day meeting the rule"`
	Year        int32     `col:"year" doc:"calendar year of first_day"`
	Month       int32     `col:"month" doc:"calendar month of first_day, 1-12"`
	Season      string    `col:"season" doc:"meteorological season of first_day"`
	SeasonYear  int32     `col:"season_year" doc:"year the season of first_day belongs to; December is counted with the following year"`
	LengthDays  int32     `col:"length_days" doc:"count; calendar days from first_day to last_day inclusive"`
	DaysMet     int32     `col:"days_met" doc:"count; days meeting the rule"`
	DaysMissing int32     `col:"days_missing" doc:"count; days inside whose status is unknown (no sounding, or the needed one missing); at most the rule's gap allowance in a row"`
	Soundings   int32     `col:"soundings" doc:"count; analysable soundings of the days from first_day to last_day"`
	OpenStart   bool      `col:"open_start" doc:"true when the day before first_day is unknown or before the record: the episode may have begun earlier"`
	OpenEnd     bool      `col:"open_end" doc:"true when the day after last_day is unknown or after the record: the episode may have lasted longer"`
	PeakHDMJ    float64   `col:"peak_heat_deficit_mj_m2" doc:"MJ/m2; largest heat deficit of any sounding of the days meeting the rule"`
	LowestMHM   float64   `col:"lowest_afternoon_mixing_height_m" doc:"m above ground; lowest afternoon mixing height of those days"`
	LowestVent  float64   `col:"lowest_ventilation_m2s" doc:"m2/s; lowest afternoon ventilation index of those days"`
}

// EpisodeDayRow is one row of the `episode_days` table: one day inside an
// episode, so SQL can ask which days were in episodes.
type EpisodeDayRow struct {
	StationID string    `col:"station_id" doc:"station identifier"`
	Criterion string    `col:"criterion" doc:"rule of the episode"`
	FirstDay  time.Time `col:"first_day" doc:"first day of the episode (joins episodes on station_id, criterion, first_day)"`
	LocalDate time.Time `col:"local_date" doc:"the day (joins days on station_id, local_date)"`
	Status    string    `col:"status" values:"episode_day_status" doc:"{values}: met when the day meets the rule, missing when unknown and kept inside by the gap allowance"`
}

// RuleMonthRow is one row of the `rule_months` table: how the days of one
// station and calendar month with an analysable sounding answered one
// rule, so that "no episodes" can be told apart from "the rule could not
// be judged" (e.g. a station without a morning sounding).
type RuleMonthRow struct {
	StationID   string `col:"station_id" doc:"station identifier"`
	Criterion   string `col:"criterion" doc:"rule (as in episodes.criterion)"`
	Year        int32  `col:"year" doc:"calendar year of the days"`
	Month       int32  `col:"month" doc:"calendar month of the days, 1-12"`
	Season      string `col:"season" doc:"meteorological season of the month"`
	SeasonYear  int32  `col:"season_year" doc:"year the season belongs to; December is counted with the following year"`
	DaysMet     int32  `col:"days_met" doc:"count; days with a sounding meeting the rule (inside an episode or not)"`
	DaysFailed  int32  `col:"days_failed" doc:"count; days with a sounding failing the rule"`
	DaysUnknown int32  `col:"days_unknown" doc:"count; days with a sounding on which the rule cannot be judged (the sounding or value it needs is missing)"`
}
