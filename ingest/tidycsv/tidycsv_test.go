package tidycsv

import (
	"bytes"
	"errors"
	"fmt"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/netcdf"
	"github.com/sondeclim/sondeclim/sounding"
)

// The CSV texts here are invented scaffolding (station XQ01 does not
// exist); the worked example is the one in FORMAT.md.
const example = `station_id,launch_time_utc,pressure_hpa,height_m,temperature_c,dewpoint_c,wind_direction_deg,wind_speed_ms,level_kind
XQ01,2024-07-01T11:04:30Z,1002.1,45,21.4,15.2,200,3.1,surface
XQ01,2024-07-01T11:04:30Z,1000.0,62,21.0,15.0,205,4.0,standard
XQ01,2024-07-01T11:04:30Z,962.3,390,19.6,13.1,220,6.5,significant
XQ01,2024-07-01T23:02:00Z,1003.0,45,17.2,14.0,180,1.0,surface
XQ01,2024-07-01T23:02:00Z,,300,,,190,4.5,wind_only
XQ01,2024-07-01T23:02:00Z,950.4,503,19.9,,230,7.0,significant
`

// result is one Next call: a sounding or an error.
type result struct {
	s   *sounding.Sounding
	err error
}

func readAll(t *testing.T, text string) []result {
	t.Helper()
	r := NewReader(strings.NewReader(text), "in.csv")
	var out []result
	for i := 0; i < 1000; i++ {
		s, err := r.Next()
		if err == io.EOF {
			return out
		}
		out = append(out, result{s, err})
	}
	t.Fatal("reader did not reach io.EOF")
	return nil
}

func TestReadExample(t *testing.T) {
	rs := readAll(t, example)
	if len(rs) != 2 || rs[0].err != nil || rs[1].err != nil {
		t.Fatalf("results %v", rs)
	}
	a, b := rs[0].s, rs[1].s
	if a.StationID != "XQ01" || !a.LaunchTime.Equal(time.Date(2024, 7, 1, 11, 4, 30, 0, time.UTC)) ||
		!a.NominalTime.Equal(time.Date(2024, 7, 1, 11, 0, 0, 0, time.UTC)) || !a.NominalHourInferred ||
		a.Source.Line != 2 || a.Source.Format != Format || len(a.Levels) != 3 {
		t.Errorf("first sounding %+v", a)
	}
	l := a.Levels[0]
	if l.Kind != sounding.KindSurface || l.PressurePa != 100210 || l.HeightM != 45 ||
		math.Abs(l.TemperatureK-294.55) > 1e-9 || math.Abs(l.DewpointDepressionK-6.2) > 1e-9 ||
		l.Status[sounding.VarDewpointDepression] != sounding.Derived || l.WindDirectionDeg != 200 || l.Line != 2 {
		t.Errorf("first level %+v", l)
	}
	if !math.IsNaN(a.LatitudeDeg) || !math.IsNaN(a.ElevationM) || !math.IsNaN(l.RelHumidityPct) {
		t.Errorf("absent optional columns not NaN: %v %v %v", a.LatitudeDeg, a.ElevationM, l.RelHumidityPct)
	}
	w := b.Levels[1]
	if w.Kind != sounding.KindWindOnly || !math.IsNaN(w.PressurePa) || w.Status[sounding.VarPressure] != sounding.Missing ||
		w.WindSpeedMS != 4.5 || w.Line != 6 || b.Levels[2].Status[sounding.VarDewpointDepression] != sounding.Missing {
		t.Errorf("second sounding levels %+v", b.Levels)
	}
}

const hdr = "station_id,launch_time_utc,pressure_hpa,height_m,temperature_c\n"

func TestReadErrors(t *testing.T) {
	cases := []struct {
		name string
		text string
		// want lists, per Next call, "" for a sounding with that many
		// levels written as "n=3", or the expected error fragment.
		want []string
		line []int // line of each error (0 for soundings)
	}{
		{"unknown unit column", "station_id,launch_time_utc,pressure_hpa,height_m,temperature_k\n", []string{"unknown column"}, []int{1}},
		{"missing required", "station_id,launch_time_utc,pressure_hpa,height_m\nA,2024-01-01T00:00:00Z,1000,0\n", []string{"required column missing"}, []int{1}},
		{"duplicate column", "station_id,station_id,launch_time_utc,pressure_hpa,height_m,temperature_c\n", []string{"appears twice"}, []int{1}},
		{"bad number, carry on", hdr +
			"A,2024-01-01T00:00:00Z,1000,0,1\nA,2024-01-01T00:00:00Z,9x0,100,0\n" +
			"B,2024-01-01T00:00:00Z,1000,0,1\n",
			[]string{"9x0", "n=1"}, []int{3, 0}},
		{"NaN is not missing", hdr + "A,2024-01-01T00:00:00Z,NaN,0,1\n", []string{"not a decimal number"}, []int{2}},
		// FORMAT.md: numbers are decimal with optional exponent; what
		// strconv.ParseFloat accepts besides (Go spec of float literals
		// and ParseFloat's documentation) is refused.
		{"only FORMAT.md decimals", hdr +
			"A,2024-01-01T00:00:00Z,1000,0,Inf\nB,2024-01-01T00:00:00Z,0x3E8,0,1\nC,2024-01-01T00:00:00Z,1_000,0,1\n" +
			"D,2024-01-01T00:00:00Z,1000,0,-infinity\nE,2024-01-01T00:00:00Z,1e400,0,1\nF,2024-01-01T00:00:00Z,1000,0,1e\n" +
			"G,2024-01-01T00:00:00Z,0x1p-2,0,1\nH,2024-01-01T00:00:00Z,.,0,1\nI,2024-01-01T00:00:00Z,+-1,0,1\n" +
			"J,2024-01-01T00:00:00Z,+1000.,-.5,-4.5e1\nK,2024-01-01T00:00:00Z,1.0E+3,0,1\n",
			[]string{"\"Inf\" is not", "0x3E8", "1_000", "-infinity", "\"1e400\" is not a finite", "\"1e\"", "0x1p-2", "\".\"", "+-1", "n=1", "n=1"},
			[]int{2, 3, 4, 5, 6, 7, 8, 9, 10, 0, 0}},
		{"bad time", hdr + "A,2024-13-01T00:00:00Z,1000,0,1\nB,2024-01-01T00:00:00Z,1000,0,1\n", []string{"RFC 3339", "n=1"}, []int{2, 0}},
		{"bad time once per sounding", hdr + "A,2024-01-01 00:00,1000,0,1\nA,2024-01-01 00:00,900,900,1\nA,2024-01-01 00:00,800,1900,1\n" +
			"A,2024-01-02 00:00,1000,0,1\nB,2024-01-01T00:00:00Z,1000,0,1\n",
			[]string{"RFC 3339", "RFC 3339", "n=1"}, []int{2, 5, 0}},
		{"empty station once", hdr + ",2024-01-01T00:00:00Z,1000,0,1\n,2024-01-01T00:00:00Z,900,900,1\nB,2024-01-01T00:00:00Z,1000,0,1\n",
			[]string{"empty station_id", "n=1"}, []int{2, 0}},
		{"junk before the header", "exported by a logger\r\nsite 7\r\n" + strings.ReplaceAll(hdr, "\n", "\r\n") +
			"A,2024-01-01T00:00:00Z,1000,0,1\r\nA,2024-01-01T00:00:00Z,9x0,100,0\r\n",
			[]string{"lines 1-2 before the header", "9x0"}, []int{1, 5}},
		{"CR-only line ends", "\ufeff" + strings.ReplaceAll(hdr+"A,2024-01-01T00:00:00Z,1000,0,1\nA,2024-01-01T00:00:00Z,900,900,1\n"+
			"B,2024-01-01T00:00:00Z,1000,0,x\n", "\n", "\r"),
			[]string{"n=2", "\"x\" is not"}, []int{0, 4}},
		{"field count", hdr + "A,2024-01-01T00:00:00Z,1000,0\nA,2024-01-01T00:00:00Z,990,90,1\n", []string{"4 fields"}, []int{2}},
		{"reappears", hdr +
			"A,2024-01-01T00:00:00Z,1000,0,1\nB,2024-01-01T00:00:00Z,1000,0,1\n" +
			"A,2024-01-01T00:00:00Z,900,900,-5\nA,2024-01-01T00:00:00Z,800,1900,-9\nC,2024-01-01T00:00:00Z,1000,0,1\n",
			[]string{"n=1", "n=1", "first seen at line 2", "n=1"}, []int{0, 0, 4, 0}},
		{"same instant other offset", hdr +
			"A,2024-01-01T00:00:00Z,1000,0,1\nA,2024-01-01T01:00:00+01:00,990,90,1\n", []string{"n=2"}, []int{0}},
		{"bad level kind", "station_id,launch_time_utc,pressure_hpa,height_m,temperature_c,level_kind\nA,2024-01-01T00:00:00Z,1000,0,1,ground\n",
			[]string{"level_kind"}, []int{2}},
		{"empty input", "", nil, nil},
		{"header only", hdr, nil, nil},
	}
	for _, c := range cases {
		rs := readAll(t, c.text)
		if len(rs) != len(c.want) {
			t.Errorf("%s: %d results %v, want %d", c.name, len(rs), rs, len(c.want))
			continue
		}
		for i, w := range c.want {
			r := rs[i]
			if strings.HasPrefix(w, "n=") {
				if r.err != nil || fmt.Sprintf("n=%d", len(r.s.Levels)) != w {
					t.Errorf("%s #%d: %v, want a sounding with %s levels", c.name, i, r.err, w)
				}
				continue
			}
			var pe *ingest.ParseError
			if !errors.As(r.err, &pe) || !strings.Contains(r.err.Error(), w) || pe.Line != c.line[i] || pe.File != "in.csv" {
				t.Errorf("%s #%d: err %v, want %q at line %d", c.name, i, r.err, w, c.line[i])
			}
		}
	}
}

func TestSniff(t *testing.T) {
	for _, c := range []struct {
		in   string
		want bool
	}{
		{hdr, true},
		{"\ufeff\"launch_time_utc\",\"station_id\"\r\n", true},
		{"station_id,pressure_hpa\n", false},
		{"CDF\x01", false},
		{"", false},
	} {
		if got := Sniff([]byte(c.in)); got != c.want {
			t.Errorf("Sniff(%q) = %v", c.in, got)
		}
	}
}

// sharedDir returns ../shared/validation/netcdf, or skips the test.
func sharedDir(t testing.TB) string { return realdata.Dir(t, "netcdf") }

func readNetCDF(t testing.TB, name string) *sounding.Sounding {
	raw, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	s, _, err := netcdf.Read(bytes.NewReader(raw), int64(len(raw)), name, netcdf.DefaultMapping())
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestRoundTripRealFlight writes real flights (Lamont 2019-01-01, and a
// Darwin flight with temperatures missing after its first record, from
// ../shared/validation/netcdf) as tidy CSV and reads them back: every
// value must come back equal up to the rounding of the unit conversions
// (Pa↔hPa, K↔°C; 1e-9 relative), missing values must stay missing, and
// the metadata must be identical.
func TestRoundTripRealFlight(t *testing.T) {
	dir := sharedDir(t)
	var in []*sounding.Sounding
	for _, n := range []string{"sgpsondewnpnC1.b1.20190101.053200.cdf", "twpsondewnpnC3.b1.20060119.050300.custom.cdf"} {
		in = append(in, readNetCDF(t, filepath.Join(dir, n)))
	}
	var buf bytes.Buffer
	if err := Write(&buf, in); err != nil {
		t.Fatal(err)
	}
	r := NewReader(&buf, "round.csv")
	for _, want := range in {
		got, err := r.Next()
		if err != nil {
			t.Fatal(err)
		}
		if got.StationID != want.StationID || !got.LaunchTime.Equal(want.LaunchTime) || !got.NominalTime.Equal(want.NominalTime) ||
			got.NominalHourInferred != want.NominalHourInferred || got.LatitudeDeg != want.LatitudeDeg ||
			got.LongitudeDeg != want.LongitudeDeg || got.ElevationM != want.ElevationM || len(got.Levels) != len(want.Levels) {
			t.Fatalf("%s: metadata differs:\n got %+v\nwant %+v", want.StationID, *got, *want)
		}
		for i := range want.Levels {
			g, w := got.Levels[i], want.Levels[i]
			if g.Kind != w.Kind || g.Status != w.Status {
				t.Fatalf("%s level %d: kind/status %v %v, want %v %v", want.StationID, i, g.Kind, g.Status, w.Kind, w.Status)
			}
			gv := []float64{g.ElapsedS, g.PressurePa, g.HeightM, g.TemperatureK, g.DewpointK, g.DewpointDepressionK, g.RelHumidityPct, g.WindDirectionDeg, g.WindSpeedMS}
			wv := []float64{w.ElapsedS, w.PressurePa, w.HeightM, w.TemperatureK, w.DewpointK, w.DewpointDepressionK, w.RelHumidityPct, w.WindDirectionDeg, w.WindSpeedMS}
			for k := range gv {
				if math.IsNaN(wv[k]) != math.IsNaN(gv[k]) || math.Abs(gv[k]-wv[k]) > 1e-9*math.Max(1, math.Abs(wv[k])) {
					t.Fatalf("%s level %d value %d: %v, want %v", want.StationID, i, k, gv[k], wv[k])
				}
			}
		}
	}
	if _, err := r.Next(); err != io.EOF {
		t.Errorf("after the last sounding: %v, want io.EOF", err)
	}
}

// ExampleReader reads the worked example of FORMAT.md.
func ExampleReader() {
	r := NewReader(strings.NewReader(example), "example.csv")
	for {
		s, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			fmt.Println(err)
			continue
		}
		l := s.Levels[0]
		fmt.Printf("%s %s nominal %s: %d levels, surface %.1f hPa %.2f K\n", s.StationID,
			s.LaunchTime.Format(time.RFC3339), s.NominalTime.Format("15:04"), len(s.Levels), l.PressurePa/100, l.TemperatureK)
	}
	// Output:
	// XQ01 2024-07-01T11:04:30Z nominal 11:00: 3 levels, surface 1002.1 hPa 294.55 K
	// XQ01 2024-07-01T23:02:00Z nominal 23:00: 3 levels, surface 1003.0 hPa 290.35 K
}

func FuzzReader(f *testing.F) {
	f.Add(example)
	f.Add(hdr + "A,2024-01-01T00:00:00Z,1000,0,1\nB,2024-01-01T00:00:00Z,1000,0,1\nA,2024-01-01T00:00:00Z,900,900,-5\n")
	f.Add("station_id,launch_time_utc,pressure_hpa,height_m,temperature_c,level_kind,nominal_time_utc\n\"A\",2024-01-01T00:00:00Z,1e3,,,surface,2024-01-01T00:00:00Z\n")
	// A byte-order mark, junk before the header, CR-only line ends, numbers
	// FORMAT.md refuses.
	f.Add("\ufeffnote\r" + strings.ReplaceAll(hdr, "\n", "\r") + "A,2024-01-01T00:00:00Z,0x10,1_0,Inf\rA,2024-01-01 00:00,1,2,3\r")
	f.Fuzz(func(t *testing.T, text string) {
		r := NewReader(strings.NewReader(text), "fuzz.csv")
		for i := 0; ; i++ {
			s, err := r.Next()
			if err == io.EOF {
				return
			}
			if i > len(text)+2 {
				t.Fatal("more results than input lines")
			}
			var pe *ingest.ParseError
			if err != nil && !errors.As(err, &pe) {
				t.Fatalf("error of type %T: %v", err, err)
			}
			if err != nil && len(err.Error()) > 1000 {
				t.Fatalf("message of %d bytes quotes too much input", len(err.Error()))
			}
			if err == nil && (len(s.Levels) == 0 || s.StationID == "") {
				t.Fatalf("empty sounding %+v", s)
			}
		}
	})
}

// BenchmarkRead measures reading a real 4,176-level flight as tidy CSV.
func BenchmarkRead(b *testing.B) {
	s := readNetCDF(b, filepath.Join(sharedDir(b), "sgpsondewnpnC1.b1.20190101.053200.cdf"))
	var buf bytes.Buffer
	if err := Write(&buf, []*sounding.Sounding{s}); err != nil {
		b.Fatal(err)
	}
	text := buf.Bytes()
	b.SetBytes(int64(len(text)))
	for b.Loop() {
		r := NewReader(bytes.NewReader(text), "bench.csv")
		for {
			if _, err := r.Next(); err == io.EOF {
				break
			} else if err != nil {
				b.Fatal(err)
			}
		}
	}
}

// TestHugeTokenQuotedShort: a field of 8 MB in a bad number, an unknown
// column and a bad time gives a message of at most a few hundred bytes
// (ingest.Quote).
func TestHugeTokenQuotedShort(t *testing.T) {
	big := strings.Repeat("9x", 4<<20)
	for name, text := range map[string]string{
		"number": hdr + "A,2024-01-01T00:00:00Z," + big + ",0,1\n",
		"column": "station_id,launch_time_utc," + big + "\n",
		"time":   hdr + "A," + big + ",1000,0,1\n",
	} {
		rs := readAll(t, text)
		if len(rs) != 1 || rs[0].err == nil {
			t.Fatalf("%s: %v", name, rs)
		}
		if msg := rs[0].err.Error(); len(msg) > 400 || !strings.Contains(msg, "(8388608 bytes)") {
			t.Errorf("%s: message of %d bytes: %.300s", name, len(msg), msg)
		}
	}
}
