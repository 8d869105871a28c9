package engine

import (
	"context"
	"math"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/schema"
)

// TestDescentStoredBesideAscent ingests a real ascent (Giles, 94461,
// 2016-02-18 23:17:44 UTC: IUSK73_AMMC_182300.bufr, PROVENANCE.md) with a
// descent of the same flight (ingest/bufr/testdata/descent-94461.bufr,
// invented values encoded by Debian's ecCodes tools; its .rules file lists
// them): both are kept, the descent in the descent tables, neither
// replacing the other.
func TestDescentStoredBesideAscent(t *testing.T) {
	ascent := filepath.Join(realdata.Dir(t, "bufr"), "IUSK73_AMMC_182300.bufr")
	descent := filepath.Join("..", "ingest", "bufr", "testdata", "descent-94461.bufr")
	inputs := []string{ascent, descent}
	sum, err := Run(context.Background(), t.TempDir(), inputs, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(sum.Skipped) != 0 || sum.DuplicatesMerged != 0 || sum.Soundings != 1 {
		t.Errorf("skipped %v, merged %d, soundings stored %d; want nothing skipped or merged, 1 ascent", sum.Skipped, sum.DuplicatesMerged, sum.Soundings)
	}
	// 126 ascent levels: the reference decoder's count less one standard
	// level below the ground (ingest/bufr TestAgainstReferenceDecoder);
	// 118 descent levels: the rules file's.
	for table, want := range map[string]int{schema.TableSoundings: 1, schema.TableLevels: 126, schema.TableDescents: 1, schema.TableDescentLevels: 118} {
		if n := sum.Rows[table]; n != want {
			t.Errorf("%s: %d rows written, want %d", table, n, want)
		}
	}

	rs, _, err := Analyse(context.Background(), inputs, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(rs.Soundings) != 1 || len(rs.Descents) != 1 || len(rs.DescentLevels) != 118 {
		t.Fatalf("rows: %d soundings, %d descents, %d descent levels", len(rs.Soundings), len(rs.Descents), len(rs.DescentLevels))
	}
	d := rs.Descents[0]
	if d.StationID != "94461" || !d.LaunchTime.Equal(rs.Soundings[0].LaunchTime) || d.LevelCount != 118 || d.SourceFormat != "bufr" {
		t.Errorf("descent row %+v", d)
	}
	// Where the descent began: the rules' latitude and longitude.
	if math.Abs(d.StartLatDeg+24.8803) > 5e-6 || math.Abs(d.StartLonDeg-129.05) > 5e-6 {
		t.Errorf("start of descent %.5f %.5f, want -24.88030 129.05000", d.StartLatDeg, d.StartLonDeg)
	}
	// The profile is consistent (U.S. Standard Atmosphere values), so
	// quality control finds nothing bad; without a surface level it is
	// suspect, as the checks say of any profile without one.
	if d.QCBad != 0 || d.QCStatus != "suspect" {
		t.Errorf("descent QC: status %s, %d bad, %d suspect", d.QCStatus, d.QCBad, d.QCSuspect)
	}
	checked := 0
	for i, l := range rs.DescentLevels {
		if int(l.Index) != i || l.StationID != "94461" || !l.LaunchTime.Equal(d.LaunchTime) {
			t.Fatalf("descent level %d: index %d, station %s, launch %v", i, l.Index, l.StationID, l.LaunchTime)
		}
		if i > 0 && !(l.PressureHPa < rs.DescentLevels[i-1].PressureHPa && l.ElapsedS < rs.DescentLevels[i-1].ElapsedS) {
			t.Errorf("descent level %d: not above and received before the one below it", i)
		}
		// Potential temperature by Poisson's equation, theta = T (1000 hPa
		// / p)^(2/7) (WMO-No. 8 Annex 4.B; kappa = Rd/cp = 2/7 for dry air).
		want := (l.TemperatureC + 273.15) * math.Pow(1000/l.PressureHPa, 2.0/7.0)
		if math.Abs(l.ThetaK-want) > 0.01 || l.PressureQC != "good" || l.TemperatureQC != "good" {
			t.Errorf("descent level %d (%.1f hPa): theta %.3f K, Poisson gives %.3f; QC p %s, T %s", i, l.PressureHPa, l.ThetaK, want, l.PressureQC, l.TemperatureQC)
		}
		if l.HumidityQC == "good" {
			checked++
			// w = 0.622 e/(p − e) with e = 6.112 exp(17.67 Td/(Td + 243.5)) hPa
			// (Bolton 1980, eq. 10); 2 % covers the choice of formula.
			e := 6.112 * math.Exp(17.67*l.DewpointC/(l.DewpointC+243.5))
			w := 1000 * 0.622 * e / (l.PressureHPa - e)
			if math.Abs(l.MixingRatioGKg-w) > 0.02*w {
				t.Errorf("descent level %d (%.1f hPa): mixing ratio %.4f g/kg, Bolton's formula gives %.4f", i, l.PressureHPa, l.MixingRatioGKg, w)
			}
		}
	}
	// From the rules file: the lowest level, 750 gpm, 926.34 hPa,
	// 283.27 K, received 8451 s after launch, 0.25° N and 0.95° E of Giles.
	lo := rs.DescentLevels[0]
	if lo.HeightM != 750 || lo.PressureHPa != 926.34 || math.Abs(lo.TemperatureC-(283.27-273.15)) > 1e-9 || lo.ElapsedS != 8451 ||
		math.Abs(lo.LatDispDeg-0.25) > 5e-6 || math.Abs(lo.LonDispDeg-0.95) > 5e-6 {
		t.Errorf("lowest descent level %+v", lo)
	}
	if checked == 0 {
		t.Errorf("no descent level with a good humidity: the mixing ratio was not checked")
	}
	t.Logf("%d descent levels: theta checked at each, mixing ratio at the %d with a good humidity", len(rs.DescentLevels), checked)
}
