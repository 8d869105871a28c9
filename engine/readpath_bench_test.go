package engine

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/klauspost/compress/gzip"

	"github.com/sondeclim/sondeclim/internal/benchcpu"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// sterlingLevels is the number of data records of the real Sterling 2016
// file (PROVENANCE.md, Sterling row: 131,306 levels).
const sterlingLevels = 131306

// sterlingInput writes the real Sterling 2016 file into dir, plain or
// gzipped at level 1 (as ../shared/peer/compare.sh does), and returns its
// path.
func sterlingInput(b *testing.B, dir string, gz bool) string {
	b.Helper()
	text := realdata.Text(b, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	path := filepath.Join(dir, "sterling.txt")
	if gz {
		var buf bytes.Buffer
		zw, _ := gzip.NewWriterLevel(&buf, 1)
		zw.Write(text)
		zw.Close()
		text, path = buf.Bytes(), path+".gz"
	}
	if err := os.WriteFile(path, text, 0o644); err != nil {
		b.Fatal(err)
	}
	return path
}

// stageOne stages the input at path as one worker's run does, in fresh
// store and staging folders.
func stageOne(b *testing.B, path string) (*run, *staged) {
	b.Helper()
	r := newRun(context.Background(), b.TempDir(), []string{path}, Options{Workers: 1})
	r.staging = b.TempDir()
	st := &staged{byPart: map[string][]segment{}, dropped: map[int]bool{}}
	if _, err := r.stageInputs([]string{path}, st, nil); err != nil {
		b.Fatal(err)
	}
	return r, st
}

// BenchmarkReadPath stages the real Sterling 2016 file (indexing it by
// station-year, through a decompressed copy held in memory for gzip) and
// decodes every segment in place, the ingest's read path before QC; the
// cpu-ns/level figure compares with the ingest's CPU time per level.
func BenchmarkReadPath(b *testing.B) {
	for _, gz := range []bool{true, false} {
		b.Run(map[bool]string{true: "gzip", false: "plain"}[gz], func(b *testing.B) {
			path := sterlingInput(b, b.TempDir(), gz)
			cpu0 := benchcpu.Used()
			for b.Loop() {
				r, st := stageOne(b, path)
				n := 0
				var buf, data []byte
				var err error
				for _, segs := range st.byPart {
					for _, sg := range segs {
						if data, buf, err = readSegment(st, sg, buf); err != nil {
							b.Fatal(err)
						}
						got, err := r.readInPlace(data, st.inputs[sg.file], sg, nil)
						if err != nil {
							b.Fatal(err)
						}
						n += benchcpu.Levels(got)
					}
				}
				if n != sterlingLevels {
					b.Fatalf("%d levels, want %d (PROVENANCE.md)", n, sterlingLevels)
				}
			}
			benchcpu.PerLevel(b, cpu0, sterlingLevels)
		})
	}
}

// BenchmarkStage is the staging half of BenchmarkReadPath alone.
func BenchmarkStage(b *testing.B) {
	for _, gz := range []bool{true, false} {
		b.Run(map[bool]string{true: "gzip", false: "plain"}[gz], func(b *testing.B) {
			path := sterlingInput(b, b.TempDir(), gz)
			cpu0 := benchcpu.Used()
			for b.Loop() {
				_, st := stageOne(b, path)
				if len(st.byPart) == 0 {
					b.Fatal("nothing staged")
				}
			}
			benchcpu.PerLevel(b, cpu0, sterlingLevels)
		})
	}
}
