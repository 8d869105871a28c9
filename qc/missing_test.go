package qc

import (
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

// TestMissingValues: the per-level Missing flags newState sets agree with
// value, variable by variable, for every combination of NaN, ±Inf and
// finite values of the fields value reads (regression scaffolding: both
// are this package's definitions of a missing value).
func TestMissingValues(t *testing.T) {
	vals := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 250}
	for mask := range 1 << 10 {
		l := sounding.NewLevel()
		fields := []*float64{&l.PressurePa, &l.HeightM, &l.TemperatureK, &l.RelHumidityPct, &l.DewpointDepressionK,
			&l.DewpointK, &l.WindDirectionDeg, &l.WindSpeedMS, &l.ElapsedS}
		for i, f := range fields {
			*f = vals[(mask>>i+mask>>(i+1))%len(vals)]
		}
		var got [sounding.NumVars]Flag
		missingValues(&got, &l)
		for v := range sounding.NumVars {
			if want := math.IsNaN(value(&l, v)); (got[v] == Missing) != want {
				t.Fatalf("level %+v: %s missing %v, value says %v", l, v, got[v] == Missing, want)
			}
		}
	}
}
