package engine

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
)

// TestAnalyseMatchesRun reads real archive files (the Cape Kennedy 1950
// portion and the truncated Barrow file, PROVENANCE.md) once with Run into a
// store and once with Analyse in memory: the same soundings, with the same
// observation hashes, must come out, and the skipped input must be the
// same.
func TestAnalyseMatchesRun(t *testing.T) {
	dir := realdata.Dir(t, "archive-v2")
	files := []string{filepath.Join(dir, "USM00074794-data-1950-portion.txt"), filepath.Join(dir, "USM00070026-data-truncated.txt")}
	storeDir := t.TempDir()
	sum, err := Run(context.Background(), storeDir, files, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	rs, mem, err := Analyse(context.Background(), files, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if mem.Soundings != sum.Soundings || len(rs.Soundings) != sum.Soundings || len(mem.Skipped) != len(sum.Skipped) {
		t.Fatalf("Analyse: %d soundings (%d rows), %d skips; Run: %d soundings, %d skips",
			mem.Soundings, len(rs.Soundings), len(mem.Skipped), sum.Soundings, len(sum.Skipped))
	}
	stored := map[int64]string{}
	m, err := store.ReadManifest(storeDir, store.Shard{})
	if err != nil || m == nil {
		t.Fatalf("manifest: %v, %v", m, err)
	}
	for _, f := range m.Files()[schema.TableSoundings] { // the store's own list, whatever its layout
		keys, err := schema.ReadSoundingKeys(filepath.Join(storeDir, f))
		if err != nil {
			t.Fatal(err)
		}
		for k, v := range keys {
			stored[k] = v
		}
	}
	if len(stored) != len(rs.Soundings) {
		t.Fatalf("store holds %d soundings, Analyse %d", len(stored), len(rs.Soundings))
	}
	levels := 0
	for _, s := range rs.Soundings {
		if h := stored[s.LaunchTime.UnixMicro()]; h != s.SoundingHash {
			t.Errorf("%s %v: hash %s in memory, %s in the store", s.StationID, s.LaunchTime, s.SoundingHash, h)
		}
		levels += int(s.LevelCount)
	}
	if len(rs.Levels) != levels || sum.Rows[schema.TableLevels] != levels {
		t.Errorf("levels: %d rows in memory, %d written, %d counted", len(rs.Levels), sum.Rows[schema.TableLevels], levels)
	}
}

// TestPairingInParameters: the afternoon pairing windows are analysis
// parameters, so changing them rebuilds the partitions of a store (they
// used to be fixed and outside the parameter hash).
func TestPairingInParameters(t *testing.T) {
	dir := realdata.Dir(t, "archive-v2")
	files := []string{filepath.Join(dir, "USM00074794-data-1950-portion.txt")}
	storeDir := t.TempDir()
	if _, err := Run(context.Background(), storeDir, files, Options{Workers: 1}); err != nil {
		t.Fatal(err)
	}
	again, err := Run(context.Background(), storeDir, files, Options{Workers: 1})
	if err != nil || again.PartitionsWritten != 0 {
		t.Fatalf("same parameters: %d partitions written (%v), want 0", again.PartitionsWritten, err)
	}
	p := analyze.DefaultPairingConfig()
	p.MorningToH = 11
	changed, err := Run(context.Background(), storeDir, files, Options{Workers: 1, Pairing: &p})
	if err != nil || changed.PartitionsWritten == 0 {
		t.Fatalf("other pairing windows: %d partitions written (%v), want a rebuild", changed.PartitionsWritten, err)
	}
}
