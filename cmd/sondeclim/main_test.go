package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

var update = flag.Bool("update", false, "rewrite golden files under testdata/")

// runCmd runs the command line in process and returns exit code, stdout
// and stderr.
func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), args, env{strings.NewReader(""), &out, &errb})
	return code, out.String(), errb.String()
}

// golden compares got with testdata/NAME, or rewrites it with -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/sondeclim -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s (rerun with -update and review the diff)\n--- got ---\n%s\n--- want ---\n%s", path, got, want)
	}
}

// sharedDir returns ../shared/validation (beside the repository), or skips
// the test when it is absent (a clone outside the team's machines).
func sharedDir(t *testing.T) string { return realdata.Dir(t) }

func TestUsage(t *testing.T) {
	code, out, _ := runCmd(t, "help")
	if code != exitOK {
		t.Fatalf("help: exit %d", code)
	}
	golden(t, "help.txt", out)

	code, _, errs := runCmd(t, "frobnicate")
	if code != exitUsage || !strings.Contains(errs, `unknown command "frobnicate"`) {
		t.Errorf("unknown command: exit %d, stderr %q", code, errs)
	}
	code, _, errs = runCmd(t, "ingest", "somefile")
	if code != exitUsage || !strings.Contains(errs, "--store is required") {
		t.Errorf("ingest without --store: exit %d, stderr %q", code, errs)
	}
	code, _, errs = runCmd(t, "query", "--store", t.TempDir())
	if code != exitUsage {
		t.Errorf("query without SQL: exit %d, stderr %q", code, errs)
	}
	code, out, _ = runCmd(t, "schema")
	if code != exitOK {
		t.Fatalf("schema: exit %d", code)
	}
	golden(t, "schema.md", out)
	for c := range commands {
		code, _, errs := runCmd(t, c, "-h")
		if code != exitOK || !strings.Contains(errs, "Examples:") || !strings.Contains(errs, "Usage: sondeclim "+c) {
			t.Errorf("%s -h: exit %d, help text %q", c, code, errs)
		}
	}
}

// TestDemoEndToEnd runs the demo as a user would and checks the seasonal
// table it prints (golden file; the invented data are seeded).
func TestDemoEndToEnd(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runCmd(t, "demo", "--dir", dir, "--years", "2", "--workers", "2")
	if code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	for _, want := range []string{"DJF", "MAM", "JJA", "SON", "mixing_height_p50_m", "Caution:", filepath.Join(dir, "store")} {
		if !strings.Contains(out, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
	golden(t, "demo.txt", strings.ReplaceAll(out, dir, "DIR"))

	// The store answers SQL: two years of 00 and 12 UTC soundings.
	code, out, errs = runCmd(t, "query", "--store", filepath.Join(dir, "store"), "--format", "csv",
		"select count(*) as n, count(distinct year) as years from soundings")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	if out != "n,years\n1460,2\n" { // 2 years × 365 days × 2 soundings (2001–2002 have no leap day)
		t.Errorf("query output %q", out)
	}
}

// TestIngestValidation ingests the real archive-v2 files (PROVENANCE.md in
// ../shared/validation lists their sounding counts).
func TestIngestValidation(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	files, _ := filepath.Glob(filepath.Join(v, "archive-v2", "*"))
	code, _, errs := runCmd(t, append([]string{"ingest", "--store", store, "--workers", "2"}, files...)...)
	// The folder also holds the format descriptions (text, not soundings)
	// and the truncated Barrow sounding: exit 3, each named.
	if code != exitSkipped {
		t.Fatalf("ingest: exit %d, want %d\n%s", code, exitSkipped, errs)
	}
	// PROVENANCE.md: the third Barrow sounding is cut short; its header is
	// at line 318 of the file (checked by hand: 1 + 158 + 1 + 158 lines).
	if !regexp.MustCompile(`USM00070026-data-truncated\.txt:318: level count`).MatchString(errs) {
		t.Errorf("truncated Barrow sounding not reported with file and line:\n%s", errs)
	}
	code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv",
		"select station_id, count(*) as n, sum(case when level_count = declared_levels then 1 else 0 end) as complete, "+
			"sum(duplicates_merged) as merged from soundings group by 1 order by 1")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	// Counts from PROVENANCE.md: Wien 321, Barrow 3 of which 2 whole,
	// Sterling 662, Cape Kennedy 14, Göteborg 5 of which three carry hour
	// 99. All five Göteborg soundings are read, but they are two ascents:
	// soundings 1 and 2 of the file have identical levels and the same
	// release time (2017-12-31 23:30), and so do 3, 4 and 5 (2018-01-01
	// 23:30) — checked by hand in the file. A sounding's identity is its
	// station and launch time, so 2 rows remain and 3 copies are merged.
	want := "station_id,n,complete,merged\n" +
		"AUM00011035,321,321,0\n" +
		"SWM00002527,2,2,3\n" +
		"USM00070026,2,2,0\n" +
		"USM00072403,662,662,0\n" +
		"USM00074794,14,14,0\n"
	if out != want {
		t.Errorf("soundings per station:\n%s\nwant\n%s", out, want)
	}
	// The issue's own check: the Sterling store alone answers 662.
	code, out, _ = runCmd(t, "query", "--store", store, "--format", "csv",
		"select count(*) from soundings where station_id = 'USM00072403'")
	if code != exitOK || !strings.HasSuffix(out, "\n662\n") {
		t.Errorf("Sterling count: exit %d, %q", code, out)
	}
	// PROVENANCE.md: 131,306 levels in the Sterling file.
	code, out, _ = runCmd(t, "query", "--store", store, "--format", "csv",
		"select count(*) from levels where station_id = 'USM00072403'")
	if code != exitOK || !strings.HasSuffix(out, "\n131306\n") {
		t.Errorf("Sterling levels: exit %d, %q", code, out)
	}

	// The climatology shows every station.
	code, out, errs = runCmd(t, "climatology", "--store", store)
	if code != exitOK {
		t.Fatalf("climatology: exit %d\n%s", code, errs)
	}
	for _, id := range []string{"AUM00011035", "SWM00002527", "USM00070026", "USM00072403", "USM00074794"} {
		if !strings.Contains(out, id) {
			t.Errorf("climatology lacks station %s", id)
		}
	}
}

// TestWorkersAndOrderDoNotMatter: the tables are the same for any worker
// count and any argument order (house rule; the data are real files from
// ../shared/validation).
func TestWorkersAndOrderDoNotMatter(t *testing.T) {
	v := sharedDir(t)
	a := filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz")
	b := filepath.Join(v, "archive-v2", "SWM00002527-data-hour99.txt")
	c := filepath.Join(v, "archive-v2", "USM00074794-data-1950-portion.txt")
	dump := func(workers string, files ...string) string {
		store := t.TempDir()
		code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--store", store, "--workers", workers}, files...)...)
		if code != exitOK {
			t.Fatalf("ingest: exit %d\n%s", code, errs)
		}
		var all strings.Builder
		for _, q := range []string{
			"select * exclude (source_file) from soundings",
			"select * from levels",
		} {
			code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", "--exact", q)
			if code != exitOK {
				t.Fatalf("query: exit %d\n%s", code, errs)
			}
			all.WriteString(out)
		}
		return all.String()
	}
	one := dump("1", a, b, c)
	many := dump("7", c, a, b)
	if one != many {
		t.Errorf("tables differ between --workers 1 and --workers 7 with reordered inputs")
	}
	if strings.Count(one, "\n") < 321+5+14 {
		t.Errorf("dump too short to be meaningful: %d lines", strings.Count(one, "\n"))
	}
}

// TestIngestAllFormats: the three kinds of real input go into one store
// (issue "readers": TEMP bulletins, netCDF sonde files, archive-v2 files;
// counts from PROVENANCE.md and the decoders' own tests).
func TestIngestAllFormats(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	code, _, errs := runCmd(t, "ingest", "--store", store, "--workers", "2",
		filepath.Join(v, "temp"), filepath.Join(v, "netcdf"), filepath.Join(v, "archive-v2"))
	if code != exitSkipped {
		t.Fatalf("ingest: exit %d, want %d (some input is known to be unreadable)\n%s", code, exitSkipped, errs)
	}
	// Skipped items are named with file and line.
	for _, want := range []*regexp.Regexp{
		regexp.MustCompile(`bulletins-2022-07-13-00Z\.wmo:\d+: report carries no level data`),
		regexp.MustCompile(`bulletins-2022-07-13-00Z\.wmo:\d+: report read in part: PPDD`),
		regexp.MustCompile(`USM00070026-data-truncated\.txt:318: level count`),
		regexp.MustCompile(`igra2-data-format\.txt.*input format not recognised`),
	} {
		if !want.MatchString(errs) {
			t.Errorf("stderr lacks %s", want)
		}
	}
	code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv",
		"select source_format, count(*) as n from soundings group by 1 order by 1")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	// archive-v2: 321+2+2+662+14 (PROVENANCE.md; Göteborg's five copies
	// are two ascents, see TestIngestValidation); netCDF: 26 flights
	// (PROVENANCE.md); TEMP: 107 stations with level data in the bulletin
	// stream (five more send only regional remark groups) + Rio 83746.
	want := "source_format,n\narchive-v2,1001\nnetcdf-sonde,26\nwmo-temp,108\n"
	if out != want {
		t.Errorf("soundings per format:\n%s\nwant\n%s", out, want)
	}
}

// TestInPlaceEqualsStaged: a plain archive-v2 file is read in place (by
// station-year byte ranges); the same file gzipped is decompressed into a
// copy in the staging area first. Both give the same tables and the same
// skipped lines, on real files of ../shared/validation (PROVENANCE.md)
// joined into one file of three stations and years, the truncated Barrow
// file among them. (The pipeline's TestInPlaceEqualsDecoded compares both
// with the decoding path.)
func TestInPlaceEqualsStaged(t *testing.T) {
	v := sharedDir(t)
	var joined []byte
	for _, name := range []string{"USM00070026-data-truncated.txt", "SWM00002527-data-hour99.txt", "USM00074794-data-1950-portion.txt"} {
		b, err := os.ReadFile(filepath.Join(v, "archive-v2", name))
		if err != nil {
			t.Fatal(err)
		}
		joined = append(joined, b...)
	}
	plainDir, gzDir := t.TempDir(), t.TempDir()
	if err := os.WriteFile(filepath.Join(plainDir, "joined.txt"), joined, 0o644); err != nil {
		t.Fatal(err)
	}
	var zb bytes.Buffer
	zw := gzip.NewWriter(&zb)
	zw.Write(joined)
	zw.Close()
	// Same name: the kind of file is told by its first bytes.
	if err := os.WriteFile(filepath.Join(gzDir, "joined.txt"), zb.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	run := func(dir string) (string, string) {
		store := t.TempDir()
		code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, "--workers", "2", filepath.Join(dir, "joined.txt"))
		if code != exitSkipped {
			t.Fatalf("ingest %s: exit %d, want %d (the truncated file)\n%s", dir, code, exitSkipped, errs)
		}
		errs = regexp.MustCompile(`(?m)^time=\S+ `).ReplaceAllString(errs, "")
		return strings.ReplaceAll(dump(t, store), dir, "DIR"), strings.ReplaceAll(errs, dir, "DIR")
	}
	plain, plainErrs := run(plainDir)
	staged, stagedErrs := run(gzDir)
	if plain != staged {
		t.Errorf("tables differ between the file read in place and the gzipped copy")
	}
	if !strings.Contains(plainErrs, "DIR/joined.txt:318: level count") || plainErrs != stagedErrs {
		t.Errorf("skips differ or miss the truncated sounding at line 318:\nin place:\n%s\nstaged:\n%s", plainErrs, stagedErrs)
	}
	if n := strings.Count(plain, "USM00070026") + strings.Count(plain, "SWM00002527") + strings.Count(plain, "USM00074794"); n < 3+5+14 {
		t.Errorf("dump names the stations %d times: too short to be meaningful", n)
	}
}
