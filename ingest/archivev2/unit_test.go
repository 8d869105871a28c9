package archivev2

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/iotest"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Invented scaffolding records in the layout of igra2-data-format.txt
// (station id QQM00000042 does not exist in the station list).
const (
	hdrA  = "#QQM00000042 2020 03 05 12 1115    2 ncdc-gts ncdc-gts  450000 -1200000"
	hdrB  = "#QQM00000042 2020 03 06 00 2340    1 ncdc-gts ncdc-gts  450000 -1200000"
	lvSfc = "21     0 101000B  150   123A  800    35   270    51 "
	lvStd = "10   130 100000B  230A  100B-8888 -9999   275    60 "
)

func TestRecovery(t *testing.T) {
	type want struct {
		line   int   // header line of a sounding, or line of an error
		reason error // nil for a sounding
	}
	tests := []struct {
		name string
		in   string
		want []want
	}{
		{"two good", hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{1, nil}, {4, nil}}},
		{"CRLF, blank lines, no final newline", "\r\n" + hdrA + "\r\n" + lvSfc + "\r\n\r\n" + lvStd + "\r\n" + hdrB + "\r\n" + lvSfc,
			[]want{{2, nil}, {6, nil}}},
		{"orphans reported once", lvSfc + "\n" + lvStd + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{1, ingest.ErrOrphanLevel}, {3, nil}}},
		{"orphans only", lvSfc + "\n", []want{{1, ingest.ErrOrphanLevel}}},
		{"too few levels", hdrA + "\n" + lvSfc + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{1, ingest.ErrLevelCount}, {3, nil}}},
		{"too many levels", hdrB + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n",
			[]want{{1, ingest.ErrLevelCount}, {4, nil}}},
		{"bad level rejects its sounding", hdrA + "\n" + lvSfc + "\n" + strings.Replace(lvStd, "230A", "2x0A", 1) + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{3, ingest.ErrBadLevel}, {4, nil}}},
		{"bad flag", hdrB + "\n" + strings.Replace(lvSfc, "B", "Z", 1) + "\n", []want{{2, ingest.ErrBadLevel}}},
		{"short level line", hdrB + "\n" + lvSfc[:40] + "\n", []want{{2, ingest.ErrBadLevel}}},
		{"bad header skips its records", strings.Replace(hdrA, "03 05", "02 30", 1) + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{1, ingest.ErrBadHeader}, {4, nil}}},
		{"header misaligned", strings.Replace(hdrA, " 2020", "2020 ", 1) + "\n" + lvSfc + "\n" + lvStd + "\n",
			[]want{{1, ingest.ErrBadHeader}}},
		{"bad release time", strings.Replace(hdrB, "2340", "2360", 1) + "\n" + lvSfc + "\n", []want{{1, ingest.ErrBadHeader}}},
		{"over-long line", hdrB + "\n" + lvSfc + strings.Repeat(" ", 2*maxLine) + "\n" + hdrB + "\n" + lvSfc + "\n",
			[]want{{2, ingest.ErrBadLevel}, {3, nil}}},
		{"empty", "", nil},
		{"header with no levels declared", strings.Replace(hdrB, "   1 ncdc", "   0 ncdc", 1) + "\n", []want{{1, nil}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rd := NewReader(strings.NewReader(tc.in), "f.txt", "m")
			var got []want
			for i := 0; i < 100; i++ {
				s, err := rd.Next()
				if err == io.EOF {
					break
				}
				var pe *ingest.ParseError
				switch {
				case errors.As(err, &pe):
					if pe.File != "f.txt" || pe.Member != "m" {
						t.Errorf("error names %q!%q", pe.File, pe.Member)
					}
					for _, r := range []error{ingest.ErrOrphanLevel, ingest.ErrLevelCount, ingest.ErrBadLevel, ingest.ErrBadHeader} {
						if errors.Is(pe, r) {
							got = append(got, want{pe.Line, r})
						}
					}
				case err != nil:
					t.Fatalf("unexpected error %v", err)
				default:
					got = append(got, want{s.Source.Line, nil})
					if len(s.Levels) != s.DeclaredLevels {
						t.Errorf("%d levels, header %d", len(s.Levels), s.DeclaredLevels)
					}
				}
			}
			if len(got) != len(tc.want) {
				t.Fatalf("got %v, want %v", got, tc.want)
			}
			for i := range got {
				if got[i] != tc.want[i] {
					t.Errorf("result %d: got %v, want %v", i, got[i], tc.want[i])
				}
			}
		})
	}
}

// Values of the invented records above, decoded by hand from the column
// layout in igra2-data-format.txt.
func TestLevelValues(t *testing.T) {
	rd := NewReader(strings.NewReader(hdrA+"\n"+lvSfc+"\n"+lvStd+"\n"), "f.txt", "")
	s, err := rd.Next()
	if err != nil {
		t.Fatal(err)
	}
	if !near(s.LatitudeDeg, 45) || !near(s.LongitudeDeg, -120) || s.ElevationM != 150 ||
		!s.LaunchTime.Equal(utc(2020, 3, 5, 11, 15)) {
		t.Errorf("header: %+v", s)
	}
	l := s.Levels[1]
	if l.Kind != sounding.KindStandard || l.ElapsedS != 90 || l.HeightM != 230 || l.UpstreamTier[sounding.VarHeight] != 'A' ||
		!near(l.TemperatureK, 283.15) || l.UpstreamTier[sounding.VarTemperature] != 'B' ||
		l.Status[sounding.VarRelHumidity] != sounding.RemovedUpstream || !math.IsNaN(l.RelHumidityPct) ||
		l.Status[sounding.VarDewpointDepression] != sounding.Missing || !math.IsNaN(l.DewpointK) ||
		!near(l.WindSpeedMS, 6) || l.Line != 3 {
		t.Errorf("level 2: %+v", l)
	}
}

func TestNominalAndLaunch(t *testing.T) {
	tests := []struct {
		name            string
		d, hour, relMin int
		nominal, launch time.Time
		inferred, rep   bool
	}{
		{"00Z, previous-day release", 1, 0, 23*60 + 15, utc(2021, 1, 1, 0, 0), utc(2020, 12, 31, 23, 15), false, true},
		{"12Z, same-day release", 1, 12, 11*60 + 5, utc(2021, 1, 1, 12, 0), utc(2021, 1, 1, 11, 5), false, true},
		{"23Z, next-day release", 1, 23, 10, utc(2021, 1, 1, 23, 0), utc(2021, 1, 2, 0, 10), false, true},
		{"tie goes to the earlier day", 1, 12, 0, utc(2021, 1, 1, 12, 0), utc(2021, 1, 1, 0, 0), false, true},
		{"release missing", 1, 6, -1, utc(2021, 1, 1, 6, 0), utc(2021, 1, 1, 6, 0), false, false},
		{"hour 99 late evening", 1, 99, 23*60 + 30, utc(2021, 1, 1, 0, 0), utc(2020, 12, 31, 23, 30), true, true},
		{"hour 99 at 11:05", 1, 99, 11*60 + 5, utc(2021, 1, 1, 12, 0), utc(2021, 1, 1, 11, 5), true, true},
		{"hour 99 half rounds up", 1, 99, 90, utc(2021, 1, 1, 3, 0), utc(2021, 1, 1, 1, 30), true, true},
		{"hour 99 and release missing", 1, 99, -1, utc(2021, 1, 1, 0, 0), utc(2021, 1, 1, 0, 0), true, false},
	}
	for _, tc := range tests {
		n, l, inf, rep := nominalAndLaunch(2021, time.January, tc.d, tc.hour, tc.relMin)
		if !n.Equal(tc.nominal) || !l.Equal(tc.launch) || inf != tc.inferred || rep != tc.rep {
			t.Errorf("%s: got %v %v %v %v", tc.name, n, l, inf, rep)
		}
	}
	// RELTIME HH99 (minute missing) is read as HH:00.
	s, err := NewReader(strings.NewReader(strings.Replace(hdrB, "2340", "2399", 1)+"\n"+lvSfc+"\n"), "f", "").Next()
	if err != nil || !s.LaunchTime.Equal(utc(2020, 3, 5, 23, 0)) || !s.LaunchTimeReported {
		t.Errorf("HH99: %v %v", s, err)
	}
}

func TestAtoi(t *testing.T) {
	tests := []struct {
		in string
		v  int
		ok bool
	}{
		{"  123", 123, true}, {"-9999", -9999, true}, {" -17 ", -17, true}, {"+5", 5, true},
		{"", 0, false}, {"   ", 0, false}, {"-", 0, false}, {"1 2", 0, false}, {"12a", 0, false},
		{"1234567890", 0, false},
	}
	for _, tc := range tests {
		v, ok := atoi([]byte(tc.in))
		if v != tc.v || ok != tc.ok {
			t.Errorf("atoi(%q) = %d, %v", tc.in, v, ok)
		}
	}
}

func TestSniff(t *testing.T) {
	tests := []struct {
		in   string
		want bool
	}{
		{hdrA + "\n", true},
		{"\n\n" + hdrA, true},
		{"\xEF\xBB\xBF" + hdrA, true},
		{hdrA[:16], false},
		{lvSfc, false},
		{"# comment line here", false},
		{"#QQM 0000042 2020", false},
		{"TTAA 06121 72208", false},
		{"", false},
	}
	for _, tc := range tests {
		if got := Sniff([]byte(tc.in)); got != tc.want {
			t.Errorf("Sniff(%q) = %v", tc.in, got)
		}
	}
	// Source: the real files of PROVENANCE.md must all be recognised.
	dir := validationDir(t)
	for _, name := range []string{"SWM00002527-data-hour99.txt", "USM00070026-data-truncated.txt", "USM00074794-data-1950-portion.txt"} {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		if !Sniff(b[:min(len(b), 512)]) {
			t.Errorf("%s not recognised", name)
		}
	}
	if b, err := os.ReadFile(filepath.Join(dir, "igra2-station-list.txt")); err != nil || Sniff(b[:512]) {
		t.Errorf("station list recognised as a data file (err %v)", err)
	}
}

// Source: igra2-station-list.txt (PROVENANCE.md: 2,879 stations); the
// Sterling line is 2245: "USM00072403  38.9767  -77.4858   88.4 VA STERLING
// 1960 2024  46660"; line 2780 is the mobile ship METEOR.
func TestReadStations(t *testing.T) {
	f, err := os.Open(filepath.Join(validationDir(t), "igra2-station-list.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	st, err := ReadStations(f)
	if err != nil {
		t.Fatal(err)
	}
	if len(st) != 2879 {
		t.Errorf("%d stations, want 2,879", len(st))
	}
	want := Station{ID: "USM00072403", LatitudeDeg: 38.9767, LongitudeDeg: -77.4858, ElevationM: 88.4,
		State: "VA", Name: "STERLING", FirstYear: 1960, LastYear: 2024, NumObs: 46660}
	if got := st["USM00072403"]; got != want {
		t.Errorf("Sterling: %+v", got)
	}
	m := st["ZZV0000DBBH"]
	if !m.Mobile || !math.IsNaN(m.LatitudeDeg) || !math.IsNaN(m.LongitudeDeg) || !math.IsNaN(m.ElevationM) ||
		m.Name != "METEOR" || m.NumObs != 3788 {
		t.Errorf("METEOR: %+v", m)
	}
	if b := st["CFM00064450"]; b.Name != "BRAZZAVILLE /MAYA-MAYA" || b.State != "" || b.LatitudeDeg != -4.25 {
		t.Errorf("Brazzaville: %+v", b)
	}
}

func TestReadStationsErrors(t *testing.T) {
	good := "QQM00000042  45.0000 -120.0000 -999.9    INVENTED PLACE                 1990 2000    123"
	in := good + "\n" + strings.Replace(good, "45.0000", "4x.0000", 1) + "\n\n" + good + "\n" + good[:60] + "\n"
	st, err := ReadStations(iotest.OneByteReader(strings.NewReader(in)))
	if len(st) != 1 || !math.IsNaN(st["QQM00000042"].ElevationM) || st["QQM00000042"].Mobile {
		t.Errorf("stations %+v", st)
	}
	var lines []int
	for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
		var pe *ingest.ParseError
		if !errors.As(e, &pe) || pe.File != "station list" {
			t.Fatalf("error %v is not a ParseError", e)
		}
		lines = append(lines, pe.Line)
		if pe.Line == 4 && !errors.Is(pe, ErrDuplicateStation) {
			t.Errorf("line 4: %v", pe)
		}
	}
	if len(lines) != 3 || lines[0] != 2 || lines[1] != 4 || lines[2] != 5 {
		t.Errorf("error lines %v, want [2 4 5]", lines)
	}
}

// A read error from the source is returned wrapped, not as a ParseError,
// and again on every later call; the complete sounding before it still
// comes out.
func TestReadError(t *testing.T) {
	boom := errors.New("boom")
	rd := NewReader(io.MultiReader(strings.NewReader(hdrB+"\n"+lvSfc+"\n"), iotest.ErrReader(boom)), "f", "")
	if s, err := rd.Next(); err != nil || len(s.Levels) != 1 {
		t.Fatalf("first call: %v", err)
	}
	for i := 1; i < 3; i++ {
		_, err := rd.Next()
		var pe *ingest.ParseError
		if !errors.Is(err, boom) || errors.As(err, &pe) {
			t.Errorf("call %d: %v", i, err)
		}
	}
}
