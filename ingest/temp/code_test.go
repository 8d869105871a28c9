package temp

import (
	"errors"
	"io"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
)

// Code tables 3931 and 0777; examples from METHODS §7.1 (confirmed there).
func TestDecodeTemp(t *testing.T) {
	for _, c := range []struct {
		g       string
		tC, dpd float64
	}{
		{"21256", 21.2, 6},    // 212 = +21.2 °C (even tenth); DD 56 → 6 K
		{"58350", -58.3, 5.0}, // 583 = −58.3 °C (odd tenth); DD 50 → 5.0 K
		{"00000", 0, 0},       // 0.0 °C, DPD 0
		{"01199", -1.1, 49},   // DD 99 → 49 K
		{"20453", 20.4, -1},   // DD 51–55 unused → NaN
		{"///15", -1, 1.5},    // temperature missing
		{"20///", -1, -1},     // partial temperature → missing
	} {
		tC, dpd, ok := decodeTemp(c.g)
		wt, wd := c.tC, c.dpd
		if wt == -1 {
			wt = math.NaN()
		}
		if wd == -1 {
			wd = math.NaN()
		}
		if !ok || !same(tC, wt) || !same(dpd, wd) {
			t.Errorf("decodeTemp(%q) = %v, %v, %v; want %v, %v", c.g, tC, dpd, ok, wt, wd)
		}
	}
	if _, _, ok := decodeTemp("2A456"); ok {
		t.Error("letters must be rejected")
	}
}

func same(a, b float64) bool {
	return a == b || math.Abs(a-b) < 1e-9 || (math.IsNaN(a) && math.IsNaN(b))
}

// Wind dddff with 500 added to the speed for the 5°: METHODS §7.1 examples.
func TestDecodeWind(t *testing.T) {
	for _, c := range []struct {
		g        string
		dir, spd float64
	}{
		{"27620", 275, 120}, // METHODS §7.1
		{"11112", 110, 112}, // METHODS §7.1
		{"11612", 115, 112}, // METHODS §7.1
		{"00000", 0, 0},     // calm
		{"99005", -1, 5},    // variable: direction NaN
		{"37010", -1, -1},   // 370° is not a direction
		{"/////", -1, -1},
	} {
		d, f, ok := decodeWind(c.g)
		wd, wf := c.dir, c.spd
		if wd == -1 {
			wd = math.NaN()
		}
		if wf == -1 {
			wf = math.NaN()
		}
		if !ok || !same(d, wd) || !same(f, wf) {
			t.Errorf("decodeWind(%q) = %v, %v; want %v, %v", c.g, d, f, wd, wf)
		}
	}
}

// Standard-level heights: rules of METHODS §7.1 (850 +1000 m; 700 +3000
// below 500 else +2000; 500–300 dam; 250–100 dam +1000 dam; negative
// 1000 hPa height coded 500 + |h|).
func TestStandardHeight(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		k    int
		hhh  int
		want float64
	}{
		{0, 178, 178}, {0, 512, -12}, {2, 563, 1563}, {3, 152, 3152}, {3, 980, 2980},
		{4, 575, 5750}, {7, 56, 10560}, {10, 627, 16270},
	} {
		if got := stdA[c.k].height(c.hhh, nan, nan); got != c.want {
			t.Errorf("%v hPa hhh %03d: %v, want %v", stdA[c.k].hPa, c.hhh, got, c.want)
		}
	}
}

func TestHeadingRank(t *testing.T) {
	for _, c := range []struct {
		line string
		rank int
		ok   bool
	}{
		{"USUS50 KWBC 130000", 0, true},
		{"USUS50 KWBC 130000 RRA", 1, true},
		{"USUS50 KWBC 130000 RRB", 2, true},
		{"USUS50 KWBC 130000 CCA", 201, true},
		{"TTAA 63001 72201 99014", 0, false},
	} {
		r, ok := headingRank(c.line)
		if r != c.rank || ok != c.ok {
			t.Errorf("headingRank(%q) = %d, %v", c.line, r, ok)
		}
	}
}

// Invented bulletins (unit scaffolding): a later correction replaces the
// earlier report even when it comes first in the stream; NIL reports are
// dropped; the same report twice counts once.
func TestCorrections(t *testing.T) {
	in := "\x01\r\r\n001 \r\r\nUSXX01 ZZZZ 130000 RRB\r\r\nTTAA 63001 99901 99950 20056 18010=\r\r\n\x03" +
		"\x01\r\r\n002 \r\r\nUSXX01 ZZZZ 130000\r\r\nTTAA 63001 99901 99950 10056 18010=\r\r\nTTAA 99902 NIL=\r\r\n\x03" +
		"\x01\r\r\n003 \r\r\nUSXX01 ZZZZ 130000 RRA\r\r\nTTAA 63001 99901 99950 15056 18010=\r\r\n" +
		"TTAA 63001 99903 99950 10056 18010=\r\r\nTTAA 63001 99903 99950 10056 18010=\r\r\n\x03"
	ss, errs := readAll(t, NewReader(strings.NewReader(in), "x", Options{Reference: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC)}))
	if len(errs) != 0 || len(ss) != 2 {
		t.Fatalf("%d soundings %v", len(ss), errs)
	}
	if ss[0].StationID != "99901" || ss[1].StationID != "99903" {
		t.Fatalf("stations %s %s", ss[0].StationID, ss[1].StationID)
	}
	if got := ss[0].Levels[0].TemperatureK - celsiusK; math.Abs(got-20.0) > 1e-9 {
		t.Errorf("RRB should win: T = %v, want 20.0", got)
	}
	if len(ss[1].Levels) != 1 {
		t.Errorf("duplicate report gave %d levels", len(ss[1].Levels))
	}
}

// A malformed report gives a ParseError with its line; the next call goes
// on with the rest.
func TestParseErrorContinues(t *testing.T) {
	in := "TTAA 63001 99901 99950 20056 18010=\nTTAA 63001 99902 99950\nXYZ12 18010=\nTTAA 63001 99903 99950 20056 18010="
	rd := NewReader(strings.NewReader(in), "bad.txt", Options{Reference: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC)})
	var ids []string
	var pe *ingest.ParseError
	for {
		s, err := rd.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			if !errors.As(err, &pe) {
				t.Fatalf("not a ParseError: %v", err)
			}
			continue
		}
		ids = append(ids, s.StationID)
	}
	if pe == nil || pe.Line != 3 || !errors.Is(pe, ingest.ErrBadLevel) {
		t.Errorf("parse error %v, want line 3 ErrBadLevel", pe)
	}
	if strings.Join(ids, ",") != "99901,99903" {
		t.Errorf("stations %v", ids)
	}
}

func TestNoDate(t *testing.T) {
	rd := NewReader(strings.NewReader("TTAA 63001 99901 99950 20056 18010="), "nodate.txt", Options{})
	_, err := rd.Next()
	if !errors.Is(err, ErrNoDate) {
		t.Fatalf("err %v, want ErrNoDate", err)
	}
	if _, err := rd.Next(); err != io.EOF {
		t.Fatalf("then %v, want EOF", err)
	}
}

func TestStationLookup(t *testing.T) {
	opts := Options{
		Reference: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC),
		Station: func(id string) (Station, bool) {
			return Station{Name: "Invented Field", LatitudeDeg: 1, LongitudeDeg: 2, ElevationM: 15}, id == "99901"
		},
	}
	ss, _ := readAll(t, NewReader(strings.NewReader("TTAA 63001 99901 99950 20056 18010="), "x", opts))
	if len(ss) != 1 || ss[0].ElevationM != 15 || ss[0].Levels[0].HeightM != 15 || ss[0].StationName != "Invented Field" {
		t.Fatalf("lookup not applied: %+v", ss)
	}
}

func TestSniff(t *testing.T) {
	if !Sniff([]byte("\x01\r\r\n221 \r\r\nUSUS50 KWBC 130000\r\r\nTTAA 63001 72572")) {
		t.Error("bulletin not recognised")
	}
	if Sniff([]byte("#USM00072403 2016 01 01 00 2315   93 ncdc-gts")) {
		t.Error("other format recognised as TEMP")
	}
}
