package bench

import (
	"io"
	"math"
	"path/filepath"
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
// PROVENANCE.md).
func TestCopyReal(t *testing.T) {
	v := realdata.Dir(t)
	dir := filepath.Join(t.TempDir(), "copies")
	var res Result
	if err := CopyReal(dir, filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz"), 3, true, &res); err != nil {
		t.Fatal(err)
	}
	if res.Soundings != 3*321 {
		t.Errorf("soundings %d, want %d", res.Soundings, 3*321)
	}
	files, _ := filepath.Glob(filepath.Join(dir, "*-data.txt.gz"))
	if len(files) != 3 {
		t.Fatalf("files %v, want 3", files)
	}
	ids := map[string]bool{}
	for _, f := range files {
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
		t.Errorf("station ids %v, want three distinct", ids)
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
