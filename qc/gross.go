package qc

import (
	"math"

	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

const c0 = thermo.ZeroCelsiusK

// outside reports whether x is a number outside [lo, hi].
func outside(x, lo, hi float64) bool { return !math.IsNaN(x) && (x < lo || x > hi) }

// gross applies the gross limits of METHODS §6 to every value, the
// dewpoint-above-temperature test and the near-surface wind rule. Every
// failure is bad.
func (st *state) gross() {
	c := st.cfg
	levels := st.s.Levels
	// Views of length len(levels) of the working values (flag updates
	// them in place): no bounds test per value.
	pw, z, t := st.p[:len(levels)], st.z[:len(levels)], st.t[:len(levels)]
	for i := range levels {
		l := &levels[i]
		if p := pw[i]; !math.IsNaN(p) && (p <= c.MinPressurePa || p > c.MaxPressurePa) {
			st.flag(i, sounding.VarPressure, Bad, CheckGross, p, nan,
				"pressure %.1f hPa outside (%.0f, %.0f] hPa", p/100, c.MinPressurePa/100, c.MaxPressurePa/100)
		}
		if outside(z[i], c.MinHeightM, c.MaxHeightM) {
			st.flag(i, sounding.VarHeight, Bad, CheckGross, z[i], nan,
				"height %.0f gpm outside [%.0f, %.0f] gpm", z[i], c.MinHeightM, c.MaxHeightM)
		}
		if outside(t[i], c.MinTemperatureK, c.MaxTemperatureK) {
			st.flag(i, sounding.VarTemperature, Bad, CheckGross, t[i], nan,
				"temperature %.1f °C outside [%.0f, %.0f] °C", t[i]-c0, c.MinTemperatureK-c0, c.MaxTemperatureK-c0)
		}
		st.humidity(i)
		if outside(l.RelHumidityPct, 0, c.MaxRelHumidityPct) {
			st.flag(i, sounding.VarRelHumidity, Bad, CheckGross, l.RelHumidityPct, nan,
				"relative humidity %.1f %% outside [0, %.0f] %%", l.RelHumidityPct, c.MaxRelHumidityPct)
		}
		if outside(l.WindDirectionDeg, 0, 360) {
			st.flag(i, sounding.VarWindDirection, Bad, CheckGross, l.WindDirectionDeg, nan,
				"wind direction %.0f° outside [0, 360]°", l.WindDirectionDeg)
		}
		if outside(l.WindSpeedMS, 0, c.MaxWindSpeedMS) {
			st.flag(i, sounding.VarWindSpeed, Bad, CheckGross, l.WindSpeedMS, nan,
				"wind speed %.1f m/s outside [0, %.0f] m/s", l.WindSpeedMS, c.MaxWindSpeedMS)
		} else if agl := z[i] - st.elev; agl < c.NearSurfaceWindAGLM && l.WindSpeedMS > c.NearSurfaceMaxWindMS {
			st.flag(i, sounding.VarWindSpeed, Bad, CheckNearSurfWind, l.WindSpeedMS, nan,
				"wind speed %.1f m/s at %.0f m above the station exceeds %.1f m/s", l.WindSpeedMS, agl, c.NearSurfaceMaxWindMS)
		}
		if l.ElapsedS < 0 {
			st.flag(i, sounding.VarElapsedTime, Bad, CheckGross, l.ElapsedS, nan,
				"elapsed time %.0f s is negative", l.ElapsedS)
		}
	}
}

// humidity checks the dewpoint depression of level i (or, for sources that
// give the dewpoint directly, T − Td): negative beyond the tolerance means
// the dewpoint is above the temperature; above the maximum is a gross
// error. Both are bad and attached to the dewpoint depression.
func (st *state) humidity(i int) {
	c := &st.cfg // not a copy: humidity runs for every level
	dpd := st.dpd[i]
	if math.IsNaN(dpd) && !math.IsNaN(st.td[i]) {
		dpd = st.t[i] - st.td[i] // dewpoint given directly; NaN when T is
	}
	switch {
	case dpd < -c.DewpointExcessK:
		st.flag(i, sounding.VarDewpointDepression, Bad, CheckDewpoint, dpd, nan,
			"dewpoint %.1f K above the temperature (tolerance %.1f K)", -dpd, c.DewpointExcessK)
	case dpd > c.MaxDewpointDepressionK:
		st.flag(i, sounding.VarDewpointDepression, Bad, CheckGross, dpd, nan,
			"dewpoint depression %.1f K above %.0f K", dpd, c.MaxDewpointDepressionK)
	}
}
