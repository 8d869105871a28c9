package netcdf

import (
	"bytes"
	"errors"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// sharedDir returns ../shared/validation/netcdf, or skips the test.
func sharedDir(t testing.TB) string { return realdata.Dir(t, "netcdf") }

// tinyFile is invented scaffolding: two fixed variables, two record
// variables of which one is a short (exercising the 4-byte padding of each
// record slab), a 2-D record variable and attributes of several types.
func tinyFile(version byte) *tFile {
	return &tFile{
		version: version,
		numrecs: 3,
		dims:    []tDim{{"time", 0}, {"level", 2}, {"name_len", 5}},
		gatts: []tAttr{
			{name: "title", typ: Char, text: "tiny test"},
			{name: "answer", typ: Int, vals: []float64{42}},
			{name: "weights", typ: Double, vals: []float64{0.25, -1.5}},
		},
		vars: []tVar{
			{name: "base", typ: Int, data: []float64{1137646980}},
			{name: "levels", dims: []int{1}, typ: Short, data: []float64{-7, 300}},
			{name: "label", dims: []int{2}, typ: Char, data: []float64{'a', 'b', 'c', 'd', 'e'}},
			{name: "pres", dims: []int{0}, typ: Float, data: []float64{1000.5, 850.25, -9999},
				attrs: []tAttr{{name: "units", typ: Char, text: "hPa"}, {name: "missing_value", typ: Float, vals: []float64{-9999}}}},
			{name: "flag", dims: []int{0}, typ: Short, data: []float64{1, -2, 3}},
			{name: "grid", dims: []int{0, 1}, typ: Double, data: []float64{1, 2, 3, 4, 5, 6}},
			{name: "tiny", dims: []int{0}, typ: Byte, data: []float64{-128, 0, 127}},
		},
	}
}

func TestOpenTiny(t *testing.T) {
	for _, version := range []byte{1, 2} {
		raw := tinyFile(version).bytes()
		f, err := Open(bytes.NewReader(raw), int64(len(raw)))
		if err != nil {
			t.Fatalf("CDF-%d: %v", version, err)
		}
		if f.Version != version || f.NumRecs != 3 || len(f.Dims) != 3 || len(f.Vars) != 7 {
			t.Fatalf("CDF-%d: version %d, numrecs %d, %d dims, %d vars", version, f.Version, f.NumRecs, len(f.Dims), len(f.Vars))
		}
		if a, _ := f.Attr("title"); a.Text != "tiny test" {
			t.Errorf("title = %q", a.Text)
		}
		if a, _ := f.Attr("weights"); !slices.Equal(a.Values, []float64{0.25, -1.5}) {
			t.Errorf("weights = %v", a.Values)
		}
		if !f.Dims[0].Unlimited || f.Dims[0].Len != 3 {
			t.Errorf("record dimension = %+v", f.Dims[0])
		}
		for _, v := range tinyFile(version).vars {
			got, err := f.Float64s(f.Var(v.name))
			if err != nil {
				t.Fatalf("CDF-%d %s: %v", version, v.name, err)
			}
			if !slices.Equal(got, v.data) {
				t.Errorf("CDF-%d %s = %v, want %v", version, v.name, got, v.data)
			}
		}
		if a, ok := f.Var("pres").Attr("units"); !ok || a.Text != "hPa" {
			t.Errorf("pres units = %q, %v", a.Text, ok)
		}
	}
}

func TestLoneRecordVariable(t *testing.T) {
	// The specification stores a lone record variable without padding
	// between records: three shorts occupy 6 bytes, not 12.
	tf := &tFile{version: 1, numrecs: 3, dims: []tDim{{"t", 0}},
		vars: []tVar{{name: "s", dims: []int{0}, typ: Short, data: []float64{10, -20, 30}}}}
	raw := tf.bytes()
	f, err := Open(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		t.Fatal(err)
	}
	if f.recSize != 2 {
		t.Errorf("record size = %d, want 2", f.recSize)
	}
	got, err := f.Float64s(f.Var("s"))
	if err != nil || !slices.Equal(got, tf.vars[0].data) {
		t.Errorf("s = %v, %v", got, err)
	}
}

func TestStreamingNumRecs(t *testing.T) {
	tf := tinyFile(1)
	tf.streaming = true
	raw := tf.bytes()
	f, err := Open(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		t.Fatal(err)
	}
	if f.NumRecs != 3 {
		t.Errorf("numrecs from file size = %d, want 3", f.NumRecs)
	}
}

func TestOpenErrors(t *testing.T) {
	good := tinyFile(1).bytes()
	mod := func(f func(b []byte) []byte) []byte { return f(slices.Clone(good)) }
	cases := []struct {
		name string
		raw  []byte
		want error
	}{
		{"empty", nil, ErrNotClassic},
		{"hdf5", []byte("\x89HDF\r\n\x1a\n"), ErrNotClassic},
		{"cdf5", mod(func(b []byte) []byte { b[3] = 5; return b }), ErrNotClassic},
		{"huge numrecs", mod(func(b []byte) []byte { b[4], b[5] = 0x7f, 0xff; return b }), ErrTruncated},
		{"huge dim count", mod(func(b []byte) []byte { b[12] = 0x7f; return b }), ErrMalformed},
		{"bad list tag", mod(func(b []byte) []byte { b[11] = 0x0B; return b }), ErrMalformed},
		{"header cut", good[:40], ErrTruncated},
		{"data cut", good[:len(good)-9], ErrTruncated},
	}
	for _, c := range cases {
		_, err := Open(bytes.NewReader(c.raw), int64(len(c.raw)))
		var fe *FormatError
		if !errors.Is(err, c.want) || !errors.As(err, &fe) {
			t.Errorf("%s: err = %v, want %v in a *FormatError", c.name, err, c.want)
		}
	}
	// Every prefix of a valid file that cuts into data is rejected
	// cleanly. (The last 3 bytes are the padding after the last record's
	// one-byte slab; a file without them still holds all its data.)
	for n := 0; n < len(good)-3; n++ {
		if _, err := Open(bytes.NewReader(good[:n]), int64(n)); err == nil {
			t.Fatalf("prefix of %d bytes accepted", n)
		}
	}
}

func TestSniff(t *testing.T) {
	for _, c := range []struct {
		in   string
		want bool
	}{{"CDF\x01", true}, {"CDF\x02\x00", true}, {"CDF\x05", false}, {"CDF", false}, {"\x89HDF", false}, {"", false}} {
		if got := Sniff([]byte(c.in)); got != c.want {
			t.Errorf("Sniff(%q) = %v", c.in, got)
		}
	}
}

// TestOpenRealHeader checks the header of a real file against bytes read
// with xxd: numrecs is bytes 4–7 = 0x00001050 = 4176; the global
// attribute site_id ("sgp") sits at offset 0xF4; pres is a float record
// variable with units "hPa" and missing_value −9999.
func TestOpenRealHeader(t *testing.T) {
	name := filepath.Join(sharedDir(t), "sgpsondewnpnC1.b1.20190101.053200.cdf")
	raw, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	f, err := Open(bytes.NewReader(raw), int64(len(raw)))
	if err != nil {
		t.Fatal(err)
	}
	if f.Version != 1 || f.NumRecs != 4176 {
		t.Errorf("version %d numrecs %d, want 1 and 4176", f.Version, f.NumRecs)
	}
	if a, _ := f.Attr("site_id"); a.Text != "sgp" {
		t.Errorf("site_id = %q", a.Text)
	}
	p := f.Var("pres")
	if p == nil || !p.Record || p.Type != Float {
		t.Fatalf("pres = %+v", p)
	}
	if a, _ := p.Attr("missing_value"); len(a.Values) != 1 || a.Values[0] != -9999 {
		t.Errorf("pres missing_value = %v", a.Values)
	}
	// The record size equals the distance between records: the file ends
	// exactly after the last record.
	last := f.Vars[len(f.Vars)-1]
	if end := last.Begin + (f.NumRecs-1)*f.recSize + last.slab*last.Type.Size(); end != int64(len(raw)) {
		t.Errorf("last record ends at %d, file size %d", end, len(raw))
	}
	x, err := f.Float64s(p)
	if err != nil || len(x) != 4176 || math.IsNaN(x[0]) {
		t.Fatalf("pres: %d values, %v", len(x), err)
	}
}
