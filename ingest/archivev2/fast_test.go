package archivev2

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// The fast level parser (parseLevelFast) must give exactly what the
// general one (parseLevelGeneral, field by field after
// igra2-data-format.txt) gives: the same level for the lines it takes, and
// it must take none that the general path rejects. The general path is
// checked against the format description and the real files by the
// reader's other tests; these tests check the fast one against it.

// sameLevel reports whether two levels are identical, float bits included
// (NaN compares equal to NaN only through its bits).
func sameLevel(a, b *sounding.Level) bool {
	fa := [...]float64{a.ElapsedS, a.PressurePa, a.HeightM, a.TemperatureK, a.DewpointK, a.DewpointDepressionK,
		a.RelHumidityPct, a.WindDirectionDeg, a.WindSpeedMS, a.LatDisplacementDeg, a.LonDisplacementDeg}
	fb := [...]float64{b.ElapsedS, b.PressurePa, b.HeightM, b.TemperatureK, b.DewpointK, b.DewpointDepressionK,
		b.RelHumidityPct, b.WindDirectionDeg, b.WindSpeedMS, b.LatDisplacementDeg, b.LonDisplacementDeg}
	for i := range fa {
		if math.Float64bits(fa[i]) != math.Float64bits(fb[i]) {
			return false
		}
	}
	return a.Kind == b.Kind && a.Tropopause == b.Tropopause && a.Status == b.Status &&
		a.UpstreamTier == b.UpstreamTier && a.Line == b.Line
}

// compareLine parses line by parseLevel (fast path first) and by the
// general path alone and fails on any difference of level or error. It
// returns whether the fast path took the line.
func compareLine(t *testing.T, where string, line []byte) bool {
	t.Helper()
	var fast, full, gen sounding.Level
	took := parseLevelFast(&fast, line)
	errFull := parseLevel(&full, line)
	errGen := parseLevelGeneral(&gen, line)
	switch {
	case (errFull == nil) != (errGen == nil) || errFull != nil && errFull.Error() != errGen.Error():
		t.Errorf("%s %q: parseLevel error %v, general path %v", where, line, errFull, errGen)
	case errGen == nil && !sameLevel(&full, &gen):
		t.Errorf("%s %q: parseLevel gives\n%+v\ngeneral path\n%+v", where, line, full, gen)
	case took && errGen != nil:
		t.Errorf("%s %q: fast path takes a line the general path rejects (%v)", where, line, errGen)
	case took && !sameLevel(&fast, &gen):
		t.Errorf("%s %q: fast path gives\n%+v\ngeneral path\n%+v", where, line, fast, gen)
	}
	return took
}

// realArchiveTexts returns the text of every real archive-v2 station file
// (PROVENANCE.md), unzipped or inflated, by file name.
func realArchiveTexts(t *testing.T) map[string][]byte {
	t.Helper()
	dir := validationDir(t)
	names, err := filepath.Glob(filepath.Join(dir, "*-data*"))
	if err != nil || len(names) < 6 {
		t.Fatalf("%d station data files in %s (%v), PROVENANCE.md lists 5", len(names), dir, err)
	}
	out := map[string][]byte{}
	for _, path := range names {
		name := filepath.Base(path)
		if strings.HasPrefix(name, "igra2-") {
			continue // the format description, not a station file
		}
		var b []byte
		switch {
		case strings.HasSuffix(name, ".zip"):
			b = sterlingBytes(t)
		case strings.HasSuffix(name, ".gz"):
			f, err := os.Open(path)
			if err != nil {
				t.Fatal(err)
			}
			zr, err := gzip.NewReader(f)
			if err != nil {
				t.Fatal(err)
			}
			b, err = io.ReadAll(zr)
			f.Close()
			if err != nil {
				t.Fatal(err)
			}
		default:
			if b, err = os.ReadFile(path); err != nil {
				t.Fatal(err)
			}
		}
		out[name] = b
	}
	return out
}

// TestFastLevelMatchesGeneral runs both paths on every data record of every
// real archive-v2 station file. Nearly all real records are of the common
// form, so the fast path must take nearly all of them, or it would be
// checked on nothing.
func TestFastLevelMatchesGeneral(t *testing.T) {
	total, fast := 0, 0
	for name, text := range realArchiveTexts(t) {
		sc := bufio.NewScanner(bytes.NewReader(text))
		for n := 1; sc.Scan(); n++ {
			line := bytes.TrimRight(ingest.TrimBOM(sc.Bytes()), "\r")
			if isBlank(line) || line[0] == '#' {
				continue
			}
			total++
			if compareLine(t, name+":"+strconv.Itoa(n), line) {
				fast++
			}
		}
	}
	// 131,306 of Sterling alone (PROVENANCE.md).
	if total < sterlingLevels {
		t.Fatalf("%d data records, want at least Sterling's %d", total, sterlingLevels)
	}
	if fast < total*99/100 {
		t.Errorf("fast path took %d of %d real records, want at least 99 %%", fast, total)
	}
	t.Logf("fast path took %d of %d real records", fast, total)

	// The lines of the format description itself, prose and tables, as
	// records: the general path rejects them, so the fast path must too.
	desc, err := os.ReadFile(filepath.Join(validationDir(t), "igra2-data-format.txt"))
	if err != nil {
		t.Fatal(err)
	}
	for n, line := range bytes.Split(desc, []byte("\n")) {
		compareLine(t, "igra2-data-format.txt:"+strconv.Itoa(n+1), bytes.TrimRight(line, "\r"))
	}
}

// TestFastLevelEdgeCases: invented records in the layout of
// igra2-data-format.txt, each column of two base records replaced by each
// of a set of bytes (digits, signs, blanks, flags, codes' digits, CR, tab,
// NUL and bytes whose nibbles look like digits), whole fields replaced by
// special codes, negative, blank, left-aligned and signed values, and the
// records cut short or carrying CR.
func TestFastLevelEdgeCases(t *testing.T) {
	bases := []string{lvSfc, lvStd,
		"20 -9999  85000   1457   -23B -9999 -9999 -8888 -8888",
		"30   512 -9999  -8888  -8888 -9999 -9999 -9999   315   125",
		"01 -9999 -9999  -9999   -800A  999   100   359   999 ",
		"22  1230  20000  11800  -554  -9999   120   260   312 ",
	}
	subst := []byte("0123456789 -+ABZab#.,\r\n\t\x00:;/\xb5\xf3\x39\x3a\x2f\xff\x0d\x2c\x21")
	fields := []struct{ from, to int }{{4, 8}, {10, 15}, {17, 21}, {23, 27}, {29, 33}, {35, 39}, {41, 45}, {47, 51}}
	values := []string{"-9999", "-8888", "    0", "   -0", "   -1", "-1234", "12345", "1    ", " 1 2 ", "  +12",
		"     ", "-    ", " - 12", "--123", " 12- ", "  1-2", "99999", "00000", "\t  12", "  12\t"}
	n, took := 0, 0
	check := func(line string) {
		n++
		if compareLine(t, "invented", []byte(line)) {
			took++
		}
	}
	for _, base := range bases {
		if len(base) < 51 {
			t.Fatalf("base record %q shorter than 51 columns", base)
		}
		check(base)
		check(base[:51])
		check(base + "\r")
		check(base[:50])
		check(base[:40])
		check("")
		for i := range len(base) {
			for _, c := range subst {
				check(base[:i] + string(c) + base[i+1:])
			}
		}
		for _, f := range fields {
			for _, v := range values {
				w := f.to - f.from + 1
				v = strings.Repeat(" ", max(0, w-len(v))) + v
				v = v[len(v)-w:]
				check(base[:f.from-1] + v + base[f.to:])
			}
		}
	}
	// Six-character pressures, the widest field.
	for _, p := range []string{"101325", "-99999", " -9999", "     1", "-    1", "1     ", "+10132", "000000", "099999", "1 1234", "9-1234", "11-234", "A12345", " 12345", "-12345"} {
		check(lvSfc[:9] + p + lvSfc[15:])
	}
	if took == 0 || took == n {
		t.Errorf("fast path took %d of %d invented records; the cases should exercise both paths", took, n)
	}
}

// fixedField reads the five-character field ending at the last of the
// eight bytes b through fixedRun and fixedValue.
func fixedField(b []byte) (int, bool) {
	u := binary.LittleEndian.Uint64(b)
	x, neg, bad, nd := fixedRun(u, field5)
	return fixedValue(x, neg), bad|nd&(0x80*ones) == 0
}

// TestFixedFieldMatchesAtoi: wherever fixedField reads a field, atoi
// (itself checked against strconv.Atoi by FuzzAtoi) reads the same value;
// and it reads every right-aligned signed or unsigned value up to the
// field's five characters, whatever the three bytes before the field.
func TestFixedFieldMatchesAtoi(t *testing.T) {
	const w = 5
	for _, v := range []int{0, 1, 7, 9, 10, 42, 99, 100, 999, 1000, 8888, 9999, 10000, 12345, 99999} {
		for _, neg := range []bool{false, true} {
			s := strconv.Itoa(v)
			if neg {
				s = "-" + s
			}
			if len(s) > w {
				continue
			}
			for _, pre := range []string{"XYZ", "   ", "123", "-AB"} {
				word := pre + strings.Repeat(" ", w-len(s)) + s
				got, ok := fixedField([]byte(word))
				want := v
				if neg {
					want = -v
				}
				if !ok || got != want {
					t.Errorf("fixedField(%q) = %d, %v; want %d", word, got, ok, want)
				}
			}
		}
	}
	// Forms atoi may read but fixedRun must refuse (the general path's).
	for _, word := range []string{"   12   ", "   +  12", "      1 ", "XYZ1 2 3", "   - 123", "        ", "   --123"} {
		if _, ok := fixedField([]byte(word)); ok {
			t.Errorf("fixedField(%q) takes a field that is not spaces, an optional '-' and digits", word)
		}
	}
}

// FuzzFastLevel: for any record, the fast path takes only records the
// general path reads, and gives the same level.
func FuzzFastLevel(f *testing.F) {
	for _, s := range []string{lvSfc, lvStd, lvSfc[:50], "20 -9999  85000   1457   -23B -9999 -9999 -8888 -8888",
		"30   512 -9999  -8888  -8888 -9999 -9999 -9999   315   125"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, line []byte) {
		compareLine(t, "fuzz", line)
	})
}

// FuzzFixedField: where fixedField reads eight bytes, atoi reads the same
// value from the field's five characters.
func FuzzFixedField(f *testing.F) {
	f.Add([]byte("21  -123"))
	f.Add([]byte("1 101325"))
	f.Add([]byte("AB -9999"))
	f.Fuzz(func(t *testing.T, b []byte) {
		if len(b) < 8 {
			return
		}
		b = b[:8]
		got, ok := fixedField(b)
		want, wok := atoi(b[3:])
		if ok && (!wok || got != want) {
			t.Errorf("fixedField(%q) = %d; atoi gives %d, %v", b, got, want, wok)
		}
	})
}

// readAllWith reads text with the fast or the general level parser.
func readAllWith(text []byte, file string, general bool) ([]*sounding.Sounding, []error, error) {
	return readEach(NewReader(bytes.NewReader(text), file, ""), len(text), general)
}

// readEach reads rd, of n bytes of input, to its end.
func readEach(rd *Reader, n int, general bool) ([]*sounding.Sounding, []error, error) {
	rd.general = general
	var ss []*sounding.Sounding
	var errs []error
	for i := 0; ; i++ {
		if i > 10*n+10 {
			return nil, nil, errors.New("reader does not terminate")
		}
		s, err := rd.Next()
		switch {
		case err == io.EOF:
			return ss, errs, nil
		case err != nil:
			var pe *ingest.ParseError
			if !errors.As(err, &pe) {
				return nil, nil, err
			}
			errs = append(errs, err)
		default:
			ss = append(ss, s)
		}
	}
}

// sameReading fails unless two readings give the same soundings (levels
// compared bit by bit through the codec, source positions included) and
// the same errors (file, line and message): the fast and the general
// level parser, and reading the text as a stream and from memory
// (NewReaderBytes, which must not change the text).
func sameReading(t *testing.T, where string, text []byte) {
	t.Helper()
	fs, fe, err1 := readAllWith(text, where, false)
	gs, ge, err2 := readAllWith(text, where, true)
	if err1 != nil || err2 != nil {
		t.Fatalf("%s: %v / %v", where, err1, err2)
	}
	kept := bytes.Clone(text)
	ms, me, err3 := readEach(NewReaderBytes(text, where, ""), len(text), false)
	if err3 != nil {
		t.Fatalf("%s: from memory: %v", where, err3)
	}
	if !bytes.Equal(text, kept) {
		t.Fatalf("%s: reading from memory changed the text", where)
	}
	// From memory into a level arena, as the engine reads, the arena
	// filled with levels of other soundings first (the reader must
	// overwrite every field of a level it keeps).
	var arena sounding.LevelArena
	old := arena.Take(64)[:64]
	for i := range old {
		old[i] = sounding.Level{Kind: 9, ElapsedS: -1, Status: [sounding.NumVars]sounding.Status{7, 7, 7, 7, 7, 7, 7, 7},
			UpstreamTier: [sounding.NumVars]byte{'Z', 'Z', 'Z', 'Z', 'Z', 'Z', 'Z', 'Z'}, Line: -5}
	}
	arena.Trim(old)
	arena.Reset()
	ard := NewReaderBytes(text, where, "")
	ard.UseLevelArena(&arena)
	as, ae, err4 := readEach(ard, len(text), false)
	if err4 != nil {
		t.Fatalf("%s: into an arena: %v", where, err4)
	}
	compareReadings(t, where+", stream and memory", fs, fe, ms, me)
	compareReadings(t, where+", memory and arena", ms, me, as, ae)
	compareReadings(t, where+", fast and general", fs, fe, gs, ge)
}

// compareReadings fails unless two readings give the same soundings and
// errors.
func compareReadings(t *testing.T, where string, fs []*sounding.Sounding, fe []error, gs []*sounding.Sounding, ge []error) {
	t.Helper()
	if len(fs) != len(gs) || len(fe) != len(ge) {
		t.Fatalf("%s: %d soundings %d errors, and %d and %d", where, len(fs), len(fe), len(gs), len(ge))
	}
	for i := range fe {
		a, b := fe[i].(*ingest.ParseError), ge[i].(*ingest.ParseError)
		if a.File != b.File || a.Member != b.Member || a.Line != b.Line || a.Error() != b.Error() {
			t.Errorf("%s: error %d: %v, and %v", where, i, fe[i], ge[i])
		}
	}
	for i := range fs {
		a := sounding.AppendBinary(nil, fs[i], true)
		b := sounding.AppendBinary(nil, gs[i], true)
		if !bytes.Equal(a, b) {
			t.Errorf("%s: sounding %d (line %d) differs", where, i, fs[i].Source.Line)
		}
		for k := range fs[i].Levels {
			if !sameLevel(&fs[i].Levels[k], &gs[i].Levels[k]) {
				t.Errorf("%s: sounding %d level %d differs", where, i, k)
				break
			}
		}
	}
}

// TestFastReaderMatchesGeneral reads every real archive-v2 file, and the
// Sterling file with records damaged every 97th line, with both parsers.
func TestFastReaderMatchesGeneral(t *testing.T) {
	texts := realArchiveTexts(t)
	for name, text := range texts {
		sameReading(t, name, text)
	}
	st := bytes.Clone(sterlingBytes(t))
	lines := bytes.SplitAfter(st, []byte("\n"))
	damage := []string{"x", " ", "-", "+", "\r", "A", "9"}
	for i := 0; i < len(lines); i += 97 {
		l := lines[i]
		if len(l) > 52 && l[0] != '#' {
			col := (i / 97) % 52
			l[col] = damage[(i/97)%len(damage)][0]
		}
	}
	sameReading(t, "sterling-damaged", bytes.Join(lines, nil))
}

// TestReaderBytesLines: lines around the reader's limit of maxLine bytes
// (one shorter, as long as and one longer than the buffer NewReader reads
// through), with and without a last line feed, blank lines, byte-order
// marks and text before the first header read the same from memory as
// from a stream. (Invented input; the stream reader is the reference.)
func TestReaderBytesLines(t *testing.T) {
	hdr1 := strings.Replace(hdrA, "   2 ", "   1 ", 1)
	for _, n := range []int{maxLine - 2, maxLine - 1, maxLine, maxLine + 1} {
		for _, tail := range []string{"", "\n"} {
			pad := strings.Repeat(" ", n-len(lvSfc))
			ins := []string{
				hdr1 + "\n" + lvSfc + pad + tail,
				hdr1 + "\n" + lvSfc + pad + "\n" + hdr1 + "\n" + lvStd + tail,
				hdr1 + strings.Repeat(" ", n-len(hdr1)) + "\n" + lvSfc + "\n" + hdr1 + "\n" + lvStd + tail,
				"note\n\n" + ingest.BOM + hdrA + "\n" + lvSfc + "\n  \n" + ingest.BOM + lvStd + tail,
				strings.Repeat("x", n) + tail + hdr1 + "\n" + lvSfc + tail,
			}
			for i, in := range ins {
				sameReading(t, fmt.Sprintf("line of %d bytes, input %d, end %q", n, i, tail), []byte(in))
			}
		}
	}
}

// TestMemLevelsEdges: the in-memory loop of records (memLevels) beside the
// lines it leaves to the general loop: records one character short or
// long, a line feed in column 52 or 51, a last record with and without a
// line feed, blank lines and a bad record among good ones, and more or
// fewer records than the header declares. Each input is read as a stream
// and from memory, with the fast and the general parser (sameReading).
// (Invented input in the layout of igra2-data-format.txt.)
func TestMemLevelsEdges(t *testing.T) {
	hdr := func(n int) string { return strings.Replace(hdrA, "   2 ", fmt.Sprintf("%4d ", n), 1) }
	rec := lvSfc + "\n"
	ins := []string{
		hdr(3) + "\n" + rec + rec + rec,
		hdr(3) + "\n" + rec + rec + lvSfc,
		hdr(3) + "\n" + rec + lvSfc[:51] + "\n" + rec,
		hdr(3) + "\n" + rec + lvSfc + " \n" + rec,
		hdr(3) + "\n" + rec + lvSfc[:50] + "\n\n" + rec,
		hdr(3) + "\n" + rec + lvSfc[:51] + "\n" + rec[:2],
		hdr(3) + "\n" + rec + "\n   \n" + rec + rec,
		hdr(3) + "\n" + rec + strings.Replace(rec, "B", "C", 1) + rec,
		hdr(2) + "\n" + rec + rec + rec,
		hdr(4) + "\n" + rec + rec + rec,
		hdr(4) + "\n" + rec + rec + rec + hdr(1) + "\n" + rec,
		hdr(1) + "\n" + rec + hdr(1) + "\n" + rec + hdr(0) + "\n" + hdr(1) + "\n" + rec,
		hdr(2) + "\n" + rec + "#" + rec[1:] + rec,
		hdr(2) + "\n" + rec + ingest.BOM + rec,
	}
	for i, in := range ins {
		sameReading(t, fmt.Sprintf("input %d", i), []byte(in))
	}
	// And each record cut by a line feed at every column.
	base := []byte(hdr(3) + "\n" + rec + rec + rec)
	for c := len(hdr(3)) + 1; c < len(base); c++ {
		in := bytes.Clone(base)
		in[c] = '\n'
		sameReading(t, fmt.Sprintf("line feed at byte %d", c), in)
	}
}
