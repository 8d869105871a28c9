package qc

import (
	"fmt"
	"strings"

	"github.com/sondeclim/sondeclim/sounding"
)

// Flag is the quality of one value.
type Flag uint8

const (
	// Good: the value passed every check that applies to it.
	Good Flag = iota
	// Missing: the source did not report the value (nothing to check).
	Missing
	// Suspect: a check doubts the value; the analysis leaves it out
	// unless asked to use suspect values.
	Suspect
	// Bad: a check (or the archive's own quality control) rejected the
	// value; the analysis never uses it.
	Bad
	// Corrected: a check replaced the value by a better one (see the
	// finding for the new value); the analysis uses the corrected value.
	Corrected
)

var flagNames = [...]string{"good", "missing", "suspect", "bad", "corrected"}

// String returns the lower-case name used in output tables.
func (f Flag) String() string {
	if int(f) < len(flagNames) {
		return flagNames[f]
	}
	return fmt.Sprintf("flag(%d)", uint8(f))
}

// CheckName names a quality-control check, as written in the qc_check column
// of findings.
type CheckName string

// Names of the checks.
const (
	CheckStructure      CheckName = "structure"                  // header, level count, surface level, any pressure at all
	CheckUpstream       CheckName = "upstream_removed"           // the archive's own QC removed the value ("bad (upstream)")
	CheckGross          CheckName = "gross_limit"                // value outside physical limits
	CheckDewpoint       CheckName = "dewpoint_above_temperature" // Td > T + tolerance
	CheckNearSurfWind   CheckName = "near_surface_wind"          // implausibly strong wind just above the ground
	CheckPressureOrder  CheckName = "pressure_order"             // pressure not strictly decreasing
	CheckHydrostatic    CheckName = "hydrostatic"                // reported heights inconsistent with temperatures
	CheckHeightOrder    CheckName = "height_order"               // height not increasing
	CheckSpike          CheckName = "temperature_spike"          // isolated temperature spike
	CheckSuperadiabatic CheckName = "superadiabatic"             // superadiabatic layer above the surface layer
	CheckColdHumidity   CheckName = "cold_humidity"              // humidity at very cold temperatures
	CheckSurfPressure   CheckName = "surface_pressure"           // surface pressure vs station elevation
	CheckCoverage       CheckName = "coverage"                   // not enough of the lower troposphere
)

// Checks returns the names of the checks in the order above (the
// vocabulary of the qc_check column).
func Checks() []CheckName {
	return []CheckName{CheckStructure, CheckUpstream, CheckGross, CheckDewpoint, CheckNearSurfWind, CheckPressureOrder, CheckHydrostatic, CheckHeightOrder, CheckSpike, CheckSuperadiabatic, CheckColdHumidity, CheckSurfPressure, CheckCoverage}
}

// AllVars stands for "the whole level" or "the whole sounding" in a
// Finding's Var.
const AllVars = sounding.NumVars

// Finding is one result of one check.
type Finding struct {
	// Level is the index of the level in the sounding's Levels, or −1 for
	// a finding about the whole sounding.
	Level int
	// Var is the variable the finding is about, or AllVars for the whole
	// level (Level ≥ 0) or the whole sounding (Level = −1).
	Var      sounding.Var
	Check    CheckName // one of the Check… names
	Severity Flag      // Suspect, Bad or Corrected
	// Value is the value as observed, in the model's SI unit for Var
	// (Pa, gpm, K, %, K, degrees, m/s, s); NaN when there is none
	// (always for whole-level and whole-sounding findings).
	Value float64
	// NewValue is the corrected value for Severity Corrected, else NaN.
	NewValue float64
	Message  string // for people: what was wrong, with numbers
}

// VariableName returns the variable's snake_case name, "level" for a
// whole-level finding and "sounding" for a whole-sounding finding.
func (f Finding) VariableName() string {
	switch {
	case f.Var < AllVars:
		return f.Var.String()
	case f.Level >= 0:
		return "level"
	}
	return "sounding"
}

// Status is the quality-control status of a sounding (the column
// soundings.qc_status): StatusOK, StatusSuspect, or a reason after a
// colon: "insufficient:<reason>" (structurally sound but not enough of the
// lower troposphere for boundary-layer statistics) and "rejected:<reason>"
// (unusable).
type Status string

// Sounding statuses.
const (
	StatusOK      Status = "ok"      // no finding of this pipeline's checks
	StatusSuspect Status = "suspect" // usable, but some values were flagged or corrected
)

// insufficient and rejected return the status of a sounding that is not
// usable, with its reason.
func insufficient(reason string) Status { return Status("insufficient:" + reason) }
func rejected(reason string) Status     { return Status("rejected:" + reason) }

// Report is the quality-control result of one sounding.
type Report struct {
	// Status is ok, suspect, insufficient:<reason> or rejected:<reason>.
	Status Status
	// Flags holds one flag per level (same indices as the sounding's
	// Levels) and variable.
	Flags [][sounding.NumVars]Flag
	// Findings lists every finding in the order the checks ran (within a
	// check, by level).
	Findings []Finding
}

// Usable reports whether the sounding may enter statistics (status ok or
// suspect). Soundings that are not usable must still be counted as
// attempted, with Status as the reason.
func (r Report) Usable() bool { return r.Status == StatusOK || r.Status == StatusSuspect }

// Counts returns the number of findings of each severity, not counting the
// values the archive itself removed (check upstream_removed), which say
// nothing new about the sounding.
func (r Report) Counts() (bad, suspect, corrected int) {
	for _, f := range r.Findings {
		if f.Check == CheckUpstream {
			continue
		}
		switch f.Severity {
		case Bad:
			bad++
		case Suspect:
			suspect++
		case Corrected:
			corrected++
		}
	}
	return
}

// Reason returns the part of Status after the colon ("" for ok and
// suspect).
func (r Report) Reason() string {
	_, after, _ := strings.Cut(string(r.Status), ":")
	return after
}

// DisplayValue converts x, a value of variable v in the model's SI unit,
// to the display unit of the store's tables: pressure Pa → hPa,
// temperature K → °C; every other variable (gpm, %, K of dewpoint
// depression, degrees, m/s, s) is unchanged. NaN stays NaN.
func DisplayValue(v sounding.Var, x float64) float64 {
	switch v {
	case sounding.VarPressure:
		return x / 100
	case sounding.VarTemperature:
		return x - c0
	}
	return x
}
