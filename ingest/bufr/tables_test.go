package bufr

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// TestTablesMatchSource regenerates the embedded tables from the WMO's
// CSV files in ../shared/bufr-tables-v45 (wmo-im/BUFR4 v45, MIT) with
// tables/gen.go and checks the embedded copies are exactly that.
func TestTablesMatchSource(t *testing.T) {
	src, err := filepath.Abs(filepath.Join(realdata.Dir(t), "..", "bufr-tables-v45"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(src); err != nil {
		t.Skipf("WMO table CSVs absent (%v); they live in ../shared/bufr-tables-v45", err)
	}
	goTool, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go tool not on PATH")
	}
	dir := t.TempDir()
	gen, err := os.ReadFile("tables/gen.go")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "gen.go"), gen, 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(goTool, "run", "gen.go", src)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), "GOFLAGS=-mod=mod", "GO111MODULE=off")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go run gen.go: %v\n%s", err, out)
	}
	for _, f := range []string{"tableb.txt", "tabled.txt", "LICENSE.md", "VERSION"} {
		want, err1 := os.ReadFile(filepath.Join(dir, f))
		got, err2 := os.ReadFile(filepath.Join("tables", f))
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("tables/%s differs from what gen.go makes of %s; regenerate (DEVELOPERS.md)", f, src)
		}
	}
}

// TestTableEntries checks entries the decoder depends on against WMO-No.
// 306 Vol. I.2 Table B and Table D (the published values, from memory; a
// check that the generated files are read right).
func TestTableEntries(t *testing.T) {
	tb, err := wmoTables()
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		d            uint16
		scale, width int
		ref          int64
	}{
		{FXY(0, 7, 4), -1, 14, 0},        // pressure, Pa
		{FXY(0, 10, 9), 0, 17, -1000},    // geopotential height, gpm
		{FXY(0, 12, 101), 2, 16, 0},      // temperature, K
		{FXY(0, 11, 2), 1, 12, 0},        // wind speed, m/s
		{FXY(0, 5, 15), 5, 25, -9000000}, // latitude displacement (high accuracy), degree
		{FXY(0, 8, 42), 0, 18, 0},        // extended vertical sounding significance, flag table
		{FXY(0, 4, 86), 0, 15, -8192},    // long time period or displacement, s
	} {
		e := tb.b[c.d&0x3fff]
		if !e.known || e.Scale != c.scale || e.Width != c.width || e.Reference != c.ref {
			t.Errorf("%s: %+v, want scale %d width %d reference %d", DescriptorString(c.d), e, c.scale, c.width, c.ref)
		}
	}
	// 3 03 054: the temperature, humidity and wind group of 3 09 052.
	want := []uint16{FXY(0, 4, 86), FXY(0, 8, 42), FXY(0, 7, 4), FXY(0, 10, 9), FXY(0, 5, 15), FXY(0, 6, 15), FXY(0, 12, 101), FXY(0, 12, 103), FXY(0, 11, 1), FXY(0, 11, 2)}
	got := tb.d[FXY(3, 3, 54)&0x3fff]
	if len(got) != len(want) {
		t.Fatalf("3 03 054 = %v", got)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("3 03 054 element %d = %s, want %s", i+1, DescriptorString(got[i]), DescriptorString(want[i]))
		}
	}
}
