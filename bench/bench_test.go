package bench

import (
	"archive/zip"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// TestArchiveSoundings: the whole-archive projection of bench counts the
// soundings of the archive's station list. 51,064,702 is the sum of its
// NOBS column (columns 83-88, igra2-list-format.txt) computed outside the
// project: awk '{s+=substr($0,83,6)} END {print s}' igra2-station-list.txt.
func TestArchiveSoundings(t *testing.T) {
	v := realdata.Dir(t)
	n, err := ArchiveSoundings(filepath.Join(v, "archive-v2", "igra2-station-list.txt"))
	if err != nil {
		t.Fatal(err)
	}
	if n != 51064702 {
		t.Errorf("soundings in the station list: %d, want 51064702", n)
	}
}

// TestCopyReal: --real writes copies of a real file, each a station
// of its own that reads as the original does (Wien, 321 soundings:
// PROVENANCE.md), plain, gzipped, or as a zip of one member that the
// standard library's archive/zip reads.
func TestCopyReal(t *testing.T) {
	v := realdata.Dir(t)
	for _, c := range []struct {
		kind int
		glob string
	}{{CopyPlain, "*-data.txt"}, {CopyGzip, "*-data.txt.gz"}, {CopyZip, "*-data.txt.zip"}} {
		dir := filepath.Join(t.TempDir(), "copies")
		var res Result
		if err := CopyReal(dir, filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz"), 3, c.kind, &res); err != nil {
			t.Fatal(err)
		}
		if res.Soundings != 3*321 {
			t.Errorf("%s: soundings %d, want %d", c.glob, res.Soundings, 3*321)
		}
		files, _ := filepath.Glob(filepath.Join(dir, c.glob))
		if len(files) != 3 {
			t.Fatalf("files %v, want 3 %s", files, c.glob)
		}
		ids := map[string]bool{}
		for _, f := range files {
			if c.kind == CopyZip {
				zr, err := zip.OpenReader(f)
				if err != nil {
					t.Fatal(err)
				}
				if len(zr.File) != 1 || zr.File[0].Method != zip.Deflate || zr.File[0].Name != strings.TrimSuffix(filepath.Base(f), ".zip") {
					t.Errorf("%s: members %d (first %q), want one deflated member named as the file", f, len(zr.File), zr.File[0].Name)
				}
				zr.Close()
			}
			n := 0
			err := input.Each(f, 0, func(m string, rd io.Reader) error {
				r := archivev2.NewReader(rd, f, m)
				for {
					s, err := r.Next()
					if err == io.EOF {
						return nil
					}
					if err != nil {
						return err
					}
					ids[s.StationID] = true
					n++
				}
			})
			if err != nil {
				t.Fatalf("%s: %v", f, err)
			}
			if n != 321 {
				t.Errorf("%s: %d soundings, want 321", f, n)
			}
		}
		if len(ids) != 3 {
			t.Errorf("%s: station ids %v, want three distinct", c.glob, ids)
		}
	}
}

// TestProjection: the whole-archive projection divides the archive's
// soundings by the measured rate (wall time) and spreads the CPU time per
// sounding over every CPU; worked by hand: 36,000 soundings at 100 per
// second are 360 s = 0.1 h; at 1.5 s of CPU per 100 soundings on 2 CPUs,
// 36,000 * 0.015 / 2 = 270 s = 0.075 h. The faster of two runs is kept.
func TestProjection(t *testing.T) {
	res := Result{ArchiveSoundings: 36000, CPUs: 2, InputTextBytes: 2e6, FloorS: 0.5, Levels: 1000}
	res.addRun(IngestRun{Workers: 1, WallS: 2, UserS: 1.2, SysS: 0.3, Soundings: 100})
	res.addRun(IngestRun{Workers: 2, WallS: 1, UserS: 1.4, SysS: 0.1, Soundings: 100})
	if len(res.Ingest) != 2 {
		t.Fatalf("%d runs kept, want 2", len(res.Ingest))
	}
	r := res.Ingest[1]
	if r.SoundingsPerS != 100 || r.MBPerS != 2 || r.FloorRatio != 2 || r.CPUPerLevelUS != 1500 {
		t.Errorf("run rates %+v, want 100 soundings/s, 2 MB/s, 2 x floor, 1500 us per level", r)
	}
	if math.Abs(res.ProjectedH-0.1) > 1e-12 || res.ProjectedWorkers != 2 {
		t.Errorf("projection %.4f h with %d workers, want 0.1 h with 2", res.ProjectedH, res.ProjectedWorkers)
	}
	if math.Abs(res.ProjectedCPUH-0.075) > 1e-12 {
		t.Errorf("CPU projection %.4f h, want 0.075 h", res.ProjectedCPUH)
	}
}

// TestFitLevels: two files, worked by hand. File A: 100 soundings of 200
// levels, fastest run 1.0 s = 10,000 us a sounding; file B: 100 soundings of
// 100 levels, fastest run 0.6 s = 6,000 us a sounding. The line through
// (200, 10000) and (100, 6000) has a slope of 40 us a level and 2,000 us at
// no levels. 36,000 soundings of 50 levels: 36,000 * 4,000 us = 144 s =
// 0.04 h; within 0.1 h (360 s, 10,000 us a sounding): 200 levels.
func TestFitLevels(t *testing.T) {
	a := &Result{Real: "A", Soundings: 100, Levels: 20000, Ingest: []IngestRun{
		{Workers: 2, WallS: 1.3, Soundings: 100}, {Workers: 2, WallS: 1.0, Soundings: 100}}}
	b := &Result{Real: "B", Soundings: 100, Levels: 10000, Ingest: []IngestRun{{Workers: 2, WallS: 0.6, Soundings: 100}}}
	f, err := FitLevels([]*Result{a, b})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(f.PerLevelUS-40) > 1e-9 || math.Abs(f.PerSoundingUS-2000) > 1e-9 {
		t.Errorf("fit %.6f us a sounding + %.6f us a level, want 2000 + 40", f.PerSoundingUS, f.PerLevelUS)
	}
	if h := f.Hours(36000, 50); math.Abs(h-0.04) > 1e-12 {
		t.Errorf("projection %.6f h, want 0.04 h", h)
	}
	if l := f.LevelsWithin(36000, 0.1); math.Abs(l-200) > 1e-9 {
		t.Errorf("levels within 0.1 h: %.6f, want 200", l)
	}
	if l := f.LevelsWithin(36000, 0.01); l != 0 {
		t.Errorf("levels within 0.01 h (1,000 us a sounding, below the 2,000 of no levels): %v, want 0", l)
	}
	if _, err := FitLevels([]*Result{a, a}); err == nil {
		t.Error("a fit of two files of the same level count: no error")
	}
	if _, err := FitLevels([]*Result{a, {Real: "C", Soundings: 10, Levels: 10}}); err == nil {
		t.Error("a fit with a file without runs: no error")
	}
}

// TestMoveAside: an earlier store is moved out of the way, not deleted,
// and RemoveOld deletes it; a store not there is no error.
func TestMoveAside(t *testing.T) {
	dir := t.TempDir()
	store := filepath.Join(dir, "store-w2")
	if err := moveAside(dir, store); err != nil {
		t.Fatalf("no store: %v", err)
	}
	if err := os.MkdirAll(filepath.Join(store, "levels"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := moveAside(dir, store); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(store); !os.IsNotExist(err) {
		t.Errorf("store still in place after moveAside (%v)", err)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, oldStores, "store-w2-*", "levels")); len(m) != 1 {
		t.Errorf("moved stores %v, want one", m)
	}
	if err := RemoveOld(dir); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, oldStores)); !os.IsNotExist(err) {
		t.Errorf("old stores left after RemoveOld (%v)", err)
	}
}
