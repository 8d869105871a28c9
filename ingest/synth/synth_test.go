package synth

import (
	"bufio"
	"bytes"
	"fmt"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// rec is one data record of a version-2 station file, read by columns.
type rec struct {
	typ1, typ2                            int
	etime, p, gph, t, rh, dpd, wdir, wspd int
	pflag, zflag, tflag                   byte
	line                                  int
}

// snd is one sounding of a version-2 station file, read by columns.
type snd struct {
	id                                      string
	year, month, day, hour, reltime, numlev int
	psrc, npsrc                             string
	lat, lon                                int
	line                                    int
	recs                                    []rec
}

// field reads the integer in 1-based columns a..b, which must be
// right-aligned (spaces, then an optional minus sign and digits).
func field(line string, a, b int) (int, error) {
	s := line[a-1 : b]
	v, err := strconv.Atoi(strings.TrimLeft(s, " "))
	if err != nil {
		return 0, fmt.Errorf("columns %d-%d %q: %v", a, b, s, err)
	}
	return v, nil
}

// blank checks that the 1-based columns are spaces.
func blank(line string, cols ...int) error {
	for _, c := range cols {
		if line[c-1] != ' ' {
			return fmt.Errorf("column %d is %q, want a space", c, line[c-1])
		}
	}
	return nil
}

func flag(b byte) error {
	if b != ' ' && b != 'A' && b != 'B' {
		return fmt.Errorf("flag %q, want blank, A or B", b)
	}
	return nil
}

// parseHeader reads a header record by the columns of the format
// description (igra2-data-format.txt, "Header Record Format"; METHODS §7.2).
func parseHeader(line string) (snd, error) {
	var s snd
	if len(line) != 71 || line[0] != '#' {
		return s, fmt.Errorf("header of %d characters, want 71 starting with #", len(line))
	}
	if err := blank(line, 13, 18, 21, 24, 27, 32, 37, 46, 55, 63); err != nil {
		return s, err
	}
	s.id, s.psrc, s.npsrc = line[1:12], line[37:45], line[46:54]
	var err error
	for _, f := range []struct {
		dst  *int
		a, b int
	}{{&s.year, 14, 17}, {&s.month, 19, 20}, {&s.day, 22, 23}, {&s.hour, 25, 26},
		{&s.reltime, 28, 31}, {&s.numlev, 33, 36}, {&s.lat, 56, 62}, {&s.lon, 64, 71}} {
		if *f.dst, err = field(line, f.a, f.b); err != nil {
			return s, err
		}
	}
	return s, nil
}

// parseRecord reads a data record by the columns of the format description
// (igra2-data-format.txt, "Data Record Format"; METHODS §7.2). Real files
// carry a trailing space in column 52.
func parseRecord(line string) (rec, error) {
	var r rec
	if len(line) != 52 {
		return r, fmt.Errorf("data record of %d characters, want 52", len(line))
	}
	if err := blank(line, 3, 9, 34, 40, 46, 52); err != nil {
		return r, err
	}
	r.typ1, r.typ2 = int(line[0]-'0'), int(line[1]-'0')
	if r.typ1 < 1 || r.typ1 > 3 || r.typ2 < 0 || r.typ2 > 2 {
		return r, fmt.Errorf("level type %q", line[:2])
	}
	r.pflag, r.zflag, r.tflag = line[15], line[21], line[27]
	for _, b := range []byte{r.pflag, r.zflag, r.tflag} {
		if err := flag(b); err != nil {
			return r, err
		}
	}
	var err error
	for _, f := range []struct {
		dst  *int
		a, b int
	}{{&r.etime, 4, 8}, {&r.p, 10, 15}, {&r.gph, 17, 21}, {&r.t, 23, 27}, {&r.rh, 29, 33},
		{&r.dpd, 35, 39}, {&r.wdir, 41, 45}, {&r.wspd, 47, 51}} {
		if *f.dst, err = field(line, f.a, f.b); err != nil {
			return r, err
		}
	}
	return r, nil
}

// parseFile reads a whole station file; every header's NUMLEV must equal
// the records that follow it.
func parseFile(r io.Reader) ([]snd, error) {
	var out []snd
	sc := bufio.NewScanner(r)
	n := 0
	for sc.Scan() {
		n++
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			s, err := parseHeader(line)
			if err != nil {
				return out, fmt.Errorf("line %d: %v", n, err)
			}
			s.line = n
			out = append(out, s)
			continue
		}
		if len(out) == 0 {
			return out, fmt.Errorf("line %d: record before any header", n)
		}
		rc, err := parseRecord(line)
		if err != nil {
			return out, fmt.Errorf("line %d: %v", n, err)
		}
		rc.line = n
		out[len(out)-1].recs = append(out[len(out)-1].recs, rc)
	}
	for _, s := range out {
		if s.numlev != len(s.recs) {
			return out, fmt.Errorf("line %d: NUMLEV %d but %d records follow", s.line, s.numlev, len(s.recs))
		}
	}
	return out, sc.Err()
}

// sharedDir returns ../shared/validation, or skips the test.
func sharedDir(t testing.TB) string { return realdata.Dir(t) }

// generate returns the output of Write for cfg.
func generate(t testing.TB, cfg Config) []byte {
	t.Helper()
	var buf bytes.Buffer
	n, err := Write(&buf, cfg)
	if err != nil {
		t.Fatalf("Write(%+v): %v", cfg, err)
	}
	if n == 0 {
		t.Fatalf("Write(%+v) wrote no soundings", cfg)
	}
	return buf.Bytes()
}

var parsedCache = map[Config][]snd{}

func parsed(t testing.TB, cfg Config) []snd {
	t.Helper()
	if s, ok := parsedCache[cfg]; ok {
		return s
	}
	s, err := parseFile(bytes.NewReader(generate(t, cfg)))
	if err != nil {
		t.Fatalf("generated file: %v", err)
	}
	parsedCache[cfg] = s
	return s
}

// TestParserOnRealFiles checks the test's own column reader against real
// station files, so that the layout checks below test the real layout.
func TestParserOnRealFiles(t *testing.T) {
	dir := filepath.Join(sharedDir(t), "archive-v2")
	// Source: NOAA NCEI version-2 station file for Utqiagvik (shared
	// validation data). Its last sounding is cut short, so only the first
	// two soundings are read. The first record is quoted from the file:
	// "21     0 100980B   12     0B 1000     0    20    51 ".
	data, err := os.ReadFile(filepath.Join(dir, "USM00070026-data-truncated.txt"))
	if err != nil {
		t.Fatal(err)
	}
	third := bytes.Index(data, []byte("\n#USM00070026 2010 06 02 00"))
	if third < 0 {
		t.Fatal("third sounding header not found in the real file")
	}
	got, err := parseFile(bytes.NewReader(data[:third+1]))
	if err != nil {
		t.Fatalf("real file: %v", err)
	}
	if len(got) != 2 {
		t.Fatalf("read %d soundings from the real file, want 2", len(got))
	}
	h := got[0]
	if h.id != "USM00070026" || h.year != 2010 || h.month != 6 || h.day != 1 || h.hour != 0 || h.reltime != 2303 || h.numlev != 158 || h.lat != 712889 || h.lon != -1567833 {
		t.Errorf("real header read as %+v", h)
	}
	r := h.recs[0]
	want := rec{typ1: 2, typ2: 1, etime: 0, p: 100980, gph: 12, t: 0, rh: 1000, dpd: 0, wdir: 20, wspd: 51, pflag: 'B', zflag: ' ', tflag: 'B', line: 2}
	if r != want {
		t.Errorf("real surface record read as %+v, want %+v", r, want)
	}
	// Source: Göteborg-Landvetter station file (shared validation data),
	// GTS-relayed records with RH −9999 and no elapsed time.
	f, err := os.Open(filepath.Join(dir, "SWM00002527-data-hour99.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := parseFile(f); err != nil {
		t.Errorf("Göteborg file: %v", err)
	}
}

func TestDeterministic(t *testing.T) {
	base := Config{Seed: 7, StartYear: 2010, Years: 1}
	a, b := generate(t, base), generate(t, base)
	if !bytes.Equal(a, b) {
		t.Fatal("same Config gave different output")
	}
	tests := []struct {
		name string
		cfg  Config
	}{
		{"other seed", Config{Seed: 8, StartYear: 2010, Years: 1}},
		{"other station", Config{Seed: 7, StartYear: 2010, Years: 1, StationIndex: 3}},
	}
	for _, tc := range tests {
		c := generate(t, tc.cfg)
		if bytes.Equal(a, c) {
			t.Errorf("%s: output identical to the base config", tc.name)
		}
		// The soundings must differ, not only the header.
		if bytes.Equal(a[bytes.IndexByte(a, '\n'):bytes.IndexByte(a, '\n')+600], c[bytes.IndexByte(c, '\n'):bytes.IndexByte(c, '\n')+600]) {
			t.Errorf("%s: first records identical to the base config", tc.name)
		}
	}
}

// TestLayout checks every record of two generated years against the column
// layout of the format description (igra2-data-format.txt) and the
// conventions of the real files in ../shared/validation/archive-v2.
func TestLayout(t *testing.T) {
	cfg := Config{Seed: 1, StartYear: 2003, Years: 2, StationIndex: 0}
	st := cfg.Station()
	ss := parsed(t, cfg)
	if want := 2 * (365 + 366); len(ss) != want { // 2003 and the leap year 2004
		t.Fatalf("%d soundings, want %d", len(ss), want)
	}
	for i, s := range ss {
		if s.id != st.ID || s.psrc != sourceCode || s.npsrc != sourceCode {
			t.Fatalf("line %d: id/sources %q %q %q", s.line, s.id, s.psrc, s.npsrc)
		}
		if s.lat != int(math.Round(st.LatitudeDeg*1e4)) || s.lon != int(math.Round(st.LongitudeDeg*1e4)) {
			t.Fatalf("line %d: position %d %d", s.line, s.lat, s.lon)
		}
		wantHour := 12 * (i % 2)
		if s.hour != wantHour {
			t.Fatalf("line %d: hour %d, want %d (00 then 12 UTC each day)", s.line, s.hour, wantHour)
		}
		// 00 UTC soundings are released on the previous day, like the real
		// archive ("2010 06 01 00 2303" in the Utqiagvik file).
		if lo := 100*((wantHour+23)%24) + 0; s.reltime < lo || s.reltime > lo+59 {
			t.Fatalf("line %d: release time %04d for hour %02d", s.line, s.reltime, s.hour)
		}
		if s.numlev < 55 || s.numlev > 120 {
			t.Errorf("line %d: %d levels, want 55–120 (about 60–90 by design)", s.line, s.numlev)
		}
		checkRecords(t, s, st)
	}
}

func checkRecords(t *testing.T, s snd, st Info) {
	t.Helper()
	sfc := s.recs[0]
	if sfc.typ1 != 2 || sfc.typ2 != 1 || sfc.gph != int(st.ElevationM) || sfc.pflag != 'B' {
		t.Fatalf("line %d: surface record %+v", sfc.line, sfc)
	}
	prevP, prevZ, nstd, ntrop, nwind := math.MaxInt, math.MinInt, 0, 0, 0
	for _, r := range s.recs {
		if r.rh != missing {
			t.Fatalf("line %d: RH %d, want -9999", r.line, r.rh)
		}
		if r.wdir < 0 || r.wdir > 360 || r.wspd < 0 || r.etime < 0 || r.etime%100 >= 60 {
			t.Fatalf("line %d: wind or elapsed time out of range: %+v", r.line, r)
		}
		if r.typ1 == 3 {
			nwind++
			if r.p != missing || r.t != missing || r.dpd != missing || r.gph == missing || r.gph <= prevZ {
				t.Fatalf("line %d: wind-only level %+v", r.line, r)
			}
			prevZ = r.gph
			continue
		}
		if nwind > 0 {
			t.Fatalf("line %d: pressure level after wind-only levels", r.line)
		}
		if r.p >= prevP || r.p <= 0 {
			t.Fatalf("line %d: pressure %d not below %d", r.line, r.p, prevP)
		}
		prevP = r.p
		if r.t == missing || r.dpd < 0 || r.tflag != 'B' {
			t.Fatalf("line %d: temperature/dewpoint %+v", r.line, r)
		}
		switch {
		case r.typ1 == 1:
			nstd++
			if !slices.Contains(standardPa[:], float64(r.p)) || r.gph == missing || r.zflag != 'B' {
				t.Fatalf("line %d: standard level %+v", r.line, r)
			}
		case r.typ2 != 1 && r.gph != missing:
			t.Fatalf("line %d: significant level with a height %+v", r.line, r)
		}
		if r.typ2 == 2 {
			ntrop++
		}
	}
	if last := s.recs[len(s.recs)-nwind-1]; last.p < 9200 || last.p > 9900 {
		t.Errorf("line %d: top at %d Pa, want 9200–9900", last.line, last.p)
	}
	if nstd < 9 || ntrop != 1 || nwind != 10 {
		t.Errorf("line %d: %d standard levels, %d tropopauses, %d wind-only levels", s.line, nstd, ntrop, nwind)
	}
}

// Constants of the independent checks below.
const (
	testRd    = 287.04749 // J/(kg K), METHODS §1.6
	testG0    = 9.80665   // m/s², USSA76 (METHODS §1.1)
	testEps   = 0.6219569 // Rd/Rv, METHODS §1.1
	testKappa = 2.0 / 7   // Poisson constant with cp = 3.5 Rd, METHODS §1.1–1.2
)

// testTv is the virtual temperature in K of a record: Bolton's saturation
// vapour pressure at the dewpoint (METHODS §1.3), w = ε e/(p − e) (§1.4),
// Tv = T (w + ε)/(ε (1 + w)) (§1.5).
func testTv(r rec) float64 {
	tC := float64(r.t) / 10
	tdC := tC - float64(r.dpd)/10
	e := 6.112 * math.Exp(17.67*tdC/(tdC+243.5))
	w := testEps * e / (float64(r.p)/100 - e)
	return (tC + 273.15) * (w + testEps) / (testEps * (1 + w))
}

func testTheta(r rec) float64 {
	return (float64(r.t)/10 + 273.15) * math.Pow(100000/float64(r.p), testKappa)
}

// heightsAGL integrates the hypsometric equation (METHODS §1.6, trapezoid
// in ln p of Tv) over the pressure records of s; it returns the height above
// the surface of each pressure record.
func heightsAGL(s snd) []float64 {
	z := []float64{0}
	for i := 1; i < len(s.recs) && s.recs[i].typ1 != 3; i++ {
		a, b := s.recs[i-1], s.recs[i]
		z = append(z, z[i-1]+testRd/testG0*0.5*(testTv(a)+testTv(b))*math.Log(float64(a.p)/float64(b.p)))
	}
	return z
}

// TestHydrostatic recomputes the thickness between consecutive records
// that report a height with the hypsometric equation (METHODS §1.6) and
// requires it to match the reported heights within 2 m.
func TestHydrostatic(t *testing.T) {
	worst := 0.0
	for _, s := range parsed(t, Config{Seed: 1, StartYear: 2003, Years: 2}) {
		z := heightsAGL(s)
		last := 0
		for i := 1; i < len(z); i++ {
			if s.recs[i].gph == missing {
				continue
			}
			reported := float64(s.recs[i].gph - s.recs[last].gph)
			d := math.Abs(reported - (z[i] - z[last]))
			worst = max(worst, d)
			if d > 2 {
				t.Fatalf("line %d: reported thickness %.0f m, hypsometric %.1f m", s.recs[i].line, reported, z[i]-z[last])
			}
			last = i
		}
	}
	t.Logf("largest thickness mismatch %.2f m", worst)
}

// TestStandardAtmosphere compares the generated climate with the U.S.
// Standard Atmosphere 1976 (METHODS §1.7): the mean 500 hPa height should
// lie within 250 m of 5574.4 gpm and the mean 700–400 hPa lapse rate within
// 1 K/km of 6.5 K/km. Mid-latitude 500 hPa heights vary by a few hundred
// metres around the standard value (from memory).
func TestStandardAtmosphere(t *testing.T) {
	var z500, lapse []float64
	for _, s := range parsed(t, Config{Seed: 1, StartYear: 2003, Years: 2}) {
		std := map[int]rec{}
		for _, r := range s.recs {
			if r.typ1 == 1 {
				std[r.p] = r
			}
		}
		a, b := std[70000], std[40000]
		z500 = append(z500, float64(std[50000].gph))
		lapse = append(lapse, float64(a.t-b.t)/10/float64(b.gph-a.gph)*1000)
	}
	mz, ml := mean(z500), mean(lapse)
	t.Logf("mean 500 hPa height %.0f gpm, mean 700–400 hPa lapse rate %.2f K/km", mz, ml)
	if math.Abs(mz-5574.4) > 250 {
		t.Errorf("mean 500 hPa height %.0f gpm, USSA76 5574.4 gpm", mz)
	}
	if math.Abs(ml-6.5) > 1 {
		t.Errorf("mean 700–400 hPa lapse rate %.2f K/km, USSA76 6.5 K/km", ml)
	}
}

func mean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

func median(x []float64) float64 {
	y := slices.Clone(x)
	slices.Sort(y)
	n := len(y)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return y[n/2]
	}
	return (y[n/2-1] + y[n/2]) / 2
}

func seasonOf(month int) string {
	switch month {
	case 12, 1, 2:
		return "DJF"
	case 6, 7, 8:
		return "JJA"
	}
	return ""
}

// TestScenario checks the scenario the package documentation promises. The
// target ranges are the scenario's own design figures (not external facts);
// the diagnostics follow METHODS §3.1 (surface-based inversion: temperature
// rising from the surface to the next level) and §2 (well-mixed: θ within
// 1 K of the surface value, a threshold from memory).
func TestScenario(t *testing.T) {
	sbi := map[string][2]int{}
	mlTop := map[string][]float64{}
	elevated, dryAbove, twoLayers, afternoons := 0, 0, 0, 0
	for _, s := range parsed(t, Config{Seed: 1, StartYear: 2003, Years: 2}) {
		season := seasonOf(s.month)
		if s.hour == 12 {
			c := sbi[season]
			c[1]++
			if s.recs[1].t > s.recs[0].t {
				c[0]++
			}
			sbi[season] = c
			continue
		}
		z := heightsAGL(s)
		// The mixed layer starts at the top of a surface inversion when
		// there is one (evenings near sunset, cold-air pools).
		base := 0
		for base+1 < len(z) && s.recs[base+1].t > s.recs[base].t {
			base++
		}
		theta0 := testTheta(s.recs[base])
		top := base
		for i := base + 1; i < len(z) && testTheta(s.recs[i]) <= theta0+1; i++ {
			top = i
		}
		mlTop[season] = append(mlTop[season], z[top])
		// An elevated inversion below 5 km with the dewpoint depression
		// larger at its top than at its base.
		afternoons++
		found, dry, layers := false, false, 0
		for i := 2; i < len(z) && z[i] < 5000; i++ {
			if s.recs[i].t > s.recs[i-1].t {
				found = true
				dry = dry || s.recs[i].dpd > s.recs[i-1].dpd
				if s.recs[i-1].t <= s.recs[i-2].t {
					layers++ // a new inversion layer starts at i−1
				}
			}
		}
		if found {
			elevated++
		}
		if layers >= 2 {
			twoLayers++
		}
		if dry {
			dryAbove++
		}
	}
	fw := float64(sbi["DJF"][0]) / float64(sbi["DJF"][1])
	fs := float64(sbi["JJA"][0]) / float64(sbi["JJA"][1])
	mw, ms := median(mlTop["DJF"]), median(mlTop["JJA"])
	t.Logf("12 UTC surface-based inversions: DJF %.2f, JJA %.2f; 00 UTC mixed-layer top median: DJF %.0f m, JJA %.0f m; elevated inversions %d/%d (drier above %d, two or more %d)",
		fw, fs, mw, ms, elevated, afternoons, dryAbove, twoLayers)
	if !(fw > fs+0.1) || fw < 0.8 || fs < 0.5 || fs > 0.85 {
		t.Errorf("surface-based inversion frequency DJF %.2f, JJA %.2f; want DJF > 0.8, JJA 0.5–0.85 and DJF ≥ JJA + 0.1", fw, fs)
	}
	if !(ms > mw) || mw < 300 || mw > 900 || ms < 1500 || ms > 3000 {
		t.Errorf("mixed-layer top median DJF %.0f m, JJA %.0f m; want 300–900 and 1500–3000", mw, ms)
	}
	if f := float64(dryAbove) / float64(afternoons); f < 0.9 {
		t.Errorf("only %.2f of afternoon soundings have an elevated inversion with drier air above", f)
	}
	// The capping inversion and, about half the time, a subsidence
	// inversion above it.
	if f := float64(twoLayers) / float64(afternoons); f < 0.3 || f > 0.7 {
		t.Errorf("%.2f of afternoon soundings have two or more elevated inversions below 5 km, want about half", f)
	}
}

func TestConfigErrors(t *testing.T) {
	tests := []struct {
		name string
		cfg  Config
	}{
		{"zero years", Config{StartYear: 2000, Years: 0}},
		{"negative years", Config{StartYear: 2000, Years: -1}},
		{"year zero", Config{StartYear: 0, Years: 1}},
		{"past 9999", Config{StartYear: 9999, Years: 2}},
		{"negative station", Config{StartYear: 2000, Years: 1, StationIndex: -1}},
		{"station too large", Config{StartYear: 2000, Years: 1, StationIndex: MaxStationIndex + 1}},
	}
	for _, tc := range tests {
		var buf bytes.Buffer
		if n, err := Write(&buf, tc.cfg); err == nil || n != 0 || buf.Len() != 0 {
			t.Errorf("%s: Write = %d, %v, %d bytes; want an error and no output", tc.name, n, err, buf.Len())
		}
		if _, _, err := WriteFile(t.TempDir(), tc.cfg); err == nil {
			t.Errorf("%s: WriteFile gave no error", tc.name)
		}
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, fmt.Errorf("disk full") }

func TestWriteError(t *testing.T) {
	if _, err := Write(failWriter{}, Config{Seed: 1, StartYear: 2000, Years: 1}); err == nil || !strings.Contains(err.Error(), "disk full") {
		t.Errorf("Write to a failing writer: %v", err)
	}
}

func TestWriteFile(t *testing.T) {
	cfg := Config{Seed: 3, StartYear: 1999, Years: 1, StationIndex: 12}
	dir := t.TempDir()
	path, n, err := WriteFile(dir, cfg)
	if err != nil {
		t.Fatal(err)
	}
	if want := filepath.Join(dir, StationAt(12).ID+"-data.txt"); path != want {
		t.Errorf("path %s, want %s", path, want)
	}
	if n != 2*365 {
		t.Errorf("%d soundings, want %d", n, 2*365)
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, generate(t, cfg)) {
		t.Error("file differs from Write output")
	}
}

func TestStations(t *testing.T) {
	ids := map[string]bool{}
	for i := 0; i < 200; i++ {
		s := StationAt(i)
		if len(s.ID) != 11 || !strings.HasPrefix(s.ID, "ZZXSYN") || ids[s.ID] {
			t.Fatalf("station %d: id %q invalid or repeated", i, s.ID)
		}
		ids[s.ID] = true
		if s.LatitudeDeg < 36 || s.LatitudeDeg > 48 || s.LongitudeDeg < -112 || s.LongitudeDeg > -92 || s.ElevationM < 300 || s.ElevationM > 900 {
			t.Errorf("station %d outside the invented plain: %+v", i, s)
		}
		if s != StationAt(i) {
			t.Errorf("station %d not deterministic", i)
		}
	}
}

// TestIDsNotReal checks the invented ids against the archive's real station
// list (NOAA NCEI igra2-station-list.txt in the shared validation data).
func TestIDsNotReal(t *testing.T) {
	data, err := os.ReadFile(filepath.Join(sharedDir(t), "archive-v2", "igra2-station-list.txt"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	if len(lines) < 2000 {
		t.Fatalf("station list has only %d lines", len(lines))
	}
	for _, l := range lines {
		if strings.HasPrefix(l, "ZZXSYN") {
			t.Errorf("real station list contains %q", l)
		}
		if name := StationAt(0).Name; strings.Contains(l, name) {
			t.Errorf("real station list contains the invented name %q: %q", name, l)
		}
	}
}

func BenchmarkWrite(b *testing.B) {
	cfg := Config{Seed: 1, StartYear: 2000, Years: 1}
	n := 0
	for b.Loop() {
		k, err := Write(io.Discard, cfg)
		if err != nil {
			b.Fatal(err)
		}
		n += k
	}
	b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "soundings/s")
}
