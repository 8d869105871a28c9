package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/schema/store"
)

// TestStoreOfBothLayouts: a store whose partitions were written in the
// layout used before 4 December 2026 (TABLE/station=ID/year=YYYY/
// part-HASH.parquet) takes new partitions in today's (station=ID/
// year=YYYY/TABLE-HASH.parquet) and reads, verifies and cleans both. The
// old store is made from a new one by moving its files to the old paths
// and rewriting the manifest's paths (the sums, keyed by table, stay
// true), then rewritten and its old files removed. Invented archive (unit scaffolding): the expected counts are the
// ingest's own, read from the store before the move.
func TestStoreOfBothLayouts(t *testing.T) {
	in, in2 := t.TempDir(), t.TempDir()
	if _, _, err := synth.WriteFile(in, synth.Config{Seed: 3, StartYear: 2003, Years: 2, StationIndex: 0}); err != nil {
		t.Fatal(err)
	}
	if _, _, err := synth.WriteFile(in2, synth.Config{Seed: 4, StartYear: 2003, Years: 1, StationIndex: 1}); err != nil {
		t.Fatal(err)
	}
	st := filepath.Join(t.TempDir(), "store")
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", st, in); code != exitOK {
		t.Fatalf("first ingest: exit %d\n%s", code, errs)
	}
	count := func(table string) string {
		t.Helper()
		code, out, errs := runCmd(t, "query", "--store", st, "--format", "csv",
			"select count(*) as n, count(distinct station_id) as s, min(year) as y0, max(year) as y1 from "+table)
		if code != exitOK {
			t.Fatalf("query %s: exit %d\n%s", table, code, errs)
		}
		return out
	}
	before := map[string]string{"soundings": count("soundings"), "levels": count("levels")}

	m, err := store.ReadManifest(st, store.Shard{})
	if err != nil || m == nil {
		t.Fatal(m, err)
	}
	for _, p := range m.Partitions {
		for table, f := range p.Files {
			parts := strings.Split(filepath.ToSlash(f), "/")
			if len(parts) != 3 || !strings.HasPrefix(parts[2], table+"-") {
				t.Fatalf("new partition file %q is not station=ID/year=YYYY/%s-HASH.parquet", f, table)
			}
			old := filepath.Join(table, parts[0], parts[1], "part-"+strings.TrimPrefix(parts[2], table+"-"))
			if err := os.MkdirAll(filepath.Join(st, filepath.Dir(old)), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.Rename(filepath.Join(st, f), filepath.Join(st, old)); err != nil {
				t.Fatal(err)
			}
			p.Files[table] = old
		}
	}
	if err := store.Commit(st, store.Shard{}, m); err != nil {
		t.Fatal(err)
	}
	for table, want := range before {
		if got := count(table); got != want {
			t.Errorf("old layout, %s: %q, want %q", table, got, want)
		}
	}

	// A second station arrives: its partition is written in the new
	// layout, the old ones stay where they are (unchanged).
	code, sum, errs := runCmd(t, "ingest", "--store", st, in, in2)
	if code != exitOK {
		t.Fatalf("second ingest: exit %d\n%s", code, errs)
	}
	// The unchanged input is skipped whole, so its partitions are not
	// counted among the unchanged ones: one written, none rewritten.
	if !strings.Contains(sum+errs, "partitions written / unchanged            1 / 0") {
		t.Errorf("second ingest did not write exactly 1 partition:\n%s%s", sum, errs)
	}
	m, err = store.ReadManifest(st, store.Shard{})
	if err != nil {
		t.Fatal(err)
	}
	layouts := map[bool]int{}
	for _, p := range m.Partitions {
		for _, f := range p.Files {
			if _, err := os.Stat(filepath.Join(st, f)); err != nil {
				t.Errorf("listed file: %v", err)
			}
			layouts[strings.HasPrefix(filepath.ToSlash(f), "station=")]++
		}
	}
	if layouts[true] == 0 || layouts[false] == 0 {
		t.Errorf("files per layout (new: true): %v, want both", layouts)
	}
	for table, old := range before {
		got := count(table)
		if got == old || !strings.Contains(got, ",2,2003,2004\n") {
			t.Errorf("both layouts, %s: %q (before the second station %q), want 2 stations, 2003–2004", table, got, old)
		}
	}
	if code, out, errs := runCmd(t, "verify", "--store", st); code != exitOK || !strings.Contains(out+errs, " 0 damaged") {
		t.Errorf("verify: exit %d\n%s%s", code, out, errs)
	}
	// Only the station restriction's path rule reads the directories: it
	// must find the old-layout station too.
	code, out, errs := runCmd(t, "climatology", "--store", st, "--station", synth.StationAt(0).ID, "--format", "csv")
	if code != exitOK || !strings.Contains(out, synth.StationAt(0).ID) {
		t.Errorf("climatology of the old-layout station: exit %d\n%.400s\n%s", code, out, errs)
	}

	// Station 0's archive is revised: its partitions are rewritten in the
	// new layout, and the next run removes the old-layout files the
	// commit no longer references.
	if _, _, err := synth.WriteFile(in, synth.Config{Seed: 5, StartYear: 2003, Years: 2, StationIndex: 0}); err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 2; i++ {
		if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", st, in, in2); code != exitOK {
			t.Fatalf("ingest of the revised archive (%d): exit %d\n%s", i, code, errs)
		}
	}
	var oldLeft []string
	filepath.WalkDir(st, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() && strings.HasPrefix(d.Name(), "part-") {
			oldLeft = append(oldLeft, p)
		}
		return nil
	})
	if len(oldLeft) > 0 {
		t.Errorf("old-layout files left after their partitions were rewritten: %v", oldLeft)
	}
	if code, out, errs := runCmd(t, "verify", "--store", st); code != exitOK || !strings.Contains(out+errs, " 0 damaged") {
		t.Errorf("verify after the rewrite: exit %d\n%s%s", code, out, errs)
	}
}
