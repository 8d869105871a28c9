package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/schema/store"
)

// The tests in this file attack the store with hostile input (see the
// package's testdata/hostile/README.md for the corpus): identifiers that
// look like paths, damaged files, mixed layouts. Each asserts the exact
// outcome: nothing written outside the store, every good sounding of the
// same run stored, the reason and line of each skip, and the exit code.

// synthSoundings returns the invented archive (archive-v2 text) of one
// station and year, split into its soundings (each a header line and its
// level lines).
func synthSoundings(t *testing.T, station int) []string {
	t.Helper()
	var b bytes.Buffer
	if _, err := synth.Write(&b, synth.Config{Seed: 7, StartYear: 2003, Years: 1, StationIndex: station}); err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, s := range strings.SplitAfter(b.String(), "\n#") {
		if !strings.HasPrefix(s, "#") {
			s = "#" + s
		}
		out = append(out, strings.TrimSuffix(s, "#"))
	}
	return out
}

// withID replaces the 11-character station field of an archive-v2 header.
func withID(sounding, id string) string {
	if len(id) != 11 {
		panic("archive-v2 ids are 11 bytes")
	}
	return "#" + id + sounding[12:]
}

// listOutside returns the files under root that are not under any of keep.
func listOutside(t *testing.T, root string, keep ...string) []string {
	t.Helper()
	var out []string
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		for _, k := range keep {
			if p == k || strings.HasPrefix(p, k+string(filepath.Separator)) {
				if d.IsDir() && p != k {
					return filepath.SkipDir
				}
				return nil
			}
		}
		if !d.IsDir() {
			out = append(out, p)
		}
		return nil
	})
	return out
}

// TestHostileStationIDs: station identifiers from the archive-v2 header
// and the tidy CSV station_id column that hold '/', "..", '=', '?', '*',
// '%', a newline, NUL, invalid UTF-8 or 300 bytes. Path-like ones are
// stored under an escaped partition directory inside the store and read
// back intact by DuckDB; unstorable ones (control characters, invalid
// UTF-8, too long) reject that sounding alone with file:line; every good
// sounding of the same run is stored; the exit code says something was
// skipped (3).
func TestHostileStationIDs(t *testing.T) {
	root := t.TempDir()
	deep := filepath.Join(root, "a", "b", "c")
	st := filepath.Join(deep, "store")
	in := filepath.Join(root, "in")
	if err := os.MkdirAll(in, 0o755); err != nil {
		t.Fatal(err)
	}
	snd := synthSoundings(t, 0)
	// Archive-v2: 11-byte ids. Each hostile sounding is followed by a good one.
	storable := []string{"../../../..", "x/../../..y", "st=a?b*c[d]", "%2E%2E%2Fab", ".hidden-id."}
	unstorable := []string{"ab\x00cd\x00efghi", "ab\xffcdefghij", "ab\x01cdefghij"}
	var av2 strings.Builder
	for i, id := range append(append([]string{}, storable...), unstorable...) {
		av2.WriteString(withID(snd[2*i], id))
		av2.WriteString(snd[2*i+1])
	}
	goodAV2 := len(storable) + len(unstorable) // the good ones between them
	writeFile(t, filepath.Join(in, "hostile-av2.txt"), av2.String())

	// Tidy CSV: any length, quoted newlines.
	long := strings.Repeat("L", 300)
	csvIDs := []string{"../../../../../../../../tmp/escape", "a=b", "?*[", long, "new\nline", "nul\x00x", "bad\xffutf8", "GOOD-CSV-1"}
	var csv strings.Builder
	csv.WriteString("station_id,launch_time_utc,pressure_hpa,height_m,temperature_c\n")
	line := 2
	csvLines := map[string]int{}
	for i, id := range csvIDs {
		q := `"` + strings.ReplaceAll(id, `"`, `""`) + `"`
		csvLines[id] = line
		for _, lv := range [][3]float64{{1000, 100, 15}, {925, 760, 11}, {850, 1500, 6}} {
			fmt.Fprintf(&csv, "%s,2004-0%d-01T12:00:00Z,%g,%g,%g\n", q, i+1, lv[0], lv[1], lv[2])
			line += 1 + strings.Count(id, "\n")
		}
	}
	writeFile(t, filepath.Join(in, "hostile.csv"), csv.String())

	sum := filepath.Join(root, "sum.json")
	code, _, errs := runCmd(t, "ingest", "--quiet", "--workers", "2", "--summary-json", sum, "--store", st, in)
	if code != exitSkipped {
		t.Fatalf("exit %d, want %d (some input skipped)\n%s", code, exitSkipped, errs)
	}
	if out := listOutside(t, root, st, in, sum); len(out) > 0 {
		t.Fatalf("files written outside the store: %v", out)
	}
	s := readSummary(t, sum)
	wantStored := len(storable) + goodAV2 + 4 // CSV: the three path-like ids and GOOD-CSV-1
	if s.Soundings != wantStored {
		t.Errorf("%d soundings stored, want %d", s.Soundings, wantStored)
	}
	// Every skip is a bad_station_id at the sounding's own header line.
	bad := map[string]bool{}
	for _, k := range s.Skipped {
		if k.Reason != "bad_station_id" || !strings.Contains(k.Detail, k.Where+": ") {
			t.Errorf("unexpected skip %+v", k)
		}
		bad[k.Where] = true
	}
	av2Path := filepath.Join(in, "hostile-av2.txt")
	csvPath := filepath.Join(in, "hostile.csv")
	want := map[string]bool{}
	hdr := 1
	for i := range storable {
		hdr += strings.Count(snd[2*i], "\n") + strings.Count(snd[2*i+1], "\n")
	}
	for j := range unstorable {
		i := len(storable) + j
		want[fmt.Sprintf("%s:%d", av2Path, hdr)] = true
		hdr += strings.Count(snd[2*i], "\n") + strings.Count(snd[2*i+1], "\n")
	}
	for _, id := range []string{long, "new\nline", "nul\x00x", "bad\xffutf8"} {
		want[fmt.Sprintf("%s:%d", csvPath, csvLines[id])] = true
	}
	for w := range want {
		if !bad[w] {
			t.Errorf("no bad_station_id skip at %s; got %v", w, bad)
		}
	}
	if len(bad) != len(want) {
		t.Errorf("%d skips, want %d: %v", len(bad), len(want), bad)
	}
	for _, k := range s.Skipped {
		if len(k.Detail) > 400 {
			t.Errorf("skip message of %d bytes quotes too much input", len(k.Detail))
		}
	}
	// DuckDB reads the escaped partitions back with the ids intact.
	code, out, errs := runCmd(t, "query", "--store", st, "--format", "json",
		"select station_id, count(*) as n from soundings group by station_id order by station_id")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	var rows []struct {
		StationID string `json:"station_id"`
		N         int    `json:"n"`
	}
	if err := json.Unmarshal([]byte(out), &rows); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	got := map[string]int{}
	for _, r := range rows {
		got[r.StationID] = r.N
	}
	for _, id := range append(storable, "../../../../../../../../tmp/escape", "a=b", "?*[", "GOOD-CSV-1") {
		if got[id] != 1 {
			t.Errorf("station %q: %d soundings read back, want 1 (all: %v)", id, got[id], got)
		}
	}
	if got[synth.StationAt(0).ID] != goodAV2 {
		t.Errorf("good station: %d soundings, want %d", got[synth.StationAt(0).ID], goodAV2)
	}
	// Every partition directory is a direct, escaped child of its table.
	ms, err := store.ReadAll(st)
	if err != nil || len(ms) != 1 {
		t.Fatal(ms, err)
	}
	for _, p := range ms[0].Partitions {
		for _, f := range p.Files {
			parts := strings.Split(f, string(filepath.Separator))
			if len(parts) != 4 || strings.ContainsAny(parts[1][len("station="):], "/.=?*[]") {
				t.Errorf("partition file %q is not TABLE/station=ESCAPED/year=Y/part", f)
			}
		}
	}
	// A second run is not disturbed by the escaped directories.
	code, _, errs = runCmd(t, "ingest", "--quiet", "--store", st, in)
	if code != exitOK {
		t.Errorf("second run: exit %d, want %d (inputs unchanged)\n%s", code, exitOK, errs)
	}
}

func writeFile(t *testing.T, path, content string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
}
