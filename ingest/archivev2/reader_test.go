package archivev2

import (
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/sounding"
)

// findValidation returns ../shared/validation/archive-v2 relative to the
// module root (the directory holding go.mod), or "" with the reason when it
// cannot be found.
func findValidation() (string, string) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err.Error()
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			break
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", "go.mod not found above the test directory"
		}
		dir = parent
	}
	v := filepath.Join(dir, "..", "shared", "validation", "archive-v2")
	if _, err := os.Stat(v); err != nil {
		return "", err.Error()
	}
	return v, ""
}

// validationDir returns the real-file directory or skips the test.
func validationDir(tb testing.TB) string {
	tb.Helper()
	v, why := findValidation()
	if v == "" {
		tb.Skipf("real archive files absent (%s); they live in ../shared/validation, see PROVENANCE.md", why)
	}
	return v
}

// readAll drains a reader, separating soundings from ParseErrors; any other
// error fails the test.
func readAll(tb testing.TB, r io.Reader, file string) ([]*sounding.Sounding, []*ingest.ParseError) {
	tb.Helper()
	rd := NewReader(r, file, "")
	var ss []*sounding.Sounding
	var perrs []*ingest.ParseError
	for i := 0; ; i++ {
		if i > 1e6 {
			tb.Fatal("reader does not terminate")
		}
		s, err := rd.Next()
		if err == io.EOF {
			return ss, perrs
		}
		var pe *ingest.ParseError
		switch {
		case errors.As(err, &pe):
			perrs = append(perrs, pe)
		case err != nil:
			tb.Fatalf("Next: %v", err)
		default:
			ss = append(ss, s)
		}
	}
}

func openValidation(tb testing.TB, name string) io.ReadCloser {
	tb.Helper()
	f, err := os.Open(filepath.Join(validationDir(tb), name))
	if err != nil {
		tb.Fatal(err)
	}
	return f
}

// sterlingBytes returns the text member of the Sterling zip.
func sterlingBytes(tb testing.TB) []byte {
	tb.Helper()
	return realdata.Text(tb, "archive-v2", "USM00072403-data-beg2016.txt.zip")
}

func utc(y int, m time.Month, d, h, min int) time.Time {
	return time.Date(y, m, d, h, min, 0, 0, time.UTC)
}

// near compares floats parsed from tenths to a tolerance well below the
// file's resolution.
func near(a, b float64) bool { return math.Abs(a-b) < 1e-9 }

// Source of every count in this test: PROVENANCE.md (Sterling row) and the
// zip itself (grep -c '^#' gives 662 headers; 131,306 data lines).
func TestSterling(t *testing.T) {
	ss, perrs := readAll(t, bytes.NewReader(sterlingBytes(t)), "USM00072403-data.txt")
	if len(perrs) != 0 {
		t.Fatalf("%d parse errors, first %v", len(perrs), perrs[0])
	}
	if len(ss) != 662 {
		t.Fatalf("%d soundings, want 662 (PROVENANCE.md)", len(ss))
	}
	var h00, h12, other, levels int
	for _, s := range ss {
		switch s.NominalHour() {
		case 0:
			h00++
		case 12:
			h12++
		default:
			other++
		}
		if len(s.Levels) != s.DeclaredLevels {
			t.Errorf("%v: %d levels, header says %d", s.Source, len(s.Levels), s.DeclaredLevels)
		}
		levels += len(s.Levels)
		if s.Source.Format != Format || s.StationID != "USM00072403" {
			t.Errorf("%v: format %q station %q", s.Source, s.Source.Format, s.StationID)
		}
	}
	if h00 != 321 || h12 != 321 || other != 20 {
		t.Errorf("hours: %d at 00Z, %d at 12Z, %d other; want 321/321/20 (PROVENANCE.md)", h00, h12, other)
	}
	if levels != 131306 {
		t.Errorf("%d levels, want 131,306 (PROVENANCE.md)", levels)
	}

	// Hand checks against the raw lines of USM00072403-data.txt.
	// Line 1: "#USM00072403 2016 01 01 00 2302  194 ncdc-nws ncdc-nws  389767  -774864"
	s := ss[0]
	if s.Source.Line != 1 || !near(s.LatitudeDeg, 38.9767) || !near(s.LongitudeDeg, -77.4864) ||
		s.DeclaredLevels != 194 || s.PressureSource != "ncdc-nws" || s.HeightSource != "ncdc-nws" {
		t.Errorf("header line 1: %+v", s.Source)
	}
	if !s.NominalTime.Equal(utc(2016, 1, 1, 0, 0)) || !s.LaunchTime.Equal(utc(2015, 12, 31, 23, 2)) ||
		!s.LaunchTimeReported || s.NominalHourInferred {
		t.Errorf("line 1 times: nominal %v launch %v", s.NominalTime, s.LaunchTime)
	}
	if s.ElevationM != 88 {
		t.Errorf("line 1 elevation %v, want 88 from the surface record on line 2", s.ElevationM)
	}
	// Line 2: "21     0 100982B   88    94B  627    67   340    10 "
	l := s.Levels[0]
	if l.Line != 2 || l.Kind != sounding.KindSurface || l.ElapsedS != 0 || l.PressurePa != 100982 ||
		l.UpstreamTier[sounding.VarPressure] != 'B' || l.HeightM != 88 || l.UpstreamTier[sounding.VarHeight] != 0 ||
		!near(l.TemperatureK, 282.55) || l.UpstreamTier[sounding.VarTemperature] != 'B' ||
		!near(l.RelHumidityPct, 62.7) || !near(l.DewpointDepressionK, 6.7) || !near(l.DewpointK, 275.85) ||
		l.WindDirectionDeg != 340 || !near(l.WindSpeedMS, 1.0) || l.Tropopause {
		t.Errorf("line 2: %+v", l)
	}
	for v, st := range l.Status {
		if st != sounding.Reported {
			t.Errorf("line 2: %v status %v, want reported", sounding.Var(v), st)
		}
	}

	byLine := map[int]sounding.Level{}
	var sep14 *sounding.Sounding
	for _, s := range ss {
		for _, l := range s.Levels {
			switch l.Line {
			case 96, 3032, 102573, 102574, 117212:
				byLine[l.Line] = l
			}
		}
		if s.Source.Line == 102395 {
			sep14 = s
		}
	}
	// Line 96: "30   100  -9999   392 -9999 -9999 -9999   316    76 " — ETIME 1 min 00 s.
	l = byLine[96]
	if l.Kind != sounding.KindWindOnly || l.ElapsedS != 60 || !math.IsNaN(l.PressurePa) ||
		l.Status[sounding.VarPressure] != sounding.Missing || l.HeightM != 392 || l.WindDirectionDeg != 316 ||
		!near(l.WindSpeedMS, 7.6) || !math.IsNaN(l.DewpointK) {
		t.Errorf("line 96: %+v", l)
	}
	// Line 3032: "12  4850  10000 16246B -632B   10   300   241   271 " — tropopause at 100 hPa.
	l = byLine[3032]
	if l.Kind != sounding.KindStandard || !l.Tropopause || l.ElapsedS != 48*60+50 || l.PressurePa != 10000 ||
		!near(l.TemperatureK, 273.15-63.2) || !near(l.DewpointK, 273.15-63.2-30.0) {
		t.Errorf("line 3032: %+v", l)
	}
	// Line 102573: "20 11227    635 34335B -391B    2   438 -9999 -9999 " — 112 min 27 s.
	l = byLine[102573]
	if l.Kind != sounding.KindSignificant || l.ElapsedS != 6747 || l.PressurePa != 635 || l.HeightM != 34335 ||
		!near(l.RelHumidityPct, 0.2) || l.Status[sounding.VarWindSpeed] != sounding.Missing {
		t.Errorf("line 102573: %+v", l)
	}
	// Line 102574: "01 -9999  -9999 -9999 -9999 -9999 -9999   170    36 " — the surface
	// record without pressure that PROVENANCE.md describes from 2016-09-14 on.
	l = byLine[102574]
	if l.Kind != sounding.KindSurface || l.Status[sounding.VarElapsedTime] != sounding.Missing ||
		!math.IsNaN(l.ElapsedS) || !math.IsNaN(l.PressurePa) || l.WindDirectionDeg != 170 {
		t.Errorf("line 102574: %+v", l)
	}
	// Its header, line 102395: "#USM00072403 2016 09 14 00 2308  247 ncdc-nws ncdc-gts ...".
	if sep14 == nil || !math.IsNaN(sep14.ElevationM) || sep14.HeightSource != "ncdc-gts" ||
		!sep14.LaunchTime.Equal(utc(2016, 9, 13, 23, 8)) {
		t.Errorf("header line 102395: %+v", sep14)
	}
	// Line 117212: "11     0 100000B-8888   180B  958     7   350    21 " — a surface on
	// the 1000 hPa standard level whose height the archive's QC removed.
	l = byLine[117212]
	if l.Kind != sounding.KindSurface || !math.IsNaN(l.HeightM) || l.Status[sounding.VarHeight] != sounding.RemovedUpstream ||
		l.UpstreamTier[sounding.VarPressure] != 'B' || !near(l.TemperatureK, 291.15) {
		t.Errorf("line 117212: %+v", l)
	}
}

// Source: PROVENANCE.md (Barrow row: "the last sounding is cut short"); the
// third header is on line 318, the file's last line, with NUMLEV 147.
func TestBarrowTruncated(t *testing.T) {
	f := openValidation(t, "USM00070026-data-truncated.txt")
	defer f.Close()
	ss, perrs := readAll(t, f, "USM00070026-data-truncated.txt")
	if len(ss) != 2 || len(perrs) != 1 {
		t.Fatalf("%d soundings and %d errors, want 2 and 1", len(ss), len(perrs))
	}
	pe := perrs[0]
	if pe.Line != 318 || !errors.Is(pe, ingest.ErrLevelCount) || pe.File != "USM00070026-data-truncated.txt" {
		t.Errorf("error %v, want line 318 wrapping ErrLevelCount", pe)
	}
	// Line 1: "#USM00070026 2010 06 01 00 2303  158 ..."; line 160: "... 12 1100  157 ...".
	if !ss[0].LaunchTime.Equal(utc(2010, 5, 31, 23, 3)) || len(ss[0].Levels) != 158 ||
		!ss[1].LaunchTime.Equal(utc(2010, 6, 1, 11, 0)) || len(ss[1].Levels) != 157 {
		t.Errorf("launch times %v %v", ss[0].LaunchTime, ss[1].LaunchTime)
	}
	// Line 161: "21     0 100840B   12   -17B 1000     0    20    72 " — RH 100 %, DPD 0.
	l := ss[1].Levels[0]
	if l.Line != 161 || ss[1].ElevationM != 12 || !near(l.TemperatureK, 271.45) || l.RelHumidityPct != 100 ||
		!near(l.DewpointK, l.TemperatureK) || !near(ss[1].LatitudeDeg, 71.2889) || !near(ss[1].LongitudeDeg, -156.7833) {
		t.Errorf("line 161: %+v", l)
	}
}

// Source: PROVENANCE.md (Göteborg row) and the file itself: the data records
// of soundings 1 and 2 (lines 2–55, 57–110) are identical, as are those of
// soundings 3, 4 and 5, so each group is one ascent and must get one launch
// time.
func TestGoteborgHour99(t *testing.T) {
	f := openValidation(t, "SWM00002527-data-hour99.txt")
	defer f.Close()
	ss, perrs := readAll(t, f, "SWM00002527-data-hour99.txt")
	if len(ss) != 5 || len(perrs) != 0 {
		t.Fatalf("%d soundings and %d errors, want 5 and 0", len(ss), len(perrs))
	}
	same := func(a, b *sounding.Sounding) bool {
		if len(a.Levels) != len(b.Levels) {
			return false
		}
		for i := range a.Levels {
			x, y := a.Levels[i], b.Levels[i]
			x.Line, y.Line = 0, 0
			if x.PressurePa != y.PressurePa || x.Kind != y.Kind || x.Status != y.Status ||
				!(x.WindSpeedMS == y.WindSpeedMS || math.IsNaN(x.WindSpeedMS) && math.IsNaN(y.WindSpeedMS)) {
				return false
			}
		}
		return true
	}
	if !same(ss[0], ss[1]) || !same(ss[2], ss[3]) || !same(ss[2], ss[4]) {
		t.Fatal("level groups differ; the premise of this test does not hold")
	}
	tests := []struct {
		i        int
		nominal  time.Time
		inferred bool
		launch   time.Time
	}{
		{0, utc(2018, 1, 1, 0, 0), false, utc(2017, 12, 31, 23, 30)},
		{1, utc(2018, 1, 1, 0, 0), true, utc(2017, 12, 31, 23, 30)},
		{2, utc(2018, 1, 2, 0, 0), false, utc(2018, 1, 1, 23, 30)},
		{3, utc(2018, 1, 2, 0, 0), true, utc(2018, 1, 1, 23, 30)},
		{4, utc(2018, 1, 2, 0, 0), true, utc(2018, 1, 1, 23, 30)},
	}
	for _, tc := range tests {
		s := ss[tc.i]
		if !s.NominalTime.Equal(tc.nominal) || s.NominalHourInferred != tc.inferred ||
			!s.LaunchTime.Equal(tc.launch) || !s.LaunchTimeReported {
			t.Errorf("sounding %d (line %d): nominal %v inferred %v launch %v; want %v %v %v",
				tc.i+1, s.Source.Line, s.NominalTime, s.NominalHourInferred, s.LaunchTime,
				tc.nominal, tc.inferred, tc.launch)
		}
	}
	if ss[0].Key() != ss[1].Key() || ss[2].Key() != ss[4].Key() {
		t.Error("identical ascents have different keys")
	}
	// Line 1: header without NP_SRC: "... 00 2330   54 ncdc-gts           576572   122911".
	if ss[0].HeightSource != "" || ss[0].PressureSource != "ncdc-gts" || !near(ss[0].LongitudeDeg, 12.2911) {
		t.Errorf("line 1 header: %+v", ss[0])
	}
	// Line 2: "21 -9999  96900B-9999    38B-9999     0   210    41 " — surface GPH missing.
	if l := ss[0].Levels[0]; !math.IsNaN(ss[0].ElevationM) || l.Status[sounding.VarRelHumidity] != sounding.Missing ||
		!near(l.DewpointK, l.TemperatureK) || !near(l.TemperatureK, 276.95) {
		t.Errorf("line 2: elevation %v level %+v", ss[0].ElevationM, l)
	}
}

// Source: PROVENANCE.md (Cape Kennedy row: 14 soundings, hours 03/05/15)
// and the headers of USM00074794-data-1950-portion.txt, all RELTIME 9999.
func TestCapeKennedy1950(t *testing.T) {
	f := openValidation(t, "USM00074794-data-1950-portion.txt")
	defer f.Close()
	ss, perrs := readAll(t, f, "USM00074794-data-1950-portion.txt")
	if len(ss) != 14 || len(perrs) != 0 {
		t.Fatalf("%d soundings and %d errors, want 14 and 0", len(ss), len(perrs))
	}
	wantHours := []int{3, 5, 5, 3, 15, 3, 15, 3, 15, 3, 3, 3, 3, 3}
	for i, s := range ss {
		if s.NominalHour() != wantHours[i] || s.LaunchTimeReported || !s.LaunchTime.Equal(s.NominalTime) ||
			s.NominalHourInferred || len(s.Levels) != s.DeclaredLevels {
			t.Errorf("sounding %d (line %d): hour %d, launch %v reported %v", i+1, s.Source.Line,
				s.NominalHour(), s.LaunchTime, s.LaunchTimeReported)
		}
	}
	if !ss[4].NominalTime.Equal(utc(1950, 2, 7, 15, 0)) || ss[4].Source.Line != 38 {
		t.Errorf("sounding 5: %v line %d, want 1950-02-07 15Z at line 38", ss[4].NominalTime, ss[4].Source.Line)
	}
	// Line 2: "21 -9999 102400B    3   231B-9999 -9999 -9999 -9999 ".
	l := ss[0].Levels[0]
	if ss[0].ElevationM != 3 || l.PressurePa != 102400 || !near(l.TemperatureK, 296.25) ||
		l.Status[sounding.VarWindDirection] != sounding.Missing || !math.IsNaN(l.DewpointK) {
		t.Errorf("line 2: %+v", l)
	}
}

// Source: PROVENANCE.md (Wien row: 321 soundings).
func TestWienGzip(t *testing.T) {
	f := openValidation(t, "AUM00011035-data.txt.gz")
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	ss, perrs := readAll(t, zr, "AUM00011035-data.txt.gz")
	if len(ss) != 321 || len(perrs) != 0 {
		t.Fatalf("%d soundings and %d errors, want 321 and 0", len(ss), len(perrs))
	}
	for _, s := range ss {
		if len(s.Levels) != s.DeclaredLevels {
			t.Errorf("%v: %d levels, header %d", s.Source, len(s.Levels), s.DeclaredLevels)
		}
	}
	// Line 1: "#AUM00011035 2015 01 23 12 1134  123 ncdc-gts           482333   163500".
	s := ss[0]
	if !s.NominalTime.Equal(utc(2015, 1, 23, 12, 0)) || !s.LaunchTime.Equal(utc(2015, 1, 23, 11, 34)) ||
		!near(s.LatitudeDeg, 48.2333) || !near(s.LongitudeDeg, 16.35) || s.DeclaredLevels != 123 {
		t.Errorf("line 1: %+v", s)
	}
	// Line 2: "21 -9999  99200B-9999    38B-9999    22   300    50 " — DPD 2.2 K, no RH.
	l := s.Levels[0]
	if l.PressurePa != 99200 || !near(l.DewpointK, 273.15+3.8-2.2) || l.Status[sounding.VarRelHumidity] != sounding.Missing {
		t.Errorf("line 2: %+v", l)
	}
}
