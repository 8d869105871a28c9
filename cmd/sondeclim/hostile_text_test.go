package main

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/engine"
)

// Item 7 of the store's hostile-input list (testdata/hostile/README.md):
// nothing is dropped silently.

// hostileFile returns the path of a file of the committed corpus, copied
// alone into a fresh directory (so that an ingest reads just it).
func hostileFile(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "hostile", name))
	if err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "in")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(dir, name)
	writeFile(t, p, string(b))
	return p
}

// ingestSum runs ingest into a new store and returns the exit code, the
// summary, the store and stderr.
func ingestSum(t *testing.T, args ...string) (int, engine.Summary, string, string) {
	t.Helper()
	root := t.TempDir()
	st, sum := filepath.Join(root, "store"), filepath.Join(root, "sum.json")
	code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--summary-json", sum, "--store", st}, args...)...)
	if code == exitFailure || code == exitUsage {
		t.Fatalf("ingest %v: exit %d\n%s", args, code, errs)
	}
	return code, readSummary(t, sum), st, errs
}

// storedHashes lists station, launch time and observation hash of every
// stored sounding.
func storedHashes(t *testing.T, st string) string {
	t.Helper()
	code, out, errs := runCmd(t, "query", "--store", st, "--format", "csv",
		"select station_id, launch_time, sounding_hash from soundings order by 1, 2")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	return out
}

// TestForcedFormatYieldsNothing: each file of the corpus ingested under a
// --format that is not its own stores nothing and says so: a skip naming
// the file (exit 3), never "0 skipped" with exit 0. A file that its own
// forced format reads without a sounding or an error (a header-only table)
// is a no_soundings skip; the same file detected is only a note (exit 0).
func TestForcedFormatYieldsNothing(t *testing.T) {
	own := map[string]string{"av2-clean.txt": "archive-v2", "csv-clean.csv": "tidy-csv", "temp-bom-cr-junk-2022-07-13.txt": "wmo-temp"}
	for name, format := range own {
		p := hostileFile(t, name)
		for _, force := range []string{"archive-v2", "tidy-csv", "wmo-temp", "bufr", "netcdf-sonde"} {
			if force == format {
				continue
			}
			code, s, _, _ := ingestSum(t, "--format", force, p)
			where := 0
			for _, k := range s.Skipped {
				if strings.Contains(k.Detail, p) {
					where++
				}
			}
			if code != exitSkipped || s.Soundings != 0 || where == 0 {
				t.Errorf("%s as %s: exit %d, %d soundings, skips %+v; want exit %d, none stored, a skip naming the file",
					name, force, code, s.Soundings, s.Skipped, exitSkipped)
			}
		}
	}
	hdrOnly := filepath.Join(t.TempDir(), "empty.csv")
	writeFile(t, hdrOnly, "station_id,launch_time_utc,pressure_hpa,height_m,temperature_c\n")
	code, s, _, _ := ingestSum(t, "--format", "tidy-csv", hdrOnly)
	if code != exitSkipped || len(s.Skipped) != 1 || s.Skipped[0].Reason != "no_soundings" || !strings.Contains(s.Skipped[0].Detail, "--format") {
		t.Errorf("header-only table, forced: exit %d, skips %+v; want one no_soundings skip", code, s.Skipped)
	}
	code, s, _, _ = ingestSum(t, hdrOnly)
	if code != exitOK || len(s.Notes) != 1 || s.Notes[0].Reason != "no_soundings" {
		t.Errorf("header-only table, detected: exit %d, notes %+v; want exit 0 and a no_soundings note", code, s.Notes)
	}
}

// TestMarksLineEndsJunk: the corpus's archive-v2 and tidy CSV files with a
// byte-order mark, CR LF or CR-only line ends store exactly the soundings
// of the clean file (same observation hashes); lines of text before the
// first header are one reported skip at line 1 naming the lines, and every
// sounding after them is stored (exit 3). The TEMP file (mark, CR-only,
// a line of text before its bulletin) stores both its reports.
func TestMarksLineEndsJunk(t *testing.T) {
	for _, tc := range []struct {
		clean, file string
		junk        string // reason of the junk skip, "" when none
	}{
		{"av2-clean.txt", "av2-bom-crlf.txt", ""},
		{"av2-clean.txt", "av2-cr.txt", ""},
		{"av2-clean.txt", "av2-junk.txt", "orphan_level"},
		{"csv-clean.csv", "csv-bom-cr-junk.csv", "junk"},
	} {
		_, _, ref, _ := ingestSum(t, hostileFile(t, tc.clean))
		want := storedHashes(t, ref)
		if strings.Count(want, "\n") != 4 {
			t.Fatalf("clean %s stores\n%s", tc.clean, want)
		}
		p := hostileFile(t, tc.file)
		code, s, st, _ := ingestSum(t, p)
		if got := storedHashes(t, st); got != want {
			t.Errorf("%s stores\n%s\nthe clean file\n%s", tc.file, got, want)
		}
		wantCode := exitOK
		if tc.junk != "" {
			wantCode = exitSkipped
			if len(s.Skipped) != 1 || s.Skipped[0].Reason != tc.junk || !strings.HasPrefix(s.Skipped[0].Detail, p+":1: ") ||
				!strings.Contains(s.Skipped[0].Detail, "lines 1-2") {
				t.Errorf("%s: skips %+v; want one %s at line 1 naming lines 1-2", tc.file, s.Skipped, tc.junk)
			}
		} else if len(s.Skipped) != 0 {
			t.Errorf("%s: skips %+v", tc.file, s.Skipped)
		}
		if code != wantCode {
			t.Errorf("%s: exit %d, want %d", tc.file, code, wantCode)
		}
	}
	p := hostileFile(t, "temp-bom-cr-junk-2022-07-13.txt")
	code, s, st, _ := ingestSum(t, p)
	got := storedHashes(t, st)
	if code != exitSkipped || s.Soundings != 2 || !strings.Contains(got, "\n99901,") || !strings.Contains(got, "\n99902,") ||
		len(s.Skipped) != 1 || s.Skipped[0].Reason != "junk" || !strings.HasPrefix(s.Skipped[0].Detail, p+":1: ") {
		t.Errorf("TEMP with mark, CR-only ends and junk: exit %d, %d soundings, skips %+v\n%s", code, s.Soundings, s.Skipped, got)
	}
}

// TestTidyNumbers: the corpus's csv-numbers.csv holds eight soundings; six
// carry what FORMAT.md does not allow (hexadecimal, Inf, a digit separator,
// NaN, an unreadable launch time on all three rows of its sounding, a value
// beyond float64) and are each reported once at their first bad row; the
// first and the last (written "+1000.", "15." and "1.05e1", all allowed)
// are stored.
func TestTidyNumbers(t *testing.T) {
	p := hostileFile(t, "csv-numbers.csv")
	code, s, st, _ := ingestSum(t, p)
	var lines []int
	for _, k := range s.Skipped {
		if k.Reason != "bad_level" {
			t.Errorf("unexpected skip %+v", k)
		}
		rest, _ := strings.CutPrefix(k.Detail, p+":")
		l, _, _ := strings.Cut(rest, ":")
		n, _ := strconv.Atoi(l)
		lines = append(lines, n)
	}
	slices.Sort(lines)
	if code != exitSkipped || s.Soundings != 2 || fmt.Sprint(lines) != "[5 9 13 14 17 21]" {
		t.Errorf("exit %d, %d soundings, skips at lines %v; want exit 3, 2 stored, skips at 5,9,13,14,17,21\n%+v", code, s.Soundings, lines, s.Skipped)
	}
	got := storedHashes(t, st)
	if !strings.Contains(got, "QQX01,2024-07-01T11:00:00Z,") || !strings.Contains(got, "QQX01,2024-07-04T23:00:00Z,") {
		t.Errorf("stored:\n%s", got)
	}
}

// TestHugeTokenShortMessage: a tidy CSV whose pressure field is one token
// of 32 MB (generated here, not committed) is one reported skip whose
// message quotes at most about 100 bytes of it, and stderr stays small; the
// good sounding after it is stored.
func TestHugeTokenShortMessage(t *testing.T) {
	p := filepath.Join(t.TempDir(), "huge.csv")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	fmt.Fprint(f, "station_id,launch_time_utc,pressure_hpa,height_m,temperature_c\nQQX02,2024-07-01T11:00:00Z,")
	chunk := strings.Repeat("1x", 1<<20)
	for range 16 {
		f.WriteString(chunk)
	}
	fmt.Fprint(f, ",110,15\nQQX02,2024-07-01T23:00:00Z,1000,110,15\nQQX02,2024-07-01T23:00:00Z,925,770,11\n")
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	code, s, _, errs := ingestSum(t, "--log", "human", p)
	if code != exitSkipped || s.Soundings != 1 || len(s.Skipped) != 1 || len(s.Skipped[0].Detail) > 400 || len(errs) > 4096 {
		t.Errorf("exit %d, %d soundings, %d skips, message %d bytes, stderr %d bytes; want 3, 1, 1, under 400 and 4096",
			code, s.Soundings, len(s.Skipped), len(s.Skipped[0].Detail), len(errs))
	}
}
