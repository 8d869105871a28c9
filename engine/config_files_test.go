package engine

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
)

// TestLoadVentilationTable: a built-in name gives that table, a file its
// own table, and a malformed or unreadable file an error naming the file
// and, when malformed, the line.
func TestLoadVentilationTable(t *testing.T) {
	if tab, err := LoadVentilationTable("nc_vis"); err != nil || tab.Name != "nc_vis" {
		t.Errorf("built-in nc_vis: %v %v", tab.Name, err)
	}
	dir := t.TempDir()
	good := filepath.Join(dir, "smoke.txt")
	bad := filepath.Join(dir, "bad.txt")
	if err := os.WriteFile(good, []byte("name: county_smoke\nunit: kt*ft\n0 poor\n33500 fair\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(bad, []byte("name: county_smoke\n\nunit: furlongs\n0 poor\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if tab, err := LoadVentilationTable(good); err != nil || tab.Name != "county_smoke" || len(tab.Categories) != 2 ||
		tab.Categories[1].MinInclusive != 33500 {
		t.Errorf("file table: %+v %v", tab, err)
	}
	if _, err := LoadVentilationTable(bad); err == nil || !strings.HasPrefix(err.Error(), "ventilation table "+bad+":3: unit") {
		t.Errorf("malformed table (unit on line 3): %v", err)
	}
	missing := filepath.Join(dir, "absent.txt")
	if _, err := LoadVentilationTable(missing); err == nil || !strings.Contains(err.Error(), missing) || !strings.Contains(err.Error(), "generic, nc_vis") {
		t.Errorf("absent file: %v", err)
	}
}

// TestLoadDailyMaxima: a day's maximum of 25.0 degC is 298.15 K (the
// kelvin's definition, 0 degC = 273.15 K), keyed by station and date, and
// each station's first line is found (blank lines counted).
func TestLoadDailyMaxima(t *testing.T) {
	path := filepath.Join(t.TempDir(), "tmax.csv")
	if err := os.WriteFile(path, []byte("station_id,date,tmax_c\n\nUSM00072403,2016-07-01,25.0\nXYZ,2016-07-01,\nXYZ,2016-07-02,20\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := LoadDailyMaxima(path)
	if err != nil {
		t.Fatal(err)
	}
	k := analyze.DayKey{StationID: "USM00072403", Date: time.Date(2016, 7, 1, 0, 0, 0, 0, time.UTC)}
	if v, ok := f.Maxima[k]; !ok || math.Abs(v-298.15) > 1e-9 || len(f.Maxima) != 2 {
		t.Errorf("maxima %v, want %v: 298.15 K and one day of XYZ", f.Maxima, k)
	}
	// XYZ's first record (line 4) has no value, but names the station.
	if f.FirstLine["USM00072403"] != 3 || f.FirstLine["XYZ"] != 4 || f.Path != path {
		t.Errorf("first lines %v, path %q", f.FirstLine, f.Path)
	}
}

// TestLoadDailyMaximaErrors: every refused file is ErrDailyMaxima, and the
// message names the file and, for a bad record, its line.
func TestLoadDailyMaximaErrors(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ name, text, want string }{
		{"fields.csv", "station_id,date,tmax_c\nA,2016-07-01\n", ":2: wrong number of fields"},
		{"date.csv", "station_id,date,tmax_c\nA,2016-07-01,20\nA,01/07/2016,20\n", `:3: date "01/07/2016" is not YYYY-MM-DD`},
		{"twice.csv", "station_id,date,tmax_c\nA,2016-07-01,20\nA,2016-07-01,21\n", ":3: repeated station A and date 2016-07-01"},
		{"hot.csv", "station_id,date,tmax_c\nA,2016-07-01,93\n", `:2: tmax_c "93" is not a temperature`},
		{"header.csv", "id,day,t\n", ":1: header"},
		{"empty.csv", "", ": empty input"},
	} {
		path := filepath.Join(dir, c.name)
		if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := LoadDailyMaxima(path)
		if !errors.Is(err, ErrDailyMaxima) || !strings.HasPrefix(err.Error(), "daily maxima "+path+c.want) {
			t.Errorf("%s: %v, want ErrDailyMaxima %q", c.name, err, "daily maxima "+path+c.want)
		}
	}
	for _, path := range []string{filepath.Join(dir, "absent.csv"), dir} {
		if _, err := LoadDailyMaxima(path); !errors.Is(err, ErrDailyMaxima) || !strings.HasPrefix(err.Error(), "daily maxima "+path+": cannot be read") {
			t.Errorf("%s: %v", path, err)
		}
	}
}
