package bufr

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/sounding"
)

// sampleFiles are the real BUFR files of ../shared/validation/bufr
// (PROVENANCE.md there says where each comes from).
var sampleFiles = []string{
	"IUSK73_AMMC_040000.bufr", "IUSK73_AMMC_182300.bufr", "eccodes-python-temp.bufr",
	"pdbufr-temp-420.bufr", "pdbufr-temp_hires.bufr", "uegabe.bufr",
}

// readAll reads every sounding of b, failing the test on any rejection.
func readAll(t *testing.T, name string, b []byte) []*sounding.Sounding {
	t.Helper()
	r := NewReader(bytes.NewReader(b), name, "")
	var out []*sounding.Sounding
	for {
		s, err := r.Next()
		if err == io.EOF {
			return out
		}
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		out = append(out, s)
	}
}

// flatValues lists a subset's values as a general-purpose decoder lists
// them: data elements, associated fields and the values of 2 2x 255
// markers in data order, structure markers left out.
func flatValues(sub *Subset) []any {
	var out []any
	for _, v := range sub.Values {
		switch v.Mark {
		case MarkIteration, MarkOperator:
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

// parseCmp reads a .values.cmp file: "index value" per line, value None,
// a number or a quoted string.
func parseCmp(t *testing.T, b []byte) []any {
	var out []any
	sc := bufio.NewScanner(bytes.NewReader(b))
	for sc.Scan() {
		_, v, ok := strings.Cut(sc.Text(), " ")
		if !ok {
			continue
		}
		if n := len(v); n > 1 && v[n-1] == 'L' && v[0] != '\'' {
			v = v[:n-1] // an integer printed with Python 2's long suffix
		}
		switch {
		case v == "None":
			out = append(out, nil)
		case strings.HasPrefix(v, "'"):
			s := strings.TrimSuffix(strings.TrimPrefix(v, "'"), "'")
			if strings.HasPrefix(s, `\xff`) {
				out = append(out, nil) // all-ones characters: missing
			} else {
				out = append(out, strings.TrimRight(s, " "))
			}
		default:
			x, err := strconv.ParseFloat(v, 64)
			if err != nil {
				t.Fatalf("values.cmp: %q: %v", v, err)
			}
			out = append(out, x)
		}
	}
	return out
}

// TestDecodedValuesReference compares every decoded value, in order, with
// the decoded output that the test suite of the general-purpose decoder
// the files come from keeps beside them (.values.cmp; source:
// ../shared/validation/bufr/PROVENANCE.md). It checks the whole
// expansion: sequences, replication factors, associated fields (2 04 004
// in uegabe.bufr), character data (2 05 060 in the IUSK73 file).
func TestDecodedValuesReference(t *testing.T) {
	for _, name := range []string{"IUSK73_AMMC_182300", "uegabe"} {
		b := realdata.Text(t, "bufr", name+".bufr")
		want := parseCmp(t, realdata.Text(t, "bufr", name+".values.cmp"))
		m, err := ParseMessage(b)
		if err != nil {
			t.Fatal(err)
		}
		subs, err := m.Decode()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got := flatValues(&subs[0])
		if len(got) != len(want) {
			t.Errorf("%s: %d values, the reference output has %d", name, len(got), len(want))
		}
		bad := 0
		for i := 0; i < len(got) && i < len(want); i++ {
			if !sameValue(got[i], want[i]) {
				if bad++; bad <= 5 {
					t.Errorf("%s: value %d = %v, reference %v", name, i+1, got[i], want[i])
				}
			}
		}
		t.Logf("%s: %d values compared with %s.values.cmp, %d differ", name, min(len(got), len(want)), name, bad)
	}
}

func sameValue(a, b any) bool {
	switch x := a.(type) {
	case nil:
		return b == nil
	case string:
		y, ok := b.(string)
		return ok && x == y
	case float64:
		y, ok := b.(float64)
		return ok && math.Abs(x-y) <= 1e-9*math.Max(1, math.Abs(y))
	}
	return false
}

// TestSectionsReference checks Section 0, 1 and 3 fields against the
// .json decoded output beside the file (same source as above): its first
// arrays are [indicator, total length, edition] and Section 1's fields.
func TestSectionsReference(t *testing.T) {
	b := realdata.Text(t, "bufr", "uegabe.bufr")
	m, err := ParseMessage(b)
	if err != nil {
		t.Fatal(err)
	}
	// From uegabe.json: ["BUFR", 494, 4], [22, 0, 78, 0, 1, true,
	// "0000000", 2, 4, 213, 13, 0, 2015, 7, 12, 5, 0, 0], and Section 3
	// [22, …, 1, true, false, …, [204004, 31021, 309052, 204000, 101000,
	// 31001, 205008]].
	got := fmt.Sprintln(m.Length, m.Edition, m.MasterTable, m.Centre, m.SubCentre, m.UpdateSequence,
		m.Category, m.SubCategory, m.LocalSubCategory, m.MasterVersion, m.LocalVersion,
		m.Typical.Year(), int(m.Typical.Month()), m.Typical.Day(), m.Typical.Hour(), m.Typical.Minute(), m.Typical.Second(), m.Subsets, m.Observed, m.Compressed)
	got = strings.TrimSpace(got)
	want := "494 4 0 78 0 1 2 4 213 13 0 2015 7 12 5 0 0 1 true false"
	if got != want {
		t.Errorf("sections: got %s, want %s", got, want)
	}
	var ds []string
	for _, d := range m.Descriptors {
		ds = append(ds, DescriptorString(d))
	}
	if s := strings.Join(ds, ","); s != "2 04 004,0 31 021,3 09 052,2 04 000,1 01 000,0 31 001,2 05 008" {
		t.Errorf("descriptors %s", s)
	}
}

// refLevel and refMessage hold what the reference decoder prints.
type refMessage struct {
	fields map[string][]float64
}

// ecFilter is the rules file for the reference decoder's bufr_filter: one
// "@MSG" line per message, then "@KEY=values" for every key defined.
func ecFilter() string {
	var b strings.Builder
	b.WriteString("set unpack=1;\nprint \"@MSG\";\n")
	for _, k := range []struct{ tag, key, f string }{
		{"BLOCK", "blockNumber", ""}, {"STN", "stationNumber", ""},
		{"LAT", "latitude", "%.6f"}, {"LON", "longitude", "%.6f"},
		{"ELEV", "heightOfStationGroundAboveMeanSeaLevel", ""}, {"ELEV1", "heightOfStation", ""},
		{"Y", "year", ""}, {"MO", "month", ""}, {"D", "day", ""}, {"H", "hour", ""}, {"MI", "minute", ""}, {"S", "second", ""},
		{"P", "pressure", ""}, {"Z", "nonCoordinateGeopotentialHeight", ""}, {"G", "nonCoordinateGeopotential", ""},
		{"T", "airTemperature", ""}, {"TD", "dewpointTemperature", ""},
		{"WD", "windDirection", ""}, {"WS", "windSpeed", ""}, {"E", "timePeriod", ""},
		{"DLAT", "latitudeDisplacement", "%.6f"}, {"DLON", "longitudeDisplacement", "%.6f"},
		{"SIG", "extendedVerticalSoundingSignificance", ""}, {"SIG7", "verticalSoundingSignificance", ""},
	} {
		fmt.Fprintf(&b, "if (defined(%s)) { print \"@%s=[%s%s]\"; }\n", k.key, k.tag, k.key, k.f)
	}
	return b.String()
}

// ecDecode runs the reference decoder on a file, or skips the test when
// it is not installed.
func ecDecode(t *testing.T, path string) []refMessage {
	t.Helper()
	exe, err := exec.LookPath("bufr_filter")
	if err != nil {
		t.Skip("reference decoder absent: Debian's libeccodes-tools (bufr_filter) is not installed; .ci/run installs it")
	}
	rules := filepath.Join(t.TempDir(), "rules")
	if err := os.WriteFile(rules, []byte(ecFilter()), 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(exe, rules, path).Output()
	if err != nil {
		t.Fatalf("bufr_filter %s: %v", path, err)
	}
	var msgs []refMessage
	var cur *refMessage
	tag := ""
	for _, line := range strings.Split(string(out), "\n") {
		line = strings.TrimSpace(line)
		if line == "@MSG" {
			msgs = append(msgs, refMessage{fields: map[string][]float64{}})
			cur = &msgs[len(msgs)-1]
			continue
		}
		if cur == nil || line == "" {
			continue
		}
		if strings.HasPrefix(line, "@") {
			var rest string
			tag, rest, _ = strings.Cut(line[1:], "=")
			line = rest
		}
		for _, f := range strings.Fields(line) {
			x, err := strconv.ParseFloat(f, 64)
			if err != nil {
				t.Fatalf("bufr_filter output %q: %v", f, err)
			}
			// The reference decoder's missing values: −1e100 for
			// floating-point keys, 2147483647 for integer ones.
			if math.Abs(x) >= 1e99 || x == 2147483647 {
				x = math.NaN()
			}
			cur.fields[tag] = append(cur.fields[tag], x)
		}
	}
	return msgs
}

func (m refMessage) first(tag string) float64 {
	if v := m.fields[tag]; len(v) > 0 {
		return v[0]
	}
	return math.NaN()
}

func (m refMessage) at(tag string, i int) float64 {
	if v := m.fields[tag]; i < len(v) {
		return v[i]
	}
	return math.NaN()
}

// TestAgainstReferenceDecoder decodes every sample file with this package
// and with Debian's general-purpose ecCodes tools (bufr_filter; source of
// every expected value here) and compares each sounding's station,
// position, elevation and time, and each level's pressure, height,
// temperature, dewpoint, wind, time since launch, latitude and longitude
// displacement and kind, at the data's
// resolution (half a unit of the Table B scale; floating-point printing
// aside the two must agree exactly).
func TestAgainstReferenceDecoder(t *testing.T) {
	dir := realdata.Dir(t, "bufr")
	displaced := map[string]int{}
	for _, name := range sampleFiles {
		displaced[name] = compareWithReference(t, filepath.Join(dir, name))
	}
	// The 2,743-level flight (3 09 052) gives a position for every level
	// (bufr_dump -p of the file lists latitudeDisplacement and
	// longitudeDisplacement for each): the comparison above must have
	// seen them, not only missing values on both sides.
	if n := displaced["IUSK73_AMMC_040000.bufr"]; n < 2*2700 {
		t.Errorf("IUSK73_AMMC_040000.bufr: %d latitude/longitude displacements compared, want one pair per level", n)
	}
}

// TestCompressedAgainstReferenceDecoder has the reference decoder
// re-encode sample messages with compression (its bufr_dump -Efilter
// writes the rules that encode a message; compressedData is switched to
// 1) and compares the decoding of those copies as above: real radiosonde
// layouts with delayed replication, associated fields (uegabe) and 2 07
// (the high-resolution file) through Regulation 94.6.3.
func TestCompressedAgainstReferenceDecoder(t *testing.T) {
	dir := realdata.Dir(t, "bufr")
	dump, err1 := exec.LookPath("bufr_dump")
	filter, err2 := exec.LookPath("bufr_filter")
	if err1 != nil || err2 != nil {
		t.Skip("reference decoder absent: Debian's libeccodes-tools (bufr_dump, bufr_filter) is not installed; .ci/run installs it")
	}
	tmp := t.TempDir()
	for _, name := range []string{"IUSK73_AMMC_182300.bufr", "uegabe.bufr", "pdbufr-temp_hires.bufr"} {
		src := filepath.Join(dir, name)
		rules, err := exec.Command(dump, "-Efilter", src).Output()
		if err != nil {
			t.Fatalf("bufr_dump -Efilter %s: %v", name, err)
		}
		if !bytes.Contains(rules, []byte("set compressedData=0;")) {
			t.Fatalf("%s: the encoding rules do not set compressedData", name)
		}
		rules = bytes.Replace(rules, []byte("set compressedData=0;"), []byte("set compressedData=1;"), 1)
		rf := filepath.Join(tmp, name+".rules")
		out := filepath.Join(tmp, "compressed-"+name)
		if err := os.WriteFile(rf, rules, 0o644); err != nil {
			t.Fatal(err)
		}
		if b, err := exec.Command(filter, "-o", out, rf, src).CombinedOutput(); err != nil {
			t.Fatalf("bufr_filter %s: %v\n%s", name, err, b)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		m, err := ParseMessage(b)
		if err != nil || !m.Compressed {
			t.Fatalf("%s: the copy is not a compressed message (%v)", name, err)
		}
		compareWithReference(t, out)
	}
}

// compareWithReference compares the soundings this package reads from
// path with the reference decoder's values of the same file and returns
// how many latitude and longitude displacements both decoders reported.
func compareWithReference(t *testing.T, path string) (displaced int) {
	t.Helper()
	name := filepath.Base(path)
	{
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		ref := ecDecode(t, path)
		got := readAll(t, name, b)
		if len(got) != len(ref) {
			t.Errorf("%s: %d soundings, the reference decoder has %d messages", name, len(got), len(ref))
			return
		}
		levels, values, bad, belowGround := 0, 0, 0, 0
		fail := func(format string, a ...any) {
			if bad++; bad <= 10 {
				t.Errorf(name+": "+format, a...)
			}
		}
		for k, s := range got {
			r := ref[k]
			if id := fmt.Sprintf("%02.0f%03.0f", r.first("BLOCK"), r.first("STN")); s.StationID != id {
				fail("message %d: station %s, reference %s", k+1, s.StationID, id)
			}
			elev := r.first("ELEV")
			if math.IsNaN(elev) {
				elev = r.first("ELEV1")
			}
			for _, c := range []struct {
				what      string
				got, want float64
				tol       float64
			}{
				{"latitude", s.LatitudeDeg, r.first("LAT"), 5e-6},
				{"longitude", s.LongitudeDeg, r.first("LON"), 5e-6},
				{"elevation", s.ElevationM, elev, 0.5},
			} {
				values++
				if !near(c.got, c.want, c.tol) {
					fail("message %d: %s %v, reference %v", k+1, c.what, c.got, c.want)
				}
			}
			sec := r.first("S")
			if math.IsNaN(sec) {
				sec = 0
			}
			want := fmt.Sprintf("%04.0f-%02.0f-%02.0fT%02.0f:%02.0f:%02.0fZ", r.first("Y"), r.first("MO"), r.first("D"), r.first("H"), r.first("MI"), sec)
			if lt := s.LaunchTime.Format("2006-01-02T15:04:05Z"); lt != want {
				fail("message %d: launch %s, reference %s", k+1, lt, want)
			}
			// The reference's level arrays: the temperature group's
			// iterations are the first len(T) entries of every key (the
			// wind-shear group follows in 3 09 052). Iterations with
			// neither pressure nor height are not levels.
			// Standard levels below the surface level's pressure are
			// extrapolated below ground and not kept (package doc).
			flag := func(i, bit int) bool {
				if r.fields["SIG"] != nil {
					x := r.at("SIG", i)
					return !math.IsNaN(x) && int(x)>>(18-bit)&1 == 1
				}
				x := r.at("SIG7", i)
				return !math.IsNaN(x) && int(x)>>(7-bit)&1 == 1
			}
			ps := math.NaN()
			for i := range r.fields["T"] {
				if flag(i, 1) && !math.IsNaN(r.at("P", i)) {
					ps = r.at("P", i)
					break
				}
			}
			var idx []int
			for i := range r.fields["T"] {
				if !flag(i, 1) && flag(i, 2) && r.at("P", i) > ps {
					belowGround++
					continue
				}
				if !math.IsNaN(r.at("P", i)) || !math.IsNaN(r.at("Z", i)) || !math.IsNaN(r.at("G", i)) {
					idx = append(idx, i)
				}
			}
			if s.Descent {
				// A descent is received from the top down and stored
				// lowest first (package doc).
				slices.Reverse(idx)
			}
			if len(idx) != len(s.Levels) {
				fail("message %d (%s): %d levels, reference %d", k+1, s.StationID, len(s.Levels), len(idx))
				continue
			}
			for j, i := range idx {
				l := s.Levels[j]
				levels++
				z := r.at("Z", i)
				if g := r.at("G", i); !math.IsNaN(g) || r.fields["G"] != nil {
					z = g / standardGravity
				}
				sig, kind := r.at("SIG", i), sounding.KindSignificant
				bits := 18
				if r.fields["SIG"] == nil {
					sig, bits = r.at("SIG7", i), 7
				}
				if !math.IsNaN(sig) {
					// Flag tables 0 08 042 and 0 08 001: bit 1 (the most
					// significant) surface, bit 2 standard level.
					switch {
					case int(sig)>>(bits-1)&1 == 1:
						kind = sounding.KindSurface
					case int(sig)>>(bits-2)&1 == 1:
						kind = sounding.KindStandard
					}
				}
				if math.IsNaN(r.at("P", i)) {
					kind = sounding.KindWindOnly
				}
				if l.Kind != kind {
					fail("message %d level %d: kind %v, reference flags %v", k+1, j+1, l.Kind, sig)
				}
				for _, c := range []struct {
					what      string
					got, want float64
					tol       float64
				}{
					{"pressure", l.PressurePa, r.at("P", i), 0.5},                           // 0 07 004: 10 Pa, 1 Pa after 2 07 001
					{"height", l.HeightM, z, 0.5},                                           // 0 10 009: 1 gpm; 0 10 003: 10 m²/s²
					{"temperature", l.TemperatureK, r.at("T", i), 0.005},                    // 0 12 101: 0.01 K
					{"dewpoint", l.DewpointK, r.at("TD", i), 0.005},                         // 0 12 103: 0.01 K
					{"wind direction", l.WindDirectionDeg, r.at("WD", i), 0.5},              // 0 11 001: 1°
					{"wind speed", l.WindSpeedMS, r.at("WS", i), 0.05},                      // 0 11 002: 0.1 m/s
					{"time since launch", l.ElapsedS, r.at("E", i), 0.5},                    // 0 04 086: 1 s
					{"latitude displacement", l.LatDisplacementDeg, r.at("DLAT", i), 5e-6},  // 0 05 015: 0.00001°
					{"longitude displacement", l.LonDisplacementDeg, r.at("DLON", i), 5e-6}, // 0 06 015: 0.00001°
				} {
					values++
					if !near(c.got, c.want, c.tol) {
						fail("message %d level %d: %s %v, reference %v", k+1, j+1, c.what, c.got, c.want)
					}
					if strings.HasSuffix(c.what, "displacement") && !math.IsNaN(c.want) && !math.IsNaN(c.got) {
						displaced++
					}
				}
			}
		}
		t.Logf("%s: %d soundings, %d levels, %d values compared with the reference decoder (%d of them latitude/longitude displacements reported by both), %d mismatches (%d standard levels below ground not kept)", name, len(got), levels, values, displaced, bad, belowGround)
	}
	return displaced
}

// near compares two values that are both missing or within tol.
func near(a, b, tol float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= tol
}
