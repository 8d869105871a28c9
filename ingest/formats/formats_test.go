package formats

import (
	"bytes"
	"errors"
	"io"
	"sort"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/tidycsv"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// TestDetectRealFiles checks that detection names the right reader for a
// real file of each format in ../shared/validation (PROVENANCE.md names
// their sources), that the reader it opens decodes a sounding from it, and
// that the station list is recognised as such and as no sounding format.
func TestDetectRealFiles(t *testing.T) {
	for _, c := range []struct {
		path []string
		want string
	}{
		{[]string{"archive-v2", "USM00074794-data-1950-portion.txt"}, "archive-v2"},
		{[]string{"netcdf", "sgpsondewnpnC1.b1.20190101.053200.cdf"}, "netcdf-sonde"},
		{[]string{"temp", "83746-2023-02-23-00Z.txt"}, "wmo-temp"},
		{[]string{"bufr", "uegabe.bufr"}, "bufr"},
		{[]string{"bufr", "pdbufr-temp-420.bufr"}, "bufr"},
	} {
		b := realdata.Text(t, c.path...)
		prefix := b[:min(len(b), 4096)]
		f, ok := Detect(prefix)
		if !ok || f.Name != c.want {
			t.Errorf("%s: detected %q (%v), want %q", c.path[1], f.Name, ok, c.want)
			continue
		}
		if IsStationList(prefix) {
			t.Errorf("%s: taken for a station list", c.path[1])
		}
		rd, err := Open("", prefix, bytes.NewReader(b), c.path[1], "", Options{})
		if err != nil {
			t.Fatal(err)
		}
		s, err := rd.Next()
		if err != nil || s == nil || len(s.Levels) == 0 {
			t.Errorf("%s: first sounding %v, %v", c.path[1], s, err)
		}
	}
	list := realdata.Text(t, "archive-v2", "igra2-station-list.txt")
	if !IsStationList(list[:4096]) {
		t.Error("the archive's station list is not recognised")
	}
	m, err := ReadStationList(bytes.NewReader(list))
	if err != nil || len(m) < 1000 {
		t.Fatalf("station list: %d stations, %v", len(m), err)
	}
	// Sterling, VA (USM00072403, WMO 72403) is in the list as an M-network
	// id; its WMO number finds it (METHODS §7.2).
	look := WMOLookup(m)
	st, ok := look("72403")
	if want := m["USM00072403"]; !ok || st != want || st.Name == "" {
		t.Errorf("WMO 72403 = %+v, %v; list has %+v", st, ok, want)
	}
	if _, ok := look("00000"); ok {
		t.Error("WMO 00000 found")
	}
}

// TestRegistry checks names are unique and listed sorted, that a forced
// format is used whatever the content, and that an unknown name or content
// is an ingest.ErrUnknownInput.
func TestRegistry(t *testing.T) {
	names := Names()
	if !sort.StringsAreSorted(names) || len(names) != len(All()) {
		t.Errorf("names %v", names)
	}
	for i := 1; i < len(names); i++ {
		if names[i] == names[i-1] {
			t.Errorf("format %q registered twice", names[i])
		}
	}
	for _, f := range All() {
		if got, ok := Lookup(f.Name); !ok || got.Name != f.Name || f.Sniff == nil || f.Open == nil {
			t.Errorf("format %q incomplete or not found", f.Name)
		}
	}
	rd, err := Open(tidycsv.Format, []byte("x"), bytes.NewReader([]byte("x")), "in.csv", "", Options{})
	if err != nil || rd == nil {
		t.Fatalf("forced tidy-csv: %v", err)
	}
	if _, err := rd.Next(); err == io.EOF || err == nil {
		t.Errorf("tidy-csv of garbage: %v, want a parse error", err)
	}
	if _, err := Open("no-such-format", nil, nil, "f", "", Options{}); !errors.Is(err, ingest.ErrUnknownInput) {
		t.Errorf("unknown name: %v", err)
	}
	if _, err := Open("", []byte("\x00\x01garbage"), nil, "f", "", Options{}); !errors.Is(err, ingest.ErrUnknownInput) {
		t.Errorf("unknown content: %v", err)
	}
}
