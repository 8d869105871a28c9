package queries

import (
	"bytes"
	"context"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// golden compares got with testdata/name, or rewrites the file with -update.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file:\n--- got ---\n%s\n--- want ---\n%s", name, got, want)
	}
}

var writers = []struct {
	ext   string
	write func(*bytes.Buffer, *Table) error
}{
	{"txt", func(b *bytes.Buffer, t *Table) error { return WriteText(b, t) }},
	{"csv", func(b *bytes.Buffer, t *Table) error { return WriteCSV(b, t) }},
	{"json", func(b *bytes.Buffer, t *Table) error { return WriteJSON(b, t) }},
}

// TestClimatologyGolden renders the hand-computed climatology (see
// TestClimatologyByHand for where its numbers come from) in each format.
func TestClimatologyGolden(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	tab, err := Climatology(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range writers {
		var b bytes.Buffer
		if err := w.write(&b, tab); err != nil {
			t.Fatal(err)
		}
		golden(t, "climatology."+w.ext, b.Bytes())
	}
}

// TestWritersEdgeCases covers values the climatology does not produce:
// NaN, infinities, tiny and negative floats, times, and text that needs
// quoting in CSV or escaping in JSON. Invented values.
func TestWritersEdgeCases(t *testing.T) {
	tab := &Table{
		Columns: []string{"name", "x", "when", "flag", "n"},
		Rows: [][]any{
			{`a,"b"`, 1.0 / 3, time.Date(2016, 1, 2, 3, 4, 5, 0, time.UTC), true, int64(-3)},
			{"ü\tc", math.NaN(), nil, nil, nil},
			{nil, math.Inf(-1), time.Date(2016, 1, 2, 3, 4, 5, 6000, time.UTC), false, int64(0)},
			{"tiny", 0.000123456, nil, nil, int64(1)},
			{"negative zero", math.Copysign(0, -1), nil, nil, int64(1)},
		},
	}
	for _, w := range writers {
		var b bytes.Buffer
		if err := w.write(&b, tab); err != nil {
			t.Fatal(err)
		}
		golden(t, "edge."+w.ext, b.Bytes())
	}
	// An empty result is still well formed.
	empty := &Table{Columns: []string{"a", "b"}}
	for _, c := range []struct {
		ext, want string
	}{{"txt", "a  b\n"}, {"csv", "a,b\n"}, {"json", "[]\n"}} {
		var b bytes.Buffer
		for _, w := range writers {
			if w.ext == c.ext {
				if err := w.write(&b, empty); err != nil {
					t.Fatal(err)
				}
			}
		}
		if b.String() != c.want {
			t.Errorf("empty %s = %q, want %q", c.ext, b.String(), c.want)
		}
	}
}

func TestQueryBindsParameters(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	// A parameter value that would break the statement if it were pasted
	// into the SQL text.
	for _, c := range []struct {
		station string
		want    int64
	}{{"XB002", 3}, {"XA001", 13}, {"x' OR '1'='1", 0}} {
		tab, err := Query(context.Background(), db, `SELECT count(*) AS n FROM soundings WHERE station_id = ?`, c.station)
		if err != nil {
			t.Fatal(err)
		}
		if got := tab.Rows[0][0]; got != c.want {
			t.Errorf("count for %q = %v, want %d", c.station, got, c.want)
		}
	}
	if _, err := Query(context.Background(), db, `SELECT nothing FROM nowhere`); err == nil {
		t.Error("bad SQL: no error")
	}
}

// Values are written at the precision of the data (schema.OutputDecimals:
// heights to 1 m, K to 0.1, g/kg to 0.01, frequencies to 0.01) in every
// format, and in full with Exact. The raw values are machine noise of the
// kind an interpolated percentile produces.
func TestPrecisionByUnit(t *testing.T) {
	tab := &Table{Columns: []string{"height_m", "theta_k", "mixing_ratio_gkg", "sbi_frequency", "wind_speed_ms", "other"},
		Rows: [][]any{{148.183, 300.04999, 8.123456, 0.3333333333333333, 4.26, 18.899999999999977}}}
	var b strings.Builder
	if err := WriteCSV(&b, tab); err != nil {
		t.Fatal(err)
	}
	if got, want := strings.Split(b.String(), "\n")[1], "148,300,8.12,0.33,4.3,18.9"; got != want {
		t.Errorf("csv row %q, want %q", got, want)
	}
	b.Reset()
	if err := WriteJSON(&b, tab); err != nil {
		t.Fatal(err)
	}
	if want := `{"height_m":148,"theta_k":300,"mixing_ratio_gkg":8.12,"sbi_frequency":0.33,"wind_speed_ms":4.3,"other":18.9}`; !strings.Contains(b.String(), want) {
		t.Errorf("json %q, want %q", b.String(), want)
	}
	b.Reset()
	if err := WriteText(&b, tab); err != nil {
		t.Fatal(err)
	}
	if f := strings.Fields(strings.Split(b.String(), "\n")[1]); strings.Join(f, " ") != "148 300.0 8.12 0.33 4.3 18.9" {
		t.Errorf("text row %q", f)
	}
	tab.Exact = true
	b.Reset()
	if err := WriteCSV(&b, tab); err != nil {
		t.Fatal(err)
	}
	if got := strings.Split(b.String(), "\n")[1]; got != "148.183,300.04999,8.123456,0.3333333333333333,4.26,18.899999999999977" {
		t.Errorf("exact csv row %q", got)
	}
}
