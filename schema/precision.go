package schema

import "strings"

// A column's unit is the last part of its name (sbi_strength_k,
// mixing_height_p50_m); values are written for people and programs at
// the precision the measurements carry, which the unit decides. The
// tables live in the store at full precision; only text, CSV and JSON
// output is rounded.
//
// The precisions are those of the reported data: radiosonde heights are
// given to the metre and temperatures to 0.1 °C in FM 35 TEMP and in the
// archive-v2 format (its description, igra2-data-format.txt in the
// validation folder), dewpoint depressions to 0.1 K; a mixing ratio
// derived from them is good to about 0.01 g/kg; frequencies from a few
// hundred soundings mean nothing beyond 0.01.
var unitDecimals = []struct {
	suffix   string // end of the column name
	decimals int
	what     string // for the schema document
}{
	{"_k_per_km", 1, "K/km"},
	{"_m2s", 0, "m²/s"},
	{"_ktft", 0, "kt·ft"},
	{"_gkg", 2, "g/kg"},
	{"_hpa", 1, "hPa"},
	{"_pct", 0, "%"},
	{"_ms", 1, "m/s"},
	{"_km", 2, "km"},
	{"_m", 0, "m"},
	{"_k", 1, "K"},
	{"_c", 1, "°C"},
	{"_h", 2, "hours"},
	{"_s", 0, "s"},
	{"frequency", 2, "frequencies (fractions of the valid soundings)"},
	{"_frac", 2, "fractions"},
}

// OutputDecimals returns the number of decimals a value of the named
// column is written with, and false when the name carries no known unit
// (such values are written with six significant digits). Positions are
// written to 1e-4 degree (about 10 m), the per-level displacements from
// them to 1e-5 degree (the resolution of BUFR's 0 05 015 and 0 06 015),
// other angles to 0.1°.
func OutputDecimals(column string) (int, bool) {
	switch {
	case strings.HasSuffix(column, "latitude_deg") || strings.HasSuffix(column, "longitude_deg"): // also start_latitude_deg
		return 4, true
	case strings.HasSuffix(column, "_displacement_deg"):
		return 5, true
	case strings.HasSuffix(column, "_deg"):
		return 1, true
	case strings.HasPrefix(column, "p_below_"):
		return 2, true // fraction of days below a height
	case column == "slope_pct_per_decade":
		return 1, true
	case column == "mk_z":
		return 2, true // Mann-Kendall normal score
	case column == "mk_p":
		return 3, true // its two-sided p-value
	}
	for _, u := range unitDecimals {
		if strings.HasSuffix(column, u.suffix) {
			return u.decimals, true
		}
	}
	return 0, false
}

// PrecisionText describes OutputDecimals for the schema document.
func PrecisionText() string {
	var parts []string
	for _, u := range unitDecimals {
		d := "1"
		if u.decimals > 0 {
			d = "0." + strings.Repeat("0", u.decimals-1) + "1"
		}
		parts = append(parts, "`…"+u.suffix+"` ("+u.what+") to "+d)
	}
	return "Text, CSV and JSON output round each value to the precision of the data, chosen by the end of the column name: " +
		strings.Join(parts, ", ") + "; `…latitude_deg` and `…longitude_deg` to 0.0001, `…_displacement_deg` to 0.00001, other `…_deg` to 0.1, `p_below_…` to 0.01; " +
		"in the trends table `slope_pct_per_decade` to 0.1, `mk_z` to 0.01, `mk_p` to 0.001, and `median` and `slope_per_decade` " +
		"at the precision of the metric's unit (the slope with one decimal more); " +
		"other numbers to six significant digits. The Parquet files keep full precision; `sondeclim query --exact` writes numbers in full."
}
