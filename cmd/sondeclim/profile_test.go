package main

import (
	"bytes"
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestProfileSterling prints a real sounding (Sterling, Virginia, launched
// 2016-07-01 11:03 UTC for 12 UTC; ../shared/validation, PROVENANCE.md)
// read straight from the archive file, and checks it against the same
// sounding read from a store.
func TestProfileSterling(t *testing.T) {
	v := sharedDir(t)
	zip := filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	fig := filepath.Join(t.TempDir(), "sounding.png")
	code, out, errs := runCmd(t, "profile", "--file", zip, "--time", "2016-07-01T12", "--figure", fig)
	if code != exitOK {
		t.Fatalf("profile: exit %d\n%s", code, errs)
	}
	// The header of this sounding in the file reads 2016 07 01 12, release
	// time 1103 (checked by hand in the file); its levels follow.
	for _, want := range []string{"Sounding of USM00072403", "2016-07-01 11:03 UTC (nominal 2016-07-01, 12 UTC)", "Levels (", "Caution:"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q", want)
		}
	}
	golden(t, "profile_sterling.txt", strings.ReplaceAll(out, v, "VALIDATION"))
	b, err := os.ReadFile(fig)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := png.Decode(bytes.NewReader(b)); err != nil {
		t.Errorf("--figure %s: %v", fig, err)
	}

	// From a store, the same sounding prints the same (the --file route
	// runs the same readers, checks and analysis, in memory); 13 UTC is
	// within 3 h of it.
	store := t.TempDir()
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, zip); code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	code, fromStore, errs := runCmd(t, "profile", "--store", store, "--station", "USM00072403", "--time", "2016-07-01T13")
	if code != exitOK {
		t.Fatalf("profile --store: exit %d\n%s", code, errs)
	}
	if fromStore != out {
		t.Errorf("profile from the store differs from profile from the file")
	}

	// JSON: one object, the levels the file declares for this sounding,
	// missing values as null.
	code, js, errs := runCmd(t, "profile", "--store", store, "--station", "USM00072403", "--time", "2016-07-01T11:03", "--format", "json")
	if code != exitOK {
		t.Fatalf("profile --format json: exit %d\n%s", code, errs)
	}
	// The file read in memory gives the same JSON, value for value (every
	// float, null and flag of the stored rows).
	code, jsFile, errs := runCmd(t, "profile", "--file", zip, "--time", "2016-07-01T11:03", "--format", "json")
	if code != exitOK || jsFile != js {
		t.Errorf("profile --file --format json: exit %d, same as the store's: %v\n%s", code, jsFile == js, errs)
	}
	var p struct {
		StationID  string           `json:"station_id"`
		LevelCount int              `json:"level_count"`
		Levels     []map[string]any `json:"levels"`
		Heights    []map[string]any `json:"mixing_heights"`
	}
	if err := json.Unmarshal([]byte(js), &p); err != nil {
		t.Fatalf("JSON output: %v", err)
	}
	if p.StationID != "USM00072403" || p.LevelCount == 0 || len(p.Levels) != p.LevelCount || len(p.Heights) == 0 {
		t.Errorf("JSON: station %q, level_count %d, %d levels, %d heights", p.StationID, p.LevelCount, len(p.Levels), len(p.Heights))
	}

	// The surface line of the July sounding carries a pressure; from
	// 2016-09-14 on the file's surface lines do not (PROVENANCE.md quirks),
	// so the ground pressure is derived from the built-in station list's
	// elevation, and profile says so.
	if strings.Contains(out, "(derived:") {
		t.Errorf("July sounding: surface pressure shown as derived")
	}
	code, autumn, errs := runCmd(t, "profile", "--store", store, "--station", "USM00072403", "--time", "2016-10-01T12")
	if code != exitOK || !strings.Contains(autumn, "hPa (derived: the surface line has no pressure") {
		t.Errorf("autumn sounding: exit %d, derived surface pressure not shown\n%s%s", code, autumn, errs)
	}

	// Nothing within 3 h of 06 UTC (launches are near 00 and 12 UTC).
	code, _, errs = runCmd(t, "profile", "--store", store, "--station", "USM00072403", "--time", "2016-07-01T06")
	if code != exitFailure || !strings.Contains(errs, "no sounding") {
		t.Errorf("06 UTC: exit %d, stderr %q", code, errs)
	}
}

// TestProfileDemo prints a sounding of the invented demo station.
// TestProfileHighResolutionLine draws the real Lamont flight
// (../shared/validation/netcdf, PROVENANCE.md: 4,176 records at 1-2 s) as
// a line: the SVG holds a few hundred shapes, not one marker per record
// (the figure drew 1,907 paths when it marked every level).
func TestProfileHighResolutionLine(t *testing.T) {
	v := sharedDir(t)
	fig := filepath.Join(t.TempDir(), "lamont.svg")
	code, _, errs := runCmd(t, "profile", "--file", filepath.Join(v, "netcdf", "sgpsondewnpnC1.b1.20190101.053200.cdf"),
		"--time", "2019-01-01T05:32", "--figure", fig)
	if code != exitOK {
		t.Fatalf("profile: exit %d\n%s", code, errs)
	}
	b, err := os.ReadFile(fig)
	if err != nil {
		t.Fatal(err)
	}
	svg := string(b)
	if n := strings.Count(svg, "<path"); n > 300 {
		t.Errorf("high-resolution profile drawn with %d paths, want a line (at most 300)", n)
	}
	// Methods are named in words in the figure.
	for _, want := range []string{"consensus of methods", "bulk Richardson (alternative)"} {
		if !strings.Contains(svg, want) {
			t.Errorf("figure lacks %q", want)
		}
	}
}

func TestProfileDemo(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "1", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	code, out, errs := runCmd(t, "profile", "--store", filepath.Join(dir, "store"), "--station", "ZZXSYN00001", "--time", "2001-01-15T12")
	if code != exitOK {
		t.Fatalf("profile: exit %d\n%s", code, errs)
	}
	// Methods in words (analyze.MethodTitle), as the figures name them.
	if !strings.Contains(out, "bulk Richardson (alternative)") || strings.Contains(out, "bulk_richardson_alt") {
		t.Errorf("profile text names methods by code name:\n%s", out)
	}
	golden(t, "profile_demo.txt", strings.ReplaceAll(out, dir, "DIR"))
}

func TestProfileUsage(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"profile"}, "exactly one of --store and --file"},
		{[]string{"profile", "--store", "x", "--file", "y"}, "exactly one of --store and --file"},
		{[]string{"profile", "--store", "x", "--station", "S"}, "--time is required"},
		{[]string{"profile", "--store", "x", "--time", "2016-07-01T12"}, "--station is required"},
		{[]string{"profile", "--store", "x", "--station", "S", "--time", "July"}, "cannot read"},
		{[]string{"profile", "--store", "x", "--station", "S", "--time", "2016-07-01T12", "--figure", "a.gif"}, ".png or .svg"},
		{[]string{"profile", "--store", "x", "--station", "S", "--time", "2016-07-01T12", "--format", "xml"}, "unknown --format"},
	} {
		code, _, errs := runCmd(t, c.args...)
		if code != exitUsage || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q, want usage error with %q", c.args, code, errs, c.want)
		}
	}
}

func TestParseUTC(t *testing.T) {
	for in, want := range map[string]string{
		"2016-07-01T12":             "2016-07-01T12:00:00Z",
		"2016-07-01T11:03":          "2016-07-01T11:03:00Z",
		"2016-07-01T11:03:30":       "2016-07-01T11:03:30Z",
		"2016-07-01 11:03":          "2016-07-01T11:03:00Z",
		"2016-07-01":                "2016-07-01T00:00:00Z",
		"2016-07-01T12:00:00Z":      "2016-07-01T12:00:00Z",
		"2016-07-01T14:00:00+02:00": "2016-07-01T12:00:00Z",
	} {
		got, err := parseUTC(in)
		if err != nil || got.Format("2006-01-02T15:04:05Z07:00") != want {
			t.Errorf("parseUTC(%q) = %v, %v; want %s", in, got, err, want)
		}
	}
	if _, err := parseUTC("12Z"); err == nil {
		t.Error("parseUTC(12Z) accepted")
	}
}
