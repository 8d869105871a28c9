package main

import (
	"io"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/input"
)

// TestArchiveSoundings: the whole-archive projection of bench counts the
// soundings of the archive's station list. 51,064,702 is the sum of its
// NOBS column (columns 83-88, igra2-list-format.txt) computed outside the
// project: awk '{s+=substr($0,83,6)} END {print s}' igra2-station-list.txt.
func TestArchiveSoundings(t *testing.T) {
	v := sharedDir(t)
	n, err := archiveSoundings(filepath.Join(v, "archive-v2", "igra2-station-list.txt"))
	if err != nil {
		t.Fatal(err)
	}
	if n != 51064702 {
		t.Errorf("soundings in the station list: %d, want 51064702", n)
	}
}

// TestCopyReal: bench --real writes copies of a real file, each a station
// of its own that reads as the original does (Wien, 321 soundings:
// PROVENANCE.md).
func TestCopyReal(t *testing.T) {
	v := sharedDir(t)
	dir := filepath.Join(t.TempDir(), "copies")
	var res benchResult
	if err := copyReal(dir, filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz"), 3, true, &res); err != nil {
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
