package netcdf

import (
	"math"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// ncdumpValues runs Unidata's ncdump (Debian package netcdf-bin) on file
// and returns the values of variable v, printed with 9 significant digits
// (enough to give back every float32 exactly); NaN for a fill value ("_")
// or −9999, the files' missing value.
func ncdumpValues(t *testing.T, exe, file, v string) []float64 {
	t.Helper()
	out, err := exec.Command(exe, "-p", "9,17", "-v", v, file).Output()
	if err != nil {
		t.Fatalf("ncdump %s: %v", file, err)
	}
	_, data, ok := strings.Cut(string(out), "\ndata:\n")
	if !ok {
		t.Fatalf("ncdump %s: no data section", file)
	}
	_, body, ok := strings.Cut(data, " "+v+" = ")
	if !ok {
		t.Fatalf("ncdump %s: no values of %s", file, v)
	}
	body, _, _ = strings.Cut(body, ";")
	var vals []float64
	for _, f := range strings.Split(body, ",") {
		f = strings.TrimSpace(f)
		if f == "_" {
			vals = append(vals, math.NaN())
			continue
		}
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			t.Fatalf("ncdump %s: %s value %q: %v", file, v, f, err)
		}
		if x == -9999 {
			x = math.NaN()
		}
		vals = append(vals, x)
	}
	return vals
}

// TestDisplacementsAgainstNcdump checks every record's latitude and
// longitude displacement of three flights against the positions that
// Unidata's ncdump (the netCDF library's own dump tool, not this
// project's decoder) prints for the same files: lat[i] − lat[0] and
// lon[i] − lon[0], the first record having a valid position in each.
func TestDisplacementsAgainstNcdump(t *testing.T) {
	dir := sharedDir(t)
	exe, err := exec.LookPath("ncdump")
	if err != nil {
		t.Skip("ncdump absent: Debian's netcdf-bin is not installed; .ci/run installs it")
	}
	for _, name := range []string{"sgpsondewnpnC1.b1.20190101.053200.cdf", "bnfsondewnpnM1.b1.20250619.053000.cdf",
		"twpsondewnpnC3.b1.20060119.050300.custom.cdf"} {
		path := filepath.Join(dir, name)
		s, _ := readFile(t, path)
		lat, lon := ncdumpValues(t, exe, path, "lat"), ncdumpValues(t, exe, path, "lon")
		if len(lat) != len(s.Levels) || len(lon) != len(s.Levels) {
			t.Fatalf("%s: %d levels, ncdump prints %d latitudes and %d longitudes", name, len(s.Levels), len(lat), len(lon))
		}
		if math.IsNaN(lat[0]) || math.IsNaN(lon[0]) {
			t.Fatalf("%s: the first record has no position; the expected values below assume it has", name)
		}
		bad, moved := 0, 0.0
		for i, l := range s.Levels {
			// Displacements over a flight are well under 180°, so the
			// plain difference is the displacement.
			wla, wlo := lat[i]-lat[0], lon[i]-lon[0]
			if math.IsNaN(wla) || math.IsNaN(wlo) {
				wla, wlo = math.NaN(), math.NaN()
			}
			for _, c := range [][2]float64{{l.LatDisplacementDeg, wla}, {l.LonDisplacementDeg, wlo}} {
				// 9 printed digits of a value near 100° are good to 1e-6°.
				if math.IsNaN(c[0]) != math.IsNaN(c[1]) || math.Abs(c[0]-c[1]) > 2e-6 {
					if bad++; bad <= 5 {
						t.Errorf("%s record %d: displacement %.7f, ncdump gives %.7f", name, i+1, c[0], c[1])
					}
				}
			}
			if !math.IsNaN(wla) {
				moved = max(moved, math.Hypot(wla, wlo))
			}
		}
		// A balloon drifts tens of kilometres: the comparison saw real
		// displacements, not zeros on both sides.
		if moved < 0.05 {
			t.Errorf("%s: largest displacement %.4f°, expected a drift of at least 0.05°", name, moved)
		}
		t.Logf("%s: %d records' displacements compared with ncdump, %d differ; largest drift %.3f°", name, len(s.Levels), bad, moved)
	}
}
