package netcdf

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

func readFile(t testing.TB, name string) (*sounding.Sounding, []*Finding) {
	t.Helper()
	raw, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	s, fs, err := Read(bytes.NewReader(raw), int64(len(raw)), name, DefaultMapping())
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return s, fs
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// TestAllValidationFiles reads the 26 flights of ../shared/validation/
// netcdf and checks the facts listed in its PROVENANCE.md: three Darwin
// flights have tdry = −9999 after the first record, three end early at
// 672, 549 and 424 hPa, and every flight is read.
func TestAllValidationFiles(t *testing.T) {
	dir := sharedDir(t)
	names, err := filepath.Glob(filepath.Join(dir, "*.cdf"))
	if err != nil {
		t.Fatal(err)
	}
	if len(names) != 26 {
		t.Fatalf("found %d files, want 26 (PROVENANCE.md)", len(names))
	}
	noT := map[string]bool{}
	early := map[string]float64{}
	for _, n := range names {
		s, fs := readFile(t, n)
		if len(s.Levels) < 500 || s.Levels[0].Kind != sounding.KindSurface || s.Source.Format != Format {
			t.Errorf("%s: %d levels, first kind %v", n, len(s.Levels), s.Levels[0].Kind)
		}
		for _, f := range fs {
			base := filepath.Base(n)
			switch {
			case errors.Is(f, ErrNoTemperature):
				noT[base] = true
			case errors.Is(f, ErrEndsEarly):
				early[base] = f.TopPressurePa / 100
			}
			if !strings.Contains(f.Error(), base) {
				t.Errorf("finding %q does not name the file", f.Error())
			}
		}
	}
	// Source: PROVENANCE.md (counts); file names identified by reading
	// the files with an independent struct-based decoder.
	wantNoT := []string{
		"twpsondewnpnC3.b1.20060119.050300.custom.cdf",
		"twpsondewnpnC3.b1.20060119.163300.custom.cdf",
		"twpsondewnpnC3.b1.20060120.170800.custom.cdf",
	}
	wantEarly := map[string]float64{
		"twpsondewnpnC3.b1.20060123.171600.custom.cdf": 672,
		"twpsondewnpnC3.b1.20060123.231500.custom.cdf": 549,
		"twpsondewnpnC3.b1.20060124.171700.custom.cdf": 424,
	}
	if len(noT) != 3 {
		t.Errorf("flights without temperature: %v, want 3", noT)
	}
	for _, n := range wantNoT {
		if !noT[n] {
			t.Errorf("%s not reported as lacking temperature", n)
		}
	}
	if len(early) != 3 {
		t.Errorf("early-ending flights: %v, want 3", early)
	}
	for n, p := range wantEarly {
		if got, ok := early[n]; !ok || !near(got, p, 1) {
			t.Errorf("%s: top %.1f hPa (reported %v), want %.0f ± 1", n, got, ok, p)
		}
	}
}

// TestLamontAndBankhead checks record counts and tops against
// PROVENANCE.md, and individual values against the bytes of the files.
// Values were read with an independent Python struct decoder written for
// this check and spot-checked with xxd: e.g. sgp pres of record 1000 is at
// offset 10324 + 1000·108 = 118324, bytes 43e2 50a4 = 452.63 (float32);
// base_time at offset 10300 is 0x5c2aad80 = 1546300800
// (2019-01-01T00:00:00Z) and time_offset[0] = 19920 s, so the launch is at
// 05:32:00 UTC as the file name and PROVENANCE.md say.
func TestLamontAndBankhead(t *testing.T) {
	dir := sharedDir(t)
	type lv struct {
		i                              int
		elapsed, pHPa, tC, tdC, rh, ws float64
		dir, altM                      float64
	}
	cases := []struct {
		file     string
		id, name string
		launch   time.Time
		nominal  time.Time
		n        int
		topHPa   float64
		lat, lon float64
		levels   []lv
	}{
		{"sgpsondewnpnC1.b1.20190101.053200.cdf", "sgpC1", "Lamont, Oklahoma",
			time.Date(2019, 1, 1, 5, 32, 0, 0, time.UTC), time.Date(2019, 1, 1, 6, 0, 0, 0, time.UTC),
			4176, 25.8, 36.61, -97.49,
			[]lv{
				{0, 0, 986.99, -3.30, -7.27, 74.0, 10.3, 337, 314.8},
				{1000, 1000, 452.63, -22.95, -40.14, 19.39, 39.4, 238, 6345.0},
				{4175, 4175, 25.83, -64.15, -93.15, 1.13, 9.7, 296, 24569.5},
			}},
		{"bnfsondewnpnM1.b1.20250619.053000.cdf", "bnfM1", "",
			time.Date(2025, 6, 19, 5, 30, 0, 0, time.UTC), time.Date(2025, 6, 19, 6, 0, 0, 0, time.UTC),
			4998, 15.4, 34.35, -87.34,
			[]lv{
				{0, 0, 983.30, 20.70, 20.37, 98.0, 2.2, 174, 306.1},
				{1000, 1000, 477.76, -10.05, -17.62, 53.95, 15.9, 267, 6249.4},
				{4997, 4997, 15.40, -47.94, -84.08, 0.75, 13.4, 80, 28464.7},
			}},
	}
	for _, c := range cases {
		s, fs := readFile(t, filepath.Join(dir, c.file))
		if s.StationID != c.id || s.StationName != c.name {
			t.Errorf("%s: station %q %q, want %q %q", c.file, s.StationID, s.StationName, c.id, c.name)
		}
		if !s.LaunchTime.Equal(c.launch) || !s.NominalTime.Equal(c.nominal) || !s.NominalHourInferred || !s.LaunchTimeReported {
			t.Errorf("%s: launch %v nominal %v", c.file, s.LaunchTime, s.NominalTime)
		}
		if len(s.Levels) != c.n || !near(s.Levels[c.n-1].PressurePa/100, c.topHPa, 0.05) {
			t.Errorf("%s: %d levels to %.2f hPa, want %d to %.1f", c.file, len(s.Levels), s.Levels[len(s.Levels)-1].PressurePa/100, c.n, c.topHPa)
		}
		if len(fs) != 0 {
			t.Errorf("%s: unexpected findings %v", c.file, fs)
		}
		if !near(s.LatitudeDeg, c.lat, 1e-4) || !near(s.LongitudeDeg, c.lon, 1e-4) {
			t.Errorf("%s: position %.4f %.4f", c.file, s.LatitudeDeg, s.LongitudeDeg)
		}
		// ElevationM is the geopotential height of the first altitude
		// (USSA76 form, METHODS §1.6).
		if want := GeopotentialHeight(c.levels[0].altM); !near(s.ElevationM, want, 0.01) {
			t.Errorf("%s: elevation %.3f, want %.3f", c.file, s.ElevationM, want)
		}
		for _, w := range c.levels {
			l := s.Levels[w.i]
			// Compared in the file's units; the float32 values were printed
			// to 2 decimals, so ±0.006 covers rounding.
			got := []float64{l.ElapsedS, l.PressurePa / 100, l.TemperatureK - 273.15, l.DewpointK - 273.15, l.RelHumidityPct, l.WindSpeedMS, l.WindDirectionDeg, l.HeightM, l.DewpointDepressionK}
			want := []float64{w.elapsed, w.pHPa, w.tC, w.tdC, w.rh, w.ws, w.dir, GeopotentialHeight(w.altM), w.tC - w.tdC}
			for k := range got {
				if !near(got[k], want[k], 0.006) {
					t.Errorf("%s level %d field %d = %.4f, want %.4f", c.file, w.i, k, got[k], want[k])
				}
			}
			if l.Status[sounding.VarDewpointDepression] != sounding.Derived || l.Status[sounding.VarTemperature] != sounding.Reported {
				t.Errorf("%s level %d: status %v", c.file, w.i, l.Status)
			}
		}
	}
}

// TestDarwinMissingTemperature checks a flight whose tdry is −9999 after
// the first record (values from the independent decoder): it is emitted
// with its winds, temperature NaN/Missing from record 2 on.
func TestDarwinMissingTemperature(t *testing.T) {
	name := filepath.Join(sharedDir(t), "twpsondewnpnC3.b1.20060119.050300.custom.cdf")
	s, fs := readFile(t, name)
	if s.StationID != "twpC3" || s.StationName != "Darwin, Australia" || len(s.Levels) != 1885 {
		t.Errorf("station %q %q, %d levels", s.StationID, s.StationName, len(s.Levels))
	}
	if len(fs) != 1 || !errors.Is(fs[0], ErrNoTemperature) || !near(fs[0].TopPressurePa, 6850, 0.5) {
		t.Errorf("findings %v", fs)
	}
	// Launch at base_time 1137646980 = 2006-01-19T05:03:00Z, nominal 05 UTC.
	if !s.LaunchTime.Equal(time.Date(2006, 1, 19, 5, 3, 0, 0, time.UTC)) || s.NominalHour() != 5 {
		t.Errorf("launch %v nominal %v", s.LaunchTime, s.NominalTime)
	}
	l0, l1 := s.Levels[0], s.Levels[1000]
	if !near(l0.TemperatureK, 30.1+273.15, 1e-4) || !near(l0.HeightM, GeopotentialHeight(30), 1e-9) {
		t.Errorf("first level T %.3f H %.3f", l0.TemperatureK, l0.HeightM)
	}
	if !math.IsNaN(l1.TemperatureK) || l1.Status[sounding.VarTemperature] != sounding.Missing ||
		!math.IsNaN(l1.DewpointDepressionK) || !near(l1.WindSpeedMS, 13.5, 1e-6) || l1.WindDirectionDeg != 95 ||
		!near(l1.PressurePa, 28600, 1e-3) || l1.ElapsedS != 2000 {
		t.Errorf("level 1000 = %+v", l1)
	}
}

// TestGeopotentialHeight checks H = r0 z/(r0 + z) against the USSA76
// table of METHODS §1.7: 1000 m → 999.84 gpm, 5000 m → 4996.07 gpm,
// 10000 m → 9984.29 gpm.
func TestGeopotentialHeight(t *testing.T) {
	for _, c := range []struct{ z, h float64 }{{0, 0}, {1000, 999.84}, {5000, 4996.07}, {10000, 9984.29}} {
		if got := GeopotentialHeight(c.z); !near(got, c.h, 0.005) {
			t.Errorf("H(%g) = %.3f, want %.2f", c.z, got, c.h)
		}
	}
	if !math.IsNaN(GeopotentialHeight(math.NaN())) {
		t.Error("H(NaN) is not NaN")
	}
}

func TestSiteFacility(t *testing.T) {
	for _, c := range []struct{ in, site, fac string }{
		{"twpsondewnpnC3", "twp", "C3"},
		{"sgpsondewnpnC1", "sgp", "C1"},
		{"bnfsondewnpnM1", "bnf", "M1"},
		{"xyzsondeS12", "xyz", "S12"},
		{"sonde", "", ""},
		{"TWPsondeC3", "", ""},
		{"twpsonde", "", ""},
		{"twpsonde12", "", ""},
	} {
		s, f := siteFacility(c.in)
		if s != c.site || f != c.fac {
			t.Errorf("siteFacility(%q) = %q %q, want %q %q", c.in, s, f, c.site, c.fac)
		}
	}
}

// tinySonde is invented scaffolding in the default layout, without
// site/facility attributes, with a _FillValue on rh and dewpoint in K.
func tinySonde() *tFile {
	f := func(name string, data []float64, attrs ...tAttr) tVar {
		return tVar{name: name, dims: []int{0}, typ: Float, data: data, attrs: attrs}
	}
	units := func(u string) tAttr { return tAttr{name: "units", typ: Char, text: u} }
	return &tFile{version: 2, numrecs: 3, dims: []tDim{{"time", 0}},
		vars: []tVar{
			{name: "base_time", typ: Int, data: []float64{1750291200}}, // 2025-06-19T00:00:00Z
			{name: "time_offset", dims: []int{0}, typ: Double, data: []float64{1800, 1801, 1803}},
			f("pres", []float64{1000, 990, 980}, units("hPa")),
			f("tdry", []float64{20, -9999, 19}),
			f("dp", []float64{288.15, 287.15, 286.15}, units("K")),
			f("rh", []float64{80, -1, 70}, tAttr{name: "_FillValue", typ: Float, vals: []float64{-1}}),
			f("alt", []float64{-9999, 100, 200}),
		}}
}

func TestReadTiny(t *testing.T) {
	raw := tinySonde().bytes()
	s, fs, err := Read(bytes.NewReader(raw), int64(len(raw)), "/data/abcsondeX7.b1.cdf", DefaultMapping())
	if err != nil {
		t.Fatal(err)
	}
	if s.StationID != "abcX7" || !s.LaunchTime.Equal(time.Date(2025, 6, 19, 0, 30, 0, 0, time.UTC)) ||
		!s.NominalTime.Equal(time.Date(2025, 6, 19, 1, 0, 0, 0, time.UTC)) {
		t.Errorf("id %q launch %v nominal %v", s.StationID, s.LaunchTime, s.NominalTime)
	}
	if len(fs) != 1 || !errors.Is(fs[0], ErrEndsEarly) {
		t.Errorf("findings %v", fs)
	}
	l := s.Levels
	if l[2].ElapsedS != 3 || !near(l[0].DewpointK, 288.15, 1e-4) || !math.IsNaN(l[1].RelHumidityPct) || l[1].Status[sounding.VarRelHumidity] != sounding.Missing {
		t.Errorf("levels %+v", l)
	}
	if !math.IsNaN(l[0].HeightM) || s.ElevationM != l[1].HeightM || !math.IsNaN(l[0].WindSpeedMS) {
		t.Errorf("elevation %v, heights %v %v", s.ElevationM, l[0].HeightM, l[1].HeightM)
	}
	if !near(l[2].DewpointDepressionK, 19+273.15-286.15, 1e-4) {
		t.Errorf("DPD %v", l[2].DewpointDepressionK)
	}
}

func TestReadErrors(t *testing.T) {
	noPres := tinySonde()
	noPres.vars[2].name = "pressure"
	badUnits := tinySonde()
	badUnits.vars[3].attrs = []tAttr{{name: "units", typ: Char, text: "degF"}}
	for _, c := range []struct {
		name string
		raw  []byte
		want error
	}{
		{"not netCDF", []byte("station_id,launch_time_utc\n"), ErrNotClassic},
		{"no pres", noPres.bytes(), ingest.ErrBadHeader},
		{"bad units", badUnits.bytes(), ingest.ErrBadHeader},
	} {
		_, _, err := Read(bytes.NewReader(c.raw), int64(len(c.raw)), "x.cdf", DefaultMapping())
		var pe *ingest.ParseError
		if !errors.Is(err, c.want) || !errors.As(err, &pe) || pe.File != "x.cdf" {
			t.Errorf("%s: err = %v", c.name, err)
		}
	}
}

// ExampleRead reads one flight from the validation data.
func ExampleRead() {
	// A three-record flight (invented, built in memory; the real files of
	// ../shared/validation/netcdf are read the same way).
	raw := tinySonde().bytes()
	s, findings, err := Read(bytes.NewReader(raw), int64(len(raw)), "abcsondeX7.b1.cdf", DefaultMapping())
	if err != nil {
		fmt.Println(err)
		return
	}
	top := s.Levels[len(s.Levels)-1]
	fmt.Printf("%s %s: %d levels, top %.1f hPa, %d finding(s)\n",
		s.StationID, s.LaunchTime.Format(time.RFC3339), len(s.Levels), top.PressurePa/100, len(findings))
	// Output: abcX7 2025-06-19T00:30:00Z: 3 levels, top 980.0 hPa, 1 finding(s)
}
