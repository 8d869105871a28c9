package schema

import "time"

// TableQCFindings is the name of the table of QCFindingRow rows.
const TableQCFindings = "qc_findings"

// QCFindingRow is one row of the `qc_findings` table: one finding of the
// quality control of one sounding (package qc), about one value, one level
// or the whole sounding. Soundings without findings have no rows; their
// status is in the soundings table.
type QCFindingRow struct {
	StationID   string    `col:"station_id" doc:"station identifier"`
	LaunchTime  time.Time `col:"launch_time" doc:"UTC; launch time of the sounding the finding belongs to (joins soundings on station_id, launch_time)"`
	Year        int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index       int32     `col:"level_index" doc:"0-based position of the level in the source order (as in levels.level_index); -1 for a finding about the whole sounding"`
	PressureHPa float64   `col:"pressure_hpa" doc:"hPa; pressure of the level as reported, null for wind-only levels and whole-sounding findings"`
	Variable    string    `col:"variable" doc:"variable the finding is about: pressure, height, temperature, relative_humidity, dewpoint_depression, wind_direction, wind_speed, elapsed_time; level for the whole level, sounding for the whole sounding"`
	Check       string    `col:"qc_check" doc:"check that produced the finding: structure, upstream_removed, gross_limit, dewpoint_above_temperature, near_surface_wind, pressure_order, hydrostatic, height_order, temperature_spike, superadiabatic, cold_humidity, surface_pressure or coverage"`
	Severity    string    `col:"severity" doc:"suspect, bad or corrected (bad values are never used; suspect ones only on request; corrected ones are used with corrected_value)"`
	Value       float64   `col:"value" doc:"the value as observed, in the display unit of its variable: hPa, gpm, degC, %, K (dewpoint depression), degrees, m/s or s; null when none"`
	Corrected   float64   `col:"corrected_value" doc:"the corrected value in the same unit as value, for severity corrected; null otherwise"`
	Message     string    `col:"message" doc:"what was wrong, for people, with the numbers the check used"`
}
