package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/schema/store"
)

// A night's real bulletin stream (validation/temp, 2022-07-13 00 UTC)
// holds NIL parts, parts carrying only regional remarks and PILOT parts:
// none of that loses data, so a scheduler sees exit 0; the summary goes to
// stdout within 100 columns, the remarks to stderr as readable lines.
func TestBulletinRunForSchedulers(t *testing.T) {
	v := sharedDir(t)
	dir := t.TempDir()
	st := filepath.Join(dir, "store")
	file := filepath.Join(v, "temp", "bulletins-2022-07-13-00Z.wmo")
	code, out, errs := runCmd(t, "ingest", "--store", st, "--workers", "2", file)
	if code != exitOK {
		t.Fatalf("ingest: exit %d, want 0\n%s", code, errs)
	}
	if strings.Contains(errs, "warning:") {
		t.Errorf("warnings on a routine bulletin stream:\n%s", errs)
	}
	if !strings.Contains(out, "soundings in the store") || !strings.Contains(out, "notes on input") {
		t.Errorf("summary not on stdout:\n%s", out)
	}
	for _, l := range strings.Split(out, "\n") {
		if n := len([]rune(l)); n >= 100 && !strings.HasPrefix(l, "store: ") {
			t.Errorf("summary line of %d columns: %q", n, l)
		}
	}
	// Human log lines: no "time=… level=…" records.
	if strings.Contains(errs, "level=") || strings.Contains(errs, "time=") {
		t.Errorf("log lines not in the readable form:\n%.500s", errs)
	}

	// --log json: one JSON object per stderr line; --quiet keeps only warnings.
	code, _, errs = runCmd(t, "ingest", "--store", filepath.Join(dir, "s2"), "--log", "json", file)
	if code != exitOK {
		t.Fatalf("ingest --log json: exit %d\n%s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(errs), "\n")
	for _, l := range lines {
		var m map[string]any
		if err := json.Unmarshal([]byte(l), &m); err != nil || m["msg"] == nil {
			t.Errorf("not a JSON log record: %q", l)
		}
	}
	if code, _, _ := runCmd(t, "ingest", "--store", st, "--log", "xml", file); code != exitUsage {
		t.Errorf("--log xml: exit %d, want %d", code, exitUsage)
	}

	// Flags after the SQL are taken as flags.
	code, out, errs = runCmd(t, "query", "select count(*) as n from soundings", "--store", st, "--format", "json")
	if code != exitOK || !strings.Contains(out, `"n":107`) {
		t.Errorf("query with flags after the SQL: exit %d, out %q, err %q", code, out, errs)
	}

	// A filter that matches nothing: exit 4, and the store's stations.
	for _, args := range [][]string{
		{"climatology", "--store", st, "--station", "NOPE"},
		{"climatology", "--store", st, "--years", "2030-2040"},
		{"trends", "--store", st, "--years", "2030-2040"},
		{"guidance", "--store", st, "--years", "2030-2040", "--table", "holzworth"},
	} {
		code, out, errs := runCmd(t, args...)
		if code != exitNoMatch || out != "" || !strings.Contains(errs, "no soundings match") ||
			!strings.Contains(errs, "the store holds 107 soundings of 107 stations, 2022") || !strings.Contains(errs, "70133") {
			t.Errorf("%v: exit %d, stdout %q, stderr %q", args, code, out, errs)
		}
	}

	// One night has no day with a maximum temperature, so the Holzworth
	// table is empty; the ventilation table is not, so the filter matches
	// soundings: the empty table is printed, and that is not exit 4.
	code, out, errs = runCmd(t, "guidance", "--store", st, "--table", "holzworth", "--format", "csv")
	if code != exitOK || strings.Count(out, "\n") != 1 || !strings.HasPrefix(out, "station_id,season,") {
		t.Errorf("guidance --table holzworth (empty, other tables not): exit %d, stdout %q, stderr %q", code, out, errs)
	}

	// Messages name what the user gave, not the program's packages.
	_, _, errs = runCmd(t, "profile", "--store", st, "--station", "72201", "--time", "2022-07-01T00")
	for _, pkg := range []string{"queries:", "figures:", "report:"} {
		if strings.Contains(errs, pkg) {
			t.Errorf("message names an internal package (%s): %q", pkg, errs)
		}
	}
}

func TestVersion(t *testing.T) {
	code, out, _ := runCmd(t, "--version")
	if code != exitOK {
		t.Fatalf("--version: exit %d", code)
	}
	for _, want := range []string{"sondeclim ", "store schema version ", "derivation version "} {
		if !strings.Contains(out, want) {
			t.Errorf("--version lacks %q: %q", want, out)
		}
	}
	// The numbers are the ones the store and the engine record.
	if !strings.Contains(out, "store schema version "+itoa(store.Version)+"\n") ||
		!strings.Contains(out, "derivation version "+itoa(engine.DerivationVersion)+"\n") {
		t.Errorf("--version numbers differ from the store's and the engine's: %q", out)
	}
}

func itoa(n int) string { return jsonInt(n) }

func jsonInt(n int) string { b, _ := json.Marshal(n); return string(b) }

// Flags after positional arguments, and "--" ending the flags.
func TestInterspersedFlags(t *testing.T) {
	fs := newFlags("x", "", "", "", new(strings.Builder))
	f := fs.String("format", "text", "")
	if err := parseFlags(fs, []string{"a", "--format", "csv", "b", "--", "--c"}); err != nil {
		t.Fatal(err)
	}
	if *f != "csv" || strings.Join(fs.Args(), "|") != "a|b|--c" {
		t.Errorf("format %q, args %q", *f, fs.Args())
	}
}
