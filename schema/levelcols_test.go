package schema

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/internal/benchcpu"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/sounding"
)

// analysedSounding is a real sounding with its QC report and analysis.
type analysedSounding struct {
	s   *sounding.Sounding
	rep qc.Report
	res analyze.Result
}

// realAnalysed reads the real archive-v2 file name of ../shared/validation
// (PROVENANCE.md) and checks and analyses each sounding as the engine does
// (engine.analyzeOne).
func realAnalysed(tb testing.TB, name string) []analysedSounding {
	tb.Helper()
	text := realdata.Text(tb, "archive-v2", name)
	rd := archivev2.NewReader(bytes.NewReader(text), name, "")
	var out []analysedSounding
	cfg, qcCfg := analyze.DefaultConfig(), qc.DefaultConfig()
	for {
		s, err := rd.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			continue // a rejected item; the readers' tests cover those
		}
		a := analysedSounding{s: s, rep: qc.Check(s, qcCfg)}
		if a.rep.Usable() {
			a.res = analyze.Analyze(qc.Apply(s, a.rep, false), cfg)
		} else {
			a.res = analyze.Analyze(nil, cfg)
		}
		padPerLevel(&a.res, len(s.Levels))
		out = append(out, a)
	}
	if len(out) == 0 {
		tb.Fatalf("%s: no soundings read", name)
	}
	return out
}

// TestLevelColumnsEqualRows: the levels file LevelColumns fills column by
// column (written by the store's own writer) holds what the file written
// from the LevelRow structs of the same soundings (by arrow-go's general
// writer) holds: equal footers but for page placement, equal values read
// back by arrow-go, on real soundings (the 1950 portion of station
// 74794, the Melbourne file and Sterling's 2016 high-resolution soundings
// of PROVENANCE.md: missing values, QC flags of every kind, soundings QC
// rejects), and a level kind outside the
// column's vocabulary is still an error when writing. The structs are the
// reference, so this guards the faster path against drifting from them.
func TestLevelColumnsEqualRows(t *testing.T) {
	for _, name := range []string{"USM00074794-data-1950-portion.txt", "AUM00011035-data.txt.gz", "USM00072403-data-beg2016.txt.zip"} {
		all := realAnalysed(t, name)
		var slice RowSlice[LevelRow]
		cols, err := NewLevelColumns(10) // grows many times
		if err != nil {
			t.Fatal(err)
		}
		// A sounding without QC flags (nulls in the flag columns) and
		// without a launch time (invented; unit scaffolding).
		res := analyze.Analyze(nil, analyze.DefaultConfig())
		padPerLevel(&res, 2)
		all = append(all, analysedSounding{s: &sounding.Sounding{StationID: "ZQ1", Levels: make([]sounding.Level, 2)}, res: res})
		flagged := 0
		for i := range all {
			a := &all[i]
			launch, year := a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year())
			appendLevelRows(&slice, a.s, a.rep, &a.res, launch, year)
			appendLevelRows(cols, a.s, a.rep, &a.res, launch, year)
			if len(a.rep.Flags) == 0 {
				flagged++
			}
		}
		if cols.Len() != len(slice) || len(slice) < 100 {
			t.Fatalf("%s: %d level rows in columns, %d as structs", name, cols.Len(), len(slice))
		}
		dir := t.TempDir()
		a, b := filepath.Join(dir, "a.parquet"), filepath.Join(dir, "b.parquet")
		if err := WriteFile(a, TableLevels, []LevelRow(slice), false); err != nil {
			t.Fatal(err)
		}
		if err := cols.WriteFile(b, TableLevels, false); err != nil {
			t.Fatal(err)
		}
		sameContent(t, a, b)
		t.Logf("%s: %d levels, %d soundings without QC flags", name, len(slice), flagged)
	}

	s := &sounding.Sounding{StationID: "ZQ1", Levels: []sounding.Level{{Kind: sounding.LevelKind(9)}}}
	res := analyze.Analyze(nil, analyze.DefaultConfig())
	padPerLevel(&res, 1)
	bad, _ := NewLevelColumns(0)
	appendLevelRows(bad, s, qc.Report{}, &res, s.LaunchTime, 2003)
	if err := bad.WriteFile(filepath.Join(t.TempDir(), "c.parquet"), TableLevels, false); err == nil || !strings.Contains(err.Error(), "kind(9)") {
		t.Errorf("level kind outside the vocabulary: got %v", err)
	}
}

// BenchmarkLevelColumns fills the levels columns of the real Sterling 2016
// soundings (PROVENANCE.md: 662 soundings, 131,306 levels) and writes them as one file, as the engine
// does for a station-year; BenchmarkLevelSlice does the same through
// LevelRow structs, the way it was done before.
func BenchmarkLevelColumns(b *testing.B) { benchLevels(b, true) }

func BenchmarkLevelSlice(b *testing.B) { benchLevels(b, false) }

// BenchmarkLevelFill fills the levels columns of the same soundings
// without writing them: the share of the levels table that the analysis
// loop pays per sounding (AppendSounding).
func BenchmarkLevelFill(b *testing.B) {
	all := realAnalysed(b, "USM00072403-data-beg2016.txt.zip")
	n := 0
	for _, a := range all {
		n += len(a.s.Levels)
	}
	cpu := benchcpu.Used()
	for b.Loop() {
		w, err := NewLevelColumns(n)
		if err != nil {
			b.Fatal(err)
		}
		for i := range all {
			a := &all[i]
			appendLevelRows(w, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
		}
		if w.Len() != n {
			b.Fatalf("%d level rows, want %d", w.Len(), n)
		}
	}
	benchcpu.PerLevel(b, cpu, n)
}

func benchLevels(b *testing.B, columns bool) {
	all := realAnalysed(b, "USM00072403-data-beg2016.txt.zip")
	n := 0
	for _, a := range all {
		n += len(a.s.Levels)
	}
	path := filepath.Join(b.TempDir(), "levels.parquet")
	ingestGC(b)
	cpu := benchcpu.Used()
	for b.Loop() {
		var w interface {
			Writer
			LevelAppender
		}
		var err error
		if columns {
			w, err = NewLevelColumns(n)
		} else {
			w, err = NewRows[LevelRow](n)
		}
		if err != nil {
			b.Fatal(err)
		}
		for i := range all {
			a := &all[i]
			appendLevelRows(w, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
		}
		if err := w.WriteFile(path, TableLevels, false); err != nil {
			b.Fatal(err)
		}
	}
	benchcpu.PerOp(b, cpu)
	b.ReportMetric(float64(n), "levels/op")
}

// TestLevelColumnsReuse: levels filled into the column buffers of levels
// written before (the Sterling 2016 file's, with derived heights and
// nulls) give the file fresh buffers give, for the smaller Melbourne file
// and the 1950 portion (real soundings, PROVENANCE.md); a LevelColumns
// written once cannot be written again. Fresh buffers are the reference,
// held to arrow-go's writer by TestOwnWriterRealLevels.
func TestLevelColumnsReuse(t *testing.T) {
	fill := func(l *LevelColumns, all []analysedSounding) {
		for i := range all {
			a := &all[i]
			appendLevelRows(l, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
		}
	}
	dir := t.TempDir()
	fresh := func(all []analysedSounding, path string) {
		r, err := NewRows[LevelRow](0)
		if err != nil {
			t.Fatal(err)
		}
		l, err := levelColumnsOver(r)
		if err != nil {
			t.Fatal(err)
		}
		fill(l, all)
		if err := WriteRows(path, TableLevels, l.rows, false); err != nil {
			t.Fatal(err)
		}
	}
	first, err := NewLevelColumns(0)
	if err != nil {
		t.Fatal(err)
	}
	fill(first, realAnalysed(t, "USM00072403-data-beg2016.txt.zip"))
	bufs := first.rows.bufs
	if err := first.WriteFile(filepath.Join(dir, "first.parquet"), TableLevels, false); err != nil {
		t.Fatal(err)
	}
	if n := first.Len(); n != 131306 { // PROVENANCE.md
		t.Errorf("Len after writing: %d, want 131306", n)
	}
	if err := first.WriteFile(filepath.Join(dir, "again.parquet"), TableLevels, false); err == nil {
		t.Error("second WriteFile: no error")
	}
	for _, name := range []string{"AUM00011035-data.txt.gz", "USM00074794-data-1950-portion.txt"} {
		all := realAnalysed(t, name)
		want, got := filepath.Join(dir, "fresh.parquet"), filepath.Join(dir, "reused.parquet")
		fresh(all, want)
		r, err := reuseRows[LevelRow](bufs, 10)
		if err != nil {
			t.Fatal(err)
		}
		l, err := levelColumnsOver(r)
		if err != nil {
			t.Fatal(err)
		}
		fill(l, all)
		if err := WriteRows(got, TableLevels, l.rows, false); err != nil {
			t.Fatal(err)
		}
		wb, _ := os.ReadFile(want)
		gb, _ := os.ReadFile(got)
		if len(wb) < 1000 || !bytes.Equal(wb, gb) {
			t.Errorf("%s: file from reused buffers differs (%d and %d bytes)", name, len(wb), len(gb))
		}
		bufs = l.rows.bufs
	}
}
