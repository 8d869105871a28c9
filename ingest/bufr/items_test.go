package bufr

import (
	"bufio"
	"bytes"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// itemsArrays reads the arrays of one message from a key/value dump in
// the layout of eccodes-python-temp.items ("key [v v …]" over several
// lines, "--" for missing), stopping at the second message.
func itemsArrays(b []byte) map[string][]float64 {
	out := map[string][]float64{}
	sc := bufio.NewScanner(bytes.NewReader(b))
	key, open := "", false
	msgs := 0
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "messageNumber") {
			if msgs++; msgs > 1 {
				break
			}
		}
		if !open {
			k, rest, ok := strings.Cut(line, " [")
			if !ok {
				continue
			}
			key, open, line = k, true, rest
			if _, seen := out[key]; seen {
				key = key + "#2" // a key repeated later in the message
			}
			out[key] = []float64{}
		}
		if i := strings.IndexByte(line, ']'); i >= 0 {
			line, open = line[:i], false
		}
		for _, f := range strings.Fields(line) {
			x, err := strconv.ParseFloat(strings.TrimSuffix(f, "."), 64)
			if f == "--" || err != nil {
				x = math.NaN()
			}
			out[key] = append(out[key], x)
		}
	}
	return out
}

// TestQualityBitmapReference links the percent-confidence values that
// follow 2 22 000 to the elements their data-present bitmap marks, by the
// rule the package documents (the bitmap counts back from the operator
// over the data elements before it), and compares the confidence of every
// pressure and temperature of the first message of
// eccodes-python-temp.bufr with the key/value dump beside it
// (eccodes-python-temp.items: that library's own output, PROVENANCE.md).
func TestQualityBitmapReference(t *testing.T) {
	b := realdata.Text(t, "bufr", "eccodes-python-temp.bufr")
	want := itemsArrays(realdata.Text(t, "bufr", "eccodes-python-temp.items"))
	sc := NewScanner(bytes.NewReader(b))
	raw, _, err := sc.Next()
	if err != nil {
		t.Fatal(err)
	}
	subs := decodeOne(t, raw)
	var elems []Value
	var bitmap []bool
	var conf []float64
	after := false
	for _, v := range subs[0].Values {
		switch {
		case v.Mark == MarkOperator:
			after = true
		case v.Mark != MarkValue:
		case !after:
			elems = append(elems, v)
		case v.Desc == FXY(0, 31, 31):
			bitmap = append(bitmap, v.V == 0)
		case v.Desc == FXY(0, 33, 7):
			conf = append(conf, v.V)
		}
	}
	if len(bitmap) == 0 || len(bitmap) > len(elems) {
		t.Fatalf("bitmap of %d bits over %d elements", len(bitmap), len(elems))
	}
	start := len(elems) - len(bitmap)
	got := map[uint16][]float64{}
	k := 0
	for i, e := range elems {
		c := math.NaN()
		if i >= start && bitmap[i-start] {
			if k >= len(conf) {
				t.Fatalf("more present bits than confidence values (%d)", len(conf))
			}
			c = conf[k]
			k++
		}
		got[e.Desc] = append(got[e.Desc], c)
	}
	if k != len(conf) {
		t.Errorf("%d present bits, %d confidence values", k, len(conf))
	}
	compared := 0
	for _, c := range []struct {
		key  string
		desc uint16
	}{{"pressure->percentConfidence", FXY(0, 7, 4)}, {"airTemperature->percentConfidence", FXY(0, 12, 1)}, {"pressure", FXY(0, 7, 4)}} {
		w, g := want[c.key], got[c.desc]
		if c.key == "pressure" {
			g = nil
			for _, e := range elems {
				if e.Desc == c.desc {
					g = append(g, e.V)
				}
			}
		}
		if len(w) == 0 || len(w) != len(g) {
			t.Errorf("%s: %d values, the dump has %d", c.key, len(g), len(w))
			continue
		}
		for i := range w {
			compared++
			if !near(g[i], w[i], 1e-9) {
				t.Errorf("%s[%d] = %v, dump %v", c.key, i, g[i], w[i])
			}
		}
	}
	t.Logf("%d values compared with eccodes-python-temp.items (bitmap %d bits, %d confidence values)", compared, len(bitmap), len(conf))
}

// TestSubstitutedValuesReference: the second message of
// eccodes-python-temp.bufr carries substituted values (2 23 000 with a
// bitmap, then 2 23 255 markers). Every value, in order, and the element
// it stands for are compared with the plain dump of Debian's ecCodes
// tools (bufr_dump -p: "#n#key->substitutedValue = v").
func TestSubstitutedValuesReference(t *testing.T) {
	b := realdata.Text(t, "bufr", "eccodes-python-temp.bufr")
	dump, err := exec.LookPath("bufr_dump")
	if err != nil {
		t.Skip("reference decoder absent: Debian's libeccodes-tools (bufr_dump) is not installed; .ci/run installs it")
	}
	sc := NewScanner(bytes.NewReader(b))
	var raw []byte
	for range 2 {
		if raw, _, err = sc.Next(); err != nil {
			t.Fatal(err)
		}
	}
	path := filepath.Join(t.TempDir(), "second.bufr")
	if err := os.WriteFile(path, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(dump, "-p", path).Output()
	if err != nil {
		t.Fatalf("bufr_dump: %v", err)
	}
	var want []float64
	var keys []string
	for _, line := range strings.Split(string(out), "\n") {
		k, v, ok := strings.Cut(line, "->substitutedValue = ")
		if !ok {
			continue
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
		if err != nil {
			x = math.NaN()
		}
		want = append(want, x)
		keys = append(keys, k[strings.LastIndexByte(k, '#')+1:])
	}
	var got []Value
	for _, v := range decodeOne(t, raw)[0].Values {
		if v.Mark == MarkStatistic {
			got = append(got, v)
		}
	}
	if len(want) == 0 || len(got) != len(want) {
		t.Fatalf("%d substituted values, the reference has %d", len(got), len(want))
	}
	for i := range want {
		// ecCodes names 0 10 003 "nonCoordinateGeopotential".
		if !near(got[i].V, want[i], 1e-9) || keys[i] != "nonCoordinateGeopotential" || got[i].Desc != FXY(0, 10, 3) {
			t.Errorf("substituted value %d: %s = %v, reference %s = %v", i+1, DescriptorString(got[i].Desc), got[i].V, keys[i], want[i])
		}
	}
	t.Logf("%d substituted values compared with bufr_dump -p", len(want))
}
