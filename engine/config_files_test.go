package engine

import (
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
// kelvin's definition, 0 degC = 273.15 K), keyed by station and date.
func TestLoadDailyMaxima(t *testing.T) {
	path := filepath.Join(t.TempDir(), "tmax.csv")
	if err := os.WriteFile(path, []byte("station_id,date,tmax_c\nUSM00072403,2016-07-01,25.0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := LoadDailyMaxima(path)
	if err != nil {
		t.Fatal(err)
	}
	k := analyze.DayKey{StationID: "USM00072403", Date: time.Date(2016, 7, 1, 0, 0, 0, 0, time.UTC)}
	if v, ok := m[k]; !ok || math.Abs(v-298.15) > 1e-9 || len(m) != 1 {
		t.Errorf("maxima %v, want %v: 298.15 K", m, k)
	}
	if _, err := LoadDailyMaxima(filepath.Join(t.TempDir(), "absent.csv")); err == nil {
		t.Error("absent file: no error")
	}
}
