package bufr

import (
	"bytes"
	"errors"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
)

// The messages in this file are built bit by bit from the layout of
// WMO-No. 306 Vol. I.2 (FM 94: Sections 0–5 of edition 4, Regulation
// 94.6.3 for compression, Table C for the operators); the expected values
// are worked out by hand from those rules and the Table B entries named
// beside them.

type bitWriter struct {
	b []byte
	n int // bits written
}

func (w *bitWriter) put(v uint64, n int) {
	for i := n - 1; i >= 0; i-- {
		if w.n%8 == 0 {
			w.b = append(w.b, 0)
		}
		if v>>uint(i)&1 == 1 {
			w.b[len(w.b)-1] |= 0x80 >> uint(w.n%8)
		}
		w.n++
	}
}

func (w *bitWriter) str(s string, octets int) {
	for i := range octets {
		c := byte(' ')
		if i < len(s) {
			c = s[i]
		}
		w.put(uint64(c), 8)
	}
}

// edition4 wraps descriptors and data bits into a whole edition-4
// message (typical time 2024-03-05 06:07:08).
func edition4(desc []uint16, subsets int, compressed bool, data []byte) []byte {
	s1 := []byte{0, 0, 22, 0, 0, 98, 0, 0, 0, 0, 2, 4, 0, 45, 0, 0x07, 0xe8, 3, 5, 6, 7, 8}
	s3 := []byte{0, 0, 0, 0, byte(subsets >> 8), byte(subsets), 0x80}
	if compressed {
		s3[6] |= 0x40
	}
	for _, d := range desc {
		s3 = append(s3, byte(d>>8), byte(d))
	}
	l3 := len(s3)
	s3[0], s3[1], s3[2] = byte(l3>>16), byte(l3>>8), byte(l3)
	s4 := append([]byte{0, 0, 0, 0}, data...)
	l4 := len(s4)
	s4[0], s4[1], s4[2] = byte(l4>>16), byte(l4>>8), byte(l4)
	total := 8 + len(s1) + len(s3) + len(s4) + 4
	m := []byte{'B', 'U', 'F', 'R', byte(total >> 16), byte(total >> 8), byte(total), 4}
	m = append(m, s1...)
	m = append(m, s3...)
	m = append(m, s4...)
	return append(m, '7', '7', '7', '7')
}

func decodeOne(t *testing.T, msg []byte) []Subset {
	t.Helper()
	m, err := ParseMessage(msg)
	if err != nil {
		t.Fatal(err)
	}
	subs, err := m.Decode()
	if err != nil {
		t.Fatal(err)
	}
	return subs
}

// data lists a subset's data values (MarkValue), strings as strings.
func data(sub Subset) []any {
	var out []any
	for _, v := range sub.Values {
		if v.Mark != MarkValue && v.Mark != MarkStatistic {
			continue
		}
		switch {
		case v.Str >= 0:
			out = append(out, sub.Strings[v.Str])
		case math.IsNaN(v.V):
			out = append(out, nil)
		default:
			out = append(out, v.V)
		}
	}
	return out
}

func expect(t *testing.T, what string, got []any, want ...any) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values %v, want %d %v", what, len(got), got, len(want), want)
	}
	for i := range got {
		if !sameValue(got[i], want[i]) {
			t.Errorf("%s: value %d = %v, want %v", what, i+1, got[i], want[i])
		}
	}
}

// TestCompressed: three subsets (Regulation 94.6.3). Table B: 0 01 001
// 7 bits; 0 01 002 10 bits; 0 01 011 72 bits CCITT IA5; 0 12 101 16 bits,
// scale 2.
func TestCompressed(t *testing.T) {
	var w bitWriter
	w.put(10, 7) // block: R0 = 10, NBINC 0: all subsets 10
	w.put(0, 6)
	w.put(100, 10) // station: R0 100, NBINC 2, increments 0, 1, 3 (all ones: missing)
	w.put(2, 6)
	w.put(0, 2)
	w.put(1, 2)
	w.put(3, 2)
	w.put(0, 72) // call sign: R0 all zero, NBINC 9 octets, then each subset's
	w.put(9, 6)
	w.str("SHIP1", 9)
	w.str("SHIP2", 9)
	for range 9 {
		w.put(0xff, 8) // all ones: missing
	}
	w.put(27315, 16) // temperature: R0 27315 = 273.15 K
	w.put(10, 6)     // NBINC 10
	w.put(0, 10)     // 273.15
	w.put(685, 10)   // 280.00
	w.put(1023, 10)  // missing
	desc := []uint16{FXY(0, 1, 1), FXY(0, 1, 2), FXY(0, 1, 11), FXY(0, 12, 101)}
	subs := decodeOne(t, edition4(desc, 3, true, w.b))
	if len(subs) != 3 {
		t.Fatalf("%d subsets", len(subs))
	}
	expect(t, "subset 1", data(subs[0]), 10.0, 100.0, "SHIP1", 273.15)
	expect(t, "subset 2", data(subs[1]), 10.0, 101.0, "SHIP2", 280.0)
	expect(t, "subset 3", data(subs[2]), 10.0, nil, nil, nil)
}

// TestOperators exercises Table C operators 2 01, 2 02, 2 03, 2 05, 2 06,
// 2 07, 2 08, fixed and delayed replication and delayed repetition on one
// uncompressed subset.
func TestOperators(t *testing.T) {
	var w bitWriter
	desc := []uint16{
		FXY(2, 1, 130), FXY(0, 12, 101), FXY(2, 1, 0), // width 16+2 = 18 bits
		FXY(2, 2, 129), FXY(0, 12, 101), FXY(2, 2, 0), // scale 2+1 = 3
		FXY(2, 3, 12), FXY(0, 12, 101), FXY(2, 3, 255), FXY(0, 12, 101), FXY(2, 3, 0), // new reference −1000 (12 bits, sign bit 1)
		FXY(2, 7, 1), FXY(0, 7, 4), FXY(2, 7, 0), // 0 07 004: scale −1+1 = 0, width 14 + (10+2)/3 = 18, reference 0
		FXY(2, 8, 4), FXY(0, 1, 11), FXY(2, 8, 0), // call sign as 4 characters
		FXY(2, 6, 10), FXY(0, 1, 200), // a local element of 10 bits, read past
		FXY(2, 5, 3),                             // three characters
		FXY(1, 2, 3), FXY(0, 1, 1), FXY(0, 1, 2), // fixed replication ×3
		FXY(1, 1, 0), FXY(0, 31, 1), FXY(0, 1, 1), // delayed replication, factor 2
		FXY(1, 1, 0), FXY(0, 31, 11), FXY(0, 1, 1), // delayed repetition, factor 3
		FXY(0, 12, 101),
	}
	w.put(160072, 18)     // more than 16 bits: 1600.72
	w.put(28795, 16)      // scale 3: 28.795
	w.put(1<<11|1000, 12) // reference −1000
	w.put(28315, 16)      // (28315 − 1000)/100 = 273.15
	w.put(95123, 18)      // 95123 Pa
	w.str("AB12", 4)
	w.put(1023, 10)
	w.str("XYZ", 3)
	for i := range 3 {
		w.put(uint64(10+i), 7)
		w.put(uint64(500+i), 10)
	}
	w.put(2, 8) // 0 31 001: 2
	w.put(1, 7)
	w.put(2, 7)
	w.put(3, 8) // 0 31 011: 3
	w.put(77, 7)
	w.put(30000, 16) // after 2 03 000 the Table B reference is back: 300.00 K
	subs := decodeOne(t, edition4(desc, 1, false, w.b))
	expect(t, "operators", data(subs[0]),
		1600.72, 28.795, 273.15, 95123.0, "AB12", "XYZ",
		10.0, 500.0, 11.0, 501.0, 12.0, 502.0,
		2.0, 1.0, 2.0,
		3.0, 77.0, 77.0, 77.0,
		300.0)
}

// TestBitmaps: 2 22 000 quality information with a data-present bitmap,
// then 2 23 000 substituted values whose 2 23 255 markers take the width
// of the elements the bitmap marks present (Table C).
func TestBitmaps(t *testing.T) {
	build := func(bits int) []byte {
		var w bitWriter
		w.put(27315, 16)
		w.put(28000, 16)
		w.put(29000, 16)
		// 2 22 000, 1 01 003 0 31 031: 0 1 0 (first and third present)
		for _, b := range []uint64{0, 1, 0} {
			w.put(b, 1)
		}
		w.put(98, 16) // 0 01 031 generating centre
		w.put(1, 8)   // 0 01 032 generating application
		w.put(70, 7)  // 0 33 007 ×2
		w.put(50, 7)
		// 2 23 000, bitmap of `bits` bits: 1 0 1 … (second present)
		for i := range bits {
			w.put(uint64(1-i%2), 1)
		}
		w.put(28100, 16) // 2 23 255: substituted value of the second temperature
		return w.b
	}
	mk := func(bits int) []byte {
		d := []uint16{FXY(0, 12, 101), FXY(0, 12, 101), FXY(0, 12, 101),
			FXY(2, 22, 0), FXY(1, 1, 3), FXY(0, 31, 31), FXY(0, 1, 31), FXY(0, 1, 32), FXY(1, 1, 2), FXY(0, 33, 7),
			FXY(2, 23, 0), FXY(1, 1, bits), FXY(0, 31, 31), FXY(2, 23, 255)}
		return edition4(d, 1, false, build(bits))
	}
	subs := decodeOne(t, mk(3))
	var stat []float64
	for _, v := range subs[0].Values {
		if v.Mark == MarkStatistic {
			stat = append(stat, v.V)
			if v.Desc != FXY(0, 12, 101) {
				t.Errorf("substituted value for %s, want 0 12 101", DescriptorString(v.Desc))
			}
		}
	}
	if len(stat) != 1 || math.Abs(stat[0]-281.0) > 1e-9 {
		t.Errorf("substituted values %v, want [281]", stat)
	}
	// A bitmap of 5 bits refers back over more than the 3 elements.
	m, err := ParseMessage(mk(5))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := m.Decode(); !errors.Is(err, ErrBitmap) {
		t.Errorf("5-bit bitmap over 3 elements: %v, want ErrBitmap", err)
	}
}

// TestStream: messages inside a GTS bulletin (SOH, sequence number,
// abbreviated heading, ETX), junk between messages, a truncated message,
// a message with a local descriptor and one with a bitmap that does not
// fit: each bad message is one *ingest.ParseError at its byte offset and
// every good one still comes through.
func TestStream(t *testing.T) {
	good := func(station int) []byte {
		// 3 01 001 (block, station), 3 01 011 (date), 3 01 013 (time)
		// after 0 08 021 = 18 (launch), and one replicated level of
		// pressure, geopotential height and temperature.
		var w bitWriter
		w.put(10, 7)
		w.put(uint64(station), 10)
		w.put(18, 5)
		w.put(2024, 12)
		w.put(3, 4)
		w.put(5, 6)
		w.put(6, 5)
		w.put(7, 6)
		w.put(8, 6)
		w.put(1, 8) // 0 31 001: one level
		w.put(9500, 14)
		w.put(600, 17) // 0 10 009: 17 bits, reference −1000
		w.put(28815, 16)
		d := []uint16{FXY(3, 1, 1), FXY(0, 8, 21), FXY(3, 1, 11), FXY(3, 1, 13),
			FXY(1, 3, 0), FXY(0, 31, 1), FXY(0, 7, 4), FXY(0, 10, 9), FXY(0, 12, 101)}
		return edition4(d, 1, false, w.b)
	}
	local := edition4([]uint16{FXY(0, 1, 1), FXY(0, 1, 200)}, 1, false, []byte{0, 0, 0})
	var in bytes.Buffer
	offsets := map[string]int{}
	add := func(name string, b []byte) {
		offsets[name] = in.Len()
		in.Write(b)
	}
	in.WriteString("\x01\r\r\n001\r\r\nIUSK01 XXXX 050600\r\r\n")
	add("a", good(401))
	in.WriteString("\r\r\n\x03 some junk BUF")
	trunc := good(402)
	add("truncated", trunc[:len(trunc)-10])
	add("local", local)
	add("b", good(403))
	r := NewReader(&in, "in.bufr", "")
	var ids []string
	var errs []string
	for {
		s, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *ingest.ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a ParseError", err)
			}
			errs = append(errs, err.Error())
			continue
		}
		ids = append(ids, s.StationID)
		if !s.LaunchTimeReported || s.LaunchTime.Format("2006-01-02 15:04:05") != "2024-03-05 06:07:08" {
			t.Errorf("launch %v", s.LaunchTime)
		}
		// 0 07 004: 9500 × 10 Pa; 0 10 009 reference −1000 gpm; 0 12 101:
		// 288.15 K.
		l := s.Levels[0]
		if len(s.Levels) != 1 || l.PressurePa != 95000 || l.HeightM != -400 || math.Abs(l.TemperatureK-288.15) > 1e-9 {
			t.Errorf("levels %+v", s.Levels)
		}
	}
	if strings.Join(ids, " ") != "10401 10403" {
		t.Errorf("stations %v, want 10401 10403", ids)
	}
	want := []string{
		"in.bufr@" + itoa(offsets["truncated"]) + ": truncated message",
		"in.bufr@" + itoa(offsets["local"]) + ": descriptor not in the tables: local descriptor 0 01 200",
	}
	if len(errs) != len(want) {
		t.Fatalf("errors %q, want %d", errs, len(want))
	}
	for i := range want {
		if !strings.HasPrefix(errs[i], want[i]) {
			t.Errorf("error %q, want it to start %q", errs[i], want[i])
		}
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// TestSniff: a bare message, one behind a GTS heading, and text that
// mentions BUFR without being a message.
func TestSniff(t *testing.T) {
	msg := edition4([]uint16{FXY(0, 1, 1)}, 1, false, []byte{0x50, 0})
	for _, c := range []struct {
		in   []byte
		want bool
	}{
		{msg, true},
		{append([]byte("\x01\r\r\n123\r\r\nIUSD01 EDZW 020000\r\r\n"), msg...), true},
		{[]byte("station_id,launch_time_utc\nBUFR,2024-01-01T00:00:00Z\n"), false},
		{[]byte("TTAA 52001 72403"), false},
	} {
		if got := Sniff(c.in); got != c.want {
			t.Errorf("Sniff(%q…) = %v, want %v", c.in[:min(len(c.in), 20)], got, c.want)
		}
	}
}

// TestNothingSilent: an input with no message at all, and a message of
// another data category (Table A: 0 = surface data, land) without a
// profile, are each reported, never dropped silently.
func TestNothingSilent(t *testing.T) {
	r := NewReader(strings.NewReader("no messages here"), "x.txt", "")
	if _, err := r.Next(); !errors.Is(err, ingest.ErrUnknownInput) {
		t.Errorf("input without messages: %v, want ErrUnknownInput", err)
	}
	if _, err := r.Next(); err != io.EOF {
		t.Errorf("then %v, want io.EOF", err)
	}
	var w bitWriter
	w.put(10, 7)
	w.put(123, 10)
	msg := edition4([]uint16{FXY(3, 1, 1)}, 1, false, w.b)
	msg[8+10] = 0 // Section 1 octet 11: data category 0
	r = NewReader(bytes.NewReader(msg), "synop.bufr", "")
	if _, err := r.Next(); !errors.Is(err, ErrNotRadiosonde) || !errors.Is(err, ingest.ErrUnsupported) {
		t.Errorf("surface message: %v, want ErrNotRadiosonde", err)
	}
}
