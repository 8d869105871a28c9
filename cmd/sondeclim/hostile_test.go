package main

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"

	"github.com/sondeclim/sondeclim/engine"
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
	return splitSoundings(b.String())
}

// splitSoundings splits archive-v2 text into its soundings.
func splitSoundings(text string) []string {
	var out []string
	for _, s := range strings.SplitAfter(text, "\n#") {
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
	// DuckDB's Hive partitioning decodes the escaped directory back to the id.
	glob := strings.ReplaceAll(filepath.Join(st, "soundings"), "'", "''") + "/**/*.parquet"
	code, out, errs = runCmd(t, "query", "--store", st, "--format", "csv",
		"select count(*) filter (where station <> station_id) as differ, count(*) as n from read_parquet('"+glob+
			"', hive_partitioning = true, hive_types = {'station': VARCHAR})")
	if code != exitOK || out != fmt.Sprintf("differ,n\n0,%d\n", wantStored) {
		t.Errorf("Hive station values against station_id: exit %d, %q, want 0 of %d differ\n%s", code, out, wantStored, errs)
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

// twoStations writes the invented archives of two stations (one year each)
// to dir and returns dir.
func twoStations(t *testing.T, dir string) string {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	for i := range 2 {
		if _, _, err := synth.WriteFile(dir, synth.Config{Seed: 3, StartYear: 2003, Years: 1, StationIndex: i}); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// TestLayoutsCannotMix: a store records its shard layout; an unsharded
// run into a sharded store, a run with another N, and a sharded run into
// an unsharded store are refused with a message naming the layout (exit
// 1), and leave the store as it was; a store holding manifests of two
// layouts (written before the record existed) is refused too.
func TestLayoutsCannotMix(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "in"))
	sharded, plain := filepath.Join(root, "sharded"), filepath.Join(root, "plain")
	mustIngest(t, "--store", sharded, "--shard", "1/2", in)
	mustIngest(t, "--store", plain, in)
	for _, tc := range []struct {
		store string
		args  []string
		want  string
	}{
		{sharded, nil, "is 2 shards"},
		{sharded, []string{"--shard", "1/3"}, "is 2 shards"},
		{sharded, []string{"--shard", "2/3", "--full"}, "is 2 shards"},
		{plain, []string{"--shard", "1/2"}, "is unsharded"},
	} {
		before := snapshot(t, tc.store)
		code, _, errs := runCmd(t, append(append([]string{"ingest", "--quiet", "--store", tc.store}, tc.args...), in)...)
		if code != exitFailure || !strings.Contains(errs, tc.want) || !strings.Contains(errs, "new store directory") {
			t.Errorf("ingest %v into %s: exit %d, want %d with %q\n%s", tc.args, filepath.Base(tc.store), code, exitFailure, tc.want, errs)
		}
		after := snapshot(t, tc.store)
		for f, h := range before {
			if after[f] != h && !strings.HasPrefix(f, "_sondeclim/lock") {
				t.Errorf("refused run changed %s", f)
			}
		}
	}
	mustIngest(t, "--store", sharded, "--shard", "2/2", in) // the same layout is fine
	// A store mixed before the record existed: both manifests, no record.
	mixed := filepath.Join(root, "mixed")
	mustIngest(t, "--store", mixed, in)
	b, err := os.ReadFile(filepath.Join(sharded, "_sondeclim", "manifest-1-of-2.json"))
	if err != nil {
		t.Fatal(err)
	}
	writeFile(t, filepath.Join(mixed, "_sondeclim", "manifest-1-of-2.json"), string(b))
	os.Remove(filepath.Join(mixed, "_sondeclim", "layout.json"))
	code, _, errs := runCmd(t, "ingest", "--quiet", "--store", mixed, in)
	if code != exitFailure || !strings.Contains(errs, "different layouts") {
		t.Errorf("mixed store: exit %d, want %d naming the mixed layouts\n%s", code, exitFailure, errs)
	}
}

// TestLayoutRace: an unsharded run that is still running (paused after
// staging) holds the store's layout; a sharded run started meanwhile is
// refused at once instead of writing the same stations a second time.
func TestLayoutRace(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "in"))
	st := filepath.Join(root, "store")
	first := startSub(t, "staged", "ingest", "--quiet", "--store", st, in)
	code, _, errs := runCmd(t, "ingest", "--quiet", "--store", st, "--shard", "1/2", in)
	if code != exitFailure || !strings.Contains(errs, "is unsharded") {
		t.Errorf("sharded run during an unsharded one: exit %d, want %d\n%s", code, exitFailure, errs)
	}
	first.Process.Signal(os.Interrupt)
	first.Process.Kill()
	first.Wait()
}

// TestStoreIsShareable: files of a store follow the umask (0644 under 022,
// 0640 under 027), and a store directory whose name holds glob characters
// works for ingest, a second (incremental) ingest and query.
func TestStoreIsShareable(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "in"))
	st := filepath.Join(root, "st*re [x]?")
	old := syscall.Umask(0o022)
	mustIngest(t, "--store", st, in)
	syscall.Umask(0o027)
	mustIngest(t, "--store", st, "--full", in)
	syscall.Umask(old)
	n := 0
	filepath.WalkDir(st, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || strings.HasPrefix(d.Name(), "lock-") {
			return err
		}
		fi, _ := d.Info()
		rel, _ := filepath.Rel(st, p)
		if m := fi.Mode().Perm(); m != 0o640 && m != 0o644 {
			t.Errorf("%s has mode %o, want 0644 or 0640 (the umask at its writing)", rel, m)
		}
		n++
		return nil
	})
	if n < 7 {
		t.Fatalf("only %d files in the store", n)
	}
	code, out, errs := runCmd(t, "query", "--store", st, "--format", "csv", "select count(*) as n from soundings")
	if code != exitOK || out != "n\n1460\n" {
		t.Errorf("query of a store named with glob characters: exit %d, %q\n%s", code, out, errs)
	}
	code, _, errs = runCmd(t, "ingest", "--quiet", "--store", st, in)
	if code != exitOK {
		t.Errorf("incremental ingest: exit %d\n%s", code, errs)
	}
}

// TestDeletedManifest: with its manifest deleted, a store is refused by
// ingest and by query (exit 1) with a message that says the manifest is
// missing and what to do, instead of serving every file it finds.
func TestDeletedManifest(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "in"))
	st := filepath.Join(root, "store")
	mustIngest(t, "--store", st, in)
	if err := os.Remove(filepath.Join(st, "_sondeclim", "manifest-all.json")); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"ingest", "--quiet", "--store", st, in},
		{"query", "--store", st, "select count(*) from soundings"},
	} {
		code, _, errs := runCmd(t, args...)
		if code != exitFailure || !strings.Contains(errs, "no manifest") || !strings.Contains(errs, "deleted") ||
			!strings.Contains(errs, "NEWDIR") {
			t.Errorf("%s with the manifest deleted: exit %d, want %d and a message saying what happened and what to do\n%s",
				args[0], code, exitFailure, errs)
		}
	}
}

// TestDamageDetected (4 station-years of 10 tables: 40 files): a truncated soundings file, a levels file with one
// flipped byte and a deleted file are each named by verify (exit 3, with
// the problem); ingest rebuilds the missing and truncated ones on its own
// and, with --verify, the altered one, after which the store verifies clean
// and every table equals that of a store built once from the same inputs.
func TestDamageDetected(t *testing.T) {
	root := t.TempDir()
	in := filepath.Join(root, "in")
	if err := os.MkdirAll(in, 0o755); err != nil {
		t.Fatal(err)
	}
	for i := range 2 {
		if _, _, err := synth.WriteFile(in, synth.Config{Seed: 5, StartYear: 2003, Years: 2, StationIndex: i}); err != nil {
			t.Fatal(err)
		}
	}
	st, clean := filepath.Join(root, "store"), filepath.Join(root, "clean")
	mustIngest(t, "--store", st, in)
	mustIngest(t, "--store", clean, in)
	code, out, _ := runCmd(t, "verify", "--store", st)
	if code != exitOK || !strings.HasPrefix(out, "40 files checked, 0 damaged") {
		t.Fatalf("fresh store: exit %d\n%s", code, out)
	}
	ms, _ := store.ReadAll(st)
	keys := []string{}
	for k := range ms[0].Partitions {
		keys = append(keys, k)
	}
	if len(keys) != 4 {
		t.Fatalf("%d partitions, want 4", len(keys))
	}
	sortStrings(keys)
	file := func(k, table string) string { return filepath.Join(st, ms[0].Partitions[k].Files[table]) }
	truncated, flipped, deleted := file(keys[0], "soundings"), file(keys[1], "levels"), file(keys[2], "mixing_heights")
	b, _ := os.ReadFile(truncated)
	writeFile(t, truncated, string(b[:len(b)/2]))
	b, _ = os.ReadFile(flipped)
	b[len(b)/3] ^= 0x10
	writeFile(t, flipped, string(b))
	os.Remove(deleted)

	code, out, _ = runCmd(t, "verify", "--store", st)
	if code != exitSkipped {
		t.Errorf("damaged store: exit %d, want %d", code, exitSkipped)
	}
	for f, problem := range map[string]string{truncated: "size", flipped: "checksum", deleted: "missing"} {
		rel, _ := filepath.Rel(st, f)
		found := false
		for _, l := range strings.Split(out, "\n") {
			found = found || strings.HasPrefix(l, "damaged: "+rel+" (partition ") && strings.Contains(l, "): "+problem+": ")
		}
		if !found {
			t.Errorf("verify does not name %s as %s:\n%s", rel, problem, out)
		}
	}
	if !strings.Contains(out, "40 files checked, 3 damaged") {
		t.Errorf("verify summary:\n%s", out)
	}
	// Presence and size are checked by every ingest.
	sum := filepath.Join(root, "sum.json")
	code, _, errs := runCmd(t, "ingest", "--quiet", "--summary-json", sum, "--store", st, in)
	if code != exitOK {
		t.Fatalf("repairing ingest: exit %d\n%s", code, errs)
	}
	if s := readSummary(t, sum); s.PartitionsWritten != 2 {
		t.Errorf("ingest rebuilt %d partitions, want 2 (truncated and missing files)", s.PartitionsWritten)
	}
	code, out, _ = runCmd(t, "verify", "--store", st)
	if code != exitSkipped || !strings.Contains(out, "1 damaged") {
		t.Errorf("after a plain ingest the altered file remains: exit %d\n%s", code, out)
	}
	code, _, errs = runCmd(t, "ingest", "--quiet", "--verify", "--summary-json", sum, "--store", st, in)
	if code != exitOK {
		t.Fatalf("ingest --verify: exit %d\n%s", code, errs)
	}
	if s := readSummary(t, sum); s.PartitionsWritten != 1 || len(s.Notes) == 0 || s.Notes[0].Reason != "damaged_store_file" {
		t.Errorf("ingest --verify: %d partitions rebuilt, notes %+v; want 1 and a damaged_store_file note", s.PartitionsWritten, s.Notes)
	}
	code, out, _ = runCmd(t, "verify", "--store", st)
	if code != exitOK || !strings.Contains(out, "0 damaged") {
		t.Errorf("after repair: exit %d\n%s", code, out)
	}
	if dump(t, st) != dump(t, clean) {
		t.Errorf("the repaired store differs from a clean one")
	}
}

func sortStrings(s []string) { slices.Sort(s) }

// TestInputIdentity: an input named by a relative and then an absolute
// path, or from another working directory, is one input; an archive folder
// that moved keeps its soundings without doubling them (a note says so); a
// deleted input never makes a run fail: its soundings stay with a note
// (exit 0), a partition whose rebuild needs it is held as committed with
// the new soundings for it held back (reported, exit 3) until it is
// restored, and --prune-missing removes its soundings.
func TestInputIdentity(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "in"))
	st := filepath.Join(root, "store")
	sum := filepath.Join(root, "sum.json")
	a := synth.StationAt(0).ID + "-data.txt"
	b := synth.StationAt(1).ID + "-data.txt"
	t.Chdir(root)
	ingest := func(wantCode int, args ...string) engine.Summary {
		t.Helper()
		code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--summary-json", sum, "--store", st}, args...)...)
		if code != wantCode {
			t.Fatalf("ingest %v: exit %d, want %d\n%s", args, code, wantCode, errs)
		}
		return readSummary(t, sum)
	}
	notes := func(s engine.Summary, reason string) int {
		n := 0
		for _, k := range append(s.Notes, s.Skipped...) {
			if k.Reason == reason {
				n++
			}
		}
		return n
	}
	s := ingest(exitOK, filepath.Join("in", a), filepath.Join("in", b))
	if s.Soundings != 1460 {
		t.Fatalf("%d soundings, want 1460", s.Soundings)
	}
	for _, args := range [][]string{{filepath.Join(root, "in", a), filepath.Join(root, "in", b)}, {"./in/../in"}} {
		s = ingest(exitOK, args...)
		if s.InputsUnchanged != 2 || s.InputsRead != 0 || s.Soundings != 1460 || s.Committed {
			t.Errorf("ingest %v: %d unchanged, %d read, %d soundings, committed %v; want 2, 0, 1460, false",
				args, s.InputsUnchanged, s.InputsRead, s.Soundings, s.Committed)
		}
	}
	t.Chdir(in)
	if s = ingest(exitOK, a, b); s.InputsUnchanged != 2 {
		t.Errorf("from another working directory: %d unchanged, want 2", s.InputsUnchanged)
	}
	t.Chdir(root)

	// The archive folder moves.
	if err := os.Rename(in, filepath.Join(root, "moved")); err != nil {
		t.Fatal(err)
	}
	s = ingest(exitOK, "moved")
	if s.Soundings != 1460 || s.DuplicatesMerged != 0 || notes(s, "input_moved") != 2 || notes(s, "input_missing") != 0 {
		t.Errorf("moved folder: %d soundings, %d duplicates, notes %+v; want 1460, 0, two input_moved", s.Soundings, s.DuplicatesMerged, s.Notes)
	}
	ms, _ := store.ReadAll(st)
	for f := range ms[0].Inputs {
		if !strings.HasPrefix(f, filepath.Join(root, "moved")+string(filepath.Separator)) {
			t.Errorf("manifest still names input %s", f)
		}
	}
	if s = ingest(exitOK, "moved"); s.InputsUnchanged != 2 {
		t.Errorf("after the move: %d unchanged, want 2", s.InputsUnchanged)
	}

	// Station B's file is deleted: its soundings stay, with a note.
	bPath := filepath.Join(root, "moved", b)
	bText, _ := os.ReadFile(bPath)
	os.Remove(bPath)
	s = ingest(exitOK, "moved")
	if s.Soundings != 1460 || notes(s, "input_missing") != 1 {
		t.Errorf("deleted input: %d soundings, notes %+v; want 1460 and an input_missing note", s.Soundings, s.Notes)
	}
	// A correction for station B's year arrives while B's file is gone:
	// the partition cannot be rebuilt without it, so it is held.
	snd := splitSoundings(string(bText))
	corr := filepath.Join(root, "moved", "correction.txt")
	lines := strings.SplitAfter(snd[5], "\n")
	lv := []byte(strings.TrimRight(lines[1], "\n"))
	lv[len(lv)-1] = '0' + (lv[len(lv)-1]-'0'+1)%10 // the first level's wind speed, by 0.1 m/s
	lines[1] = string(lv) + "\n"
	writeFile(t, corr, strings.Join(lines, ""))
	s = ingest(exitSkipped, "moved")
	if s.Soundings != 1460 || notes(s, "partition_held") != 1 {
		t.Errorf("held partition: %d soundings, skips %+v; want 1460 and one partition_held", s.Soundings, s.Skipped)
	}
	ms, _ = store.ReadAll(st)
	if p := ms[0].Inputs[corr]; p == nil || len(p.Pending) != 1 {
		t.Errorf("the correction is not recorded as pending: %+v", p)
	}
	// B is restored: the held partition is rebuilt with the correction.
	writeFile(t, bPath, string(bText))
	s = ingest(exitOK, "moved")
	if s.Soundings != 1460 || s.DuplicatesMerged != 1 || s.PartitionsWritten != 1 || len(s.Skipped) != 0 {
		t.Errorf("after restoring: %d soundings, %d duplicates merged, %d partitions written, skips %+v; want 1460, 1 (the correction "+
			"and its original), 1, none", s.Soundings, s.DuplicatesMerged, s.PartitionsWritten, s.Skipped)
	}
	ms, _ = store.ReadAll(st)
	if p := ms[0].Inputs[corr]; p == nil || len(p.Pending) != 0 {
		t.Errorf("the correction is still pending: %+v", p)
	}
	// --prune-missing removes a deleted input's soundings.
	os.Remove(bPath)
	os.Remove(corr)
	s = ingest(exitOK, "--prune-missing", "moved")
	if s.Soundings != 730 || notes(s, "input_pruned") != 2 {
		t.Errorf("--prune-missing: %d soundings, notes %+v; want 730 (station A only) and two input_pruned", s.Soundings, s.Notes)
	}
}

// TestCorruptContainers: a zip member that fails its CRC (one byte of a
// stored member flipped) contributes no sounding while the members before
// and after it are stored whole; a gzip stream cut in the middle keeps
// only soundings identical to those of the intact file (the last one read
// is dropped, as it may be cut). Both are reported skips (exit 3).
func TestCorruptContainers(t *testing.T) {
	root := t.TempDir()
	in := twoStations(t, filepath.Join(root, "src"))
	a, _ := os.ReadFile(filepath.Join(in, synth.StationAt(0).ID+"-data.txt"))
	b, _ := os.ReadFile(filepath.Join(in, synth.StationAt(1).ID+"-data.txt"))
	c, _ := os.ReadFile(filepath.Join(in, synth.StationAt(0).ID+"-data.txt")) // member 3: station A again
	c = []byte(strings.ReplaceAll(string(c), "#"+synth.StationAt(0).ID, "#ZZXCOPY0003"))

	var zb bytes.Buffer
	zw := zip.NewWriter(&zb)
	for i, m := range [][]byte{a, b, c} {
		f, err := zw.CreateHeader(&zip.FileHeader{Name: fmt.Sprintf("m%d.txt", i+1), Method: zip.Store})
		if err != nil {
			t.Fatal(err)
		}
		f.Write(m)
	}
	zw.Close()
	z := zb.Bytes()
	flip := bytes.Index(z, b[1000:1040]) // a byte inside member 2's data
	if flip < 0 {
		t.Fatal("member 2 not found in the archive")
	}
	z[flip] ^= 0x01
	dir := filepath.Join(root, "zip")
	os.MkdirAll(dir, 0o755)
	writeFile(t, filepath.Join(dir, "three.zip"), string(z))
	st := filepath.Join(root, "zstore")
	sum := filepath.Join(root, "sum.json")
	code, _, errs := runCmd(t, "ingest", "--quiet", "--summary-json", sum, "--store", st, dir)
	if code != exitSkipped {
		t.Fatalf("zip with a bad CRC: exit %d, want %d\n%s", code, exitSkipped, errs)
	}
	s := readSummary(t, sum)
	// The flipped byte may also make a line of m2.txt malformed before the
	// CRC is checked at the member's end; every skip is in m2.txt.
	corrupt := 0
	for _, k := range s.Skipped {
		if !strings.Contains(k.Where, "three.zip!m2.txt") {
			t.Errorf("skip outside the damaged member: %+v", k)
		}
		if k.Reason == "corrupt_member" {
			corrupt++
		}
	}
	if s.Soundings != 1460 || corrupt != 1 {
		t.Errorf("bad CRC: %d soundings (want 1460: members 1 and 3), skips %+v (want one corrupt_member for m2.txt)", s.Soundings, s.Skipped)
	}
	code, out, _ := runCmd(t, "query", "--store", st, "--format", "csv",
		"select count(*) as n from soundings where station_id = '"+synth.StationAt(1).ID+"'")
	if code != exitOK || out != "n\n0\n" {
		t.Errorf("soundings of the member with the bad CRC stored: %q", out)
	}

	// A gzip stream cut in the middle.
	var gb bytes.Buffer
	gw := gzip.NewWriter(&gb)
	gw.Write(a)
	gw.Close()
	gdir := filepath.Join(root, "gz")
	os.MkdirAll(gdir, 0o755)
	writeFile(t, filepath.Join(gdir, "cut.txt.gz"), string(gb.Bytes()[:gb.Len()/2]))
	gst, clean := filepath.Join(root, "gstore"), filepath.Join(root, "clean")
	code, _, errs = runCmd(t, "ingest", "--quiet", "--summary-json", sum, "--store", gst, gdir)
	if code != exitSkipped {
		t.Fatalf("cut gzip: exit %d, want %d\n%s", code, exitSkipped, errs)
	}
	s = readSummary(t, sum)
	truncated := 0
	for _, k := range s.Skipped {
		if k.Reason == "truncated" {
			truncated++
		}
	}
	if truncated != 1 || s.Soundings < 100 || s.Soundings >= 730 {
		t.Errorf("cut gzip: %d soundings, skips %+v; want some of 730 and a truncated skip", s.Soundings, s.Skipped)
	}
	// The skip names the file and where the content stops: the bytes the
	// standard library's decoder (compress/gzip, not the one ingest uses)
	// gets out of the cut stream before its unexpected end.
	zr, err := gzip.NewReader(bytes.NewReader(gb.Bytes()[:gb.Len()/2]))
	if err != nil {
		t.Fatal(err)
	}
	prefix, err := io.ReadAll(zr)
	if !errors.Is(err, io.ErrUnexpectedEOF) || !bytes.HasPrefix(a, prefix) {
		t.Fatalf("compress/gzip on the cut stream: %d bytes, %v", len(prefix), err)
	}
	// Decoders may differ by what they hold back of the last
	// back-reference the cut splits: at most its length, 258 bytes (RFC
	// 1951 §3.2.5, the longest match; from memory). Measured: 2 bytes.
	for _, k := range s.Skipped {
		if k.Reason != "truncated" {
			continue
		}
		var at int
		_, after, _ := strings.Cut(k.Detail, ") at byte ")
		if _, err := fmt.Sscanf(after, "%d of its decompressed content", &at); err != nil || !strings.Contains(k.Where, "cut.txt.gz") ||
			at > len(prefix)+258 || at < len(prefix)-258 {
			t.Errorf("cut gzip skip %+v: want the file named and the byte where its content stops, within 258 of %d (%v)", k, len(prefix), err)
		}
	}
	mustIngest(t, "--store", clean, filepath.Join(in, synth.StationAt(0).ID+"-data.txt"))
	hashes := func(store string) map[string]string {
		code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv",
			"select launch_time, sounding_hash from soundings order by 1")
		if code != exitOK {
			t.Fatalf("query: %s", errs)
		}
		m := map[string]string{}
		for _, l := range strings.Split(strings.TrimSpace(out), "\n")[1:] {
			k, v, _ := strings.Cut(l, ",")
			m[k] = v
		}
		return m
	}
	whole, kept := hashes(clean), hashes(gst)
	if len(kept) != s.Soundings {
		t.Fatalf("%d rows, summary says %d", len(kept), s.Soundings)
	}
	for k, h := range kept {
		if whole[k] != h {
			t.Errorf("sounding %s from the cut stream differs from the intact file's (hash %s, want %s)", k, h, whole[k])
		}
	}
}

// TestDecompressionBudgets: the per-input budget counts all members of a
// zip together (the second member of two is refused, the first stored);
// the per-run budget defers the inputs left when it is used up to the next
// run, which reads them (with one worker, so that which input is deferred
// is fixed); a station-year over the partition bound is refused with a
// reason, the other station stored; two that fit one at a time are built
// one at a time; a TEMP input over the reader's bound
// is refused, not decoded into gigabytes of groups. Each is a reported
// skip (exit 3).
func TestDecompressionBudgets(t *testing.T) {
	root := t.TempDir()
	src := twoStations(t, filepath.Join(root, "src"))
	a, _ := os.ReadFile(filepath.Join(src, synth.StationAt(0).ID+"-data.txt"))
	b, _ := os.ReadFile(filepath.Join(src, synth.StationAt(1).ID+"-data.txt"))
	sum := filepath.Join(root, "sum.json")
	ingest := func(wantCode int, args ...string) engine.Summary {
		t.Helper()
		code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--workers", "1", "--summary-json", sum}, args...)...)
		if code != wantCode {
			t.Fatalf("ingest %v: exit %d, want %d\n%s", args, code, wantCode, errs)
		}
		return readSummary(t, sum)
	}
	reasons := func(s engine.Summary) map[string]int { return s.SkippedByReason() }

	// Per input: two members of about 3 MB each under a 4 MB budget.
	zdir := filepath.Join(root, "zip")
	os.MkdirAll(zdir, 0o755)
	var zb bytes.Buffer
	zw := zip.NewWriter(&zb)
	for i, m := range [][]byte{a, b} {
		f, _ := zw.Create(fmt.Sprintf("m%d.txt", i+1))
		f.Write(m)
	}
	zw.Close()
	writeFile(t, filepath.Join(zdir, "two.zip"), zb.String())
	s := ingest(exitSkipped, "--store", filepath.Join(root, "s1"), "--max-input-bytes", fmt.Sprint(len(a)+len(b)/2), zdir)
	if s.Soundings != 730 || reasons(s)["too_large"] != 1 || !strings.Contains(s.Skipped[0].Detail, "per input") {
		t.Errorf("per-input budget: %d soundings, skips %+v; want 730 (member 1) and one too_large naming the budget", s.Soundings, s.Skipped)
	}

	// Per run: three gzip inputs, a budget for two and a half.
	gdir := filepath.Join(root, "gz")
	os.MkdirAll(gdir, 0o755)
	for i, text := range []string{string(a), string(b), strings.ReplaceAll(string(a), "#"+synth.StationAt(0).ID, "#ZZXCOPY0003")} {
		var gb bytes.Buffer
		gw := gzip.NewWriter(&gb)
		gw.Write([]byte(text))
		gw.Close()
		writeFile(t, filepath.Join(gdir, fmt.Sprintf("f%d.txt.gz", i+1)), gb.String())
	}
	st := filepath.Join(root, "s2")
	budget := fmt.Sprint(len(a) * 5 / 2)
	s = ingest(exitSkipped, "--store", st, "--max-run-bytes", budget, gdir)
	if s.Soundings != 1460 || reasons(s)["run_budget"] != 1 || !strings.HasSuffix(s.Skipped[0].Where, "f3.txt.gz") {
		t.Errorf("run budget: %d soundings, skips %+v; want 1460 and f3.txt.gz deferred", s.Soundings, s.Skipped)
	}
	s = ingest(exitOK, "--store", st, "--max-run-bytes", budget, gdir)
	if s.Soundings != 2190 || s.InputsUnchanged != 2 {
		t.Errorf("the next run: %d soundings, %d inputs unchanged; want 2190 and 2 (it reads the deferred one)", s.Soundings, s.InputsUnchanged)
	}

	// A station-year over the partition bound.
	s = ingest(exitSkipped, "--store", filepath.Join(root, "s3"), "--max-partition-bytes", fmt.Sprint(len(a)/2),
		filepath.Join(src, synth.StationAt(0).ID+"-data.txt"), filepath.Join(gdir, "f2.txt.gz"))
	if reasons(s)["partition_too_large"] != 2 {
		t.Errorf("partition bound: skips %+v; want both station-years refused", s.Skipped)
	}
	s = ingest(exitOK, "--store", filepath.Join(root, "s4"), "--max-partition-bytes", fmt.Sprint(len(a)*3), src)
	if s.Soundings != 1460 {
		t.Errorf("under the partition bound: %d soundings, want 1460", s.Soundings)
	}
	// Two station-years that each fit the bound but not both at once are
	// built one after the other by two workers (plain archive-v2 text counts
	// twice its bytes): both stored, the tables those of one worker.
	pair := filepath.Join(root, "s4b")
	code, _, errs := runCmd(t, "ingest", "--quiet", "--workers", "2", "--store", pair, "--max-partition-bytes", fmt.Sprint(len(a)*3), src)
	if code != exitOK || dump(t, pair) != dump(t, filepath.Join(root, "s4")) {
		t.Errorf("two station-years under a bound that holds one at a time: exit %d, or tables differ from one worker's\n%s", code, errs)
	}

	// A TEMP input of 17 MB of groups in one report, 40 KB of gzip.
	tdir := filepath.Join(root, "temp")
	os.MkdirAll(tdir, 0o755)
	var tb bytes.Buffer
	tw := gzip.NewWriter(&tb)
	tw.Write([]byte("TTAA 51121 72520 99001 "))
	tw.Write(bytes.Repeat([]byte("00000 "), 3<<20))
	tw.Write([]byte("=\n"))
	tw.Close()
	writeFile(t, filepath.Join(tdir, "temp-2024-01-01.txt.gz"), tb.String())
	s = ingest(exitSkipped, "--store", filepath.Join(root, "s5"), "--format", "wmo-temp", tdir)
	if reasons(s)["too_large"] != 1 || s.Soundings != 0 {
		t.Errorf("TEMP bomb: %d soundings, skips %+v; want one too_large", s.Soundings, s.Skipped)
	}
}

// TestHostileNetCDFStations: the netCDF reader takes the station
// identifier from the site attribute. The real Lamont flight
// (../shared/validation, PROVENANCE.md) with its site_id "sgp" patched to
// "../" is stored under an escaped partition inside the store, as station
// "../C1"; the Bankhead flight with control characters in its site_id is
// rejected alone (bad_station_id naming the file); exit 3, nothing written
// outside the store.
func TestHostileNetCDFStations(t *testing.T) {
	v := sharedDir(t)
	root := t.TempDir()
	in := filepath.Join(root, "in")
	os.MkdirAll(in, 0o755)
	patch := func(name, from, to string) string {
		b, err := os.ReadFile(filepath.Join(v, "netcdf", name))
		if err != nil {
			t.Fatal(err)
		}
		attr := "site_id\x00\x00\x00\x00\x02\x00\x00\x00\x04"
		if !bytes.Contains(b, []byte(attr+from)) {
			t.Fatalf("%s: site_id %q not found", name, from)
		}
		p := filepath.Join(in, name)
		writeFile(t, p, string(bytes.Replace(b, []byte(attr+from), []byte(attr+to), 1)))
		return p
	}
	patch("sgpsondewnpnC1.b1.20190101.053200.cdf", "sgp\x00", "../\x00")
	bad := patch("bnfsondewnpnM1.b1.20250619.053000.cdf", "bnf\x00", "\x01\n\x02\x00")
	st := filepath.Join(root, "a", "store")
	sum := filepath.Join(root, "sum.json")
	code, _, errs := runCmd(t, "ingest", "--quiet", "--summary-json", sum, "--store", st, in)
	if code != exitSkipped {
		t.Fatalf("exit %d, want %d\n%s", code, exitSkipped, errs)
	}
	if out := listOutside(t, root, st, in, sum); len(out) > 0 {
		t.Fatalf("files written outside the store: %v", out)
	}
	s := readSummary(t, sum)
	if s.Soundings != 1 || len(s.Skipped) != 1 || s.Skipped[0].Reason != "bad_station_id" || !strings.Contains(s.Skipped[0].Where, bad) {
		t.Errorf("%d soundings, skips %+v; want 1 and one bad_station_id for %s", s.Soundings, s.Skipped, bad)
	}
	code, out, _ := runCmd(t, "query", "--store", st, "--format", "csv", "select station_id from soundings")
	if code != exitOK || out != "station_id\n../C1\n" {
		t.Errorf("stored station: exit %d, %q; want ../C1", code, out)
	}
}
