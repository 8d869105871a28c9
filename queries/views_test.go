package queries

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// TestWriteViews: each view goes to DIR/PREFIX-VIEW.EXT in the writer's
// format, listed in order with its row count; an unknown view stops it,
// keeping the files written before.
func TestWriteViews(t *testing.T) {
	tabs := map[string]*Table{
		"a": {Columns: []string{"station_id", "n"}, Rows: [][]any{{"X", int64(3)}, {"Y", int64(4)}}},
		"b": {Columns: []string{"station_id"}, Rows: [][]any{{"Z"}}},
	}
	table := func(v string) (*Table, error) {
		if t, ok := tabs[v]; ok {
			return t, nil
		}
		return nil, errors.New("no view " + v)
	}
	dir := filepath.Join(t.TempDir(), "out")
	files, err := WriteViews(dir, "climatology", "csv", []string{"a", "b"}, table, WriteCSV)
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 2 || files[0] != (WrittenView{filepath.Join(dir, "climatology-a.csv"), 2}) ||
		files[1] != (WrittenView{filepath.Join(dir, "climatology-b.csv"), 1}) {
		t.Errorf("files %v", files)
	}
	b, err := os.ReadFile(filepath.Join(dir, "climatology-a.csv"))
	if err != nil || string(b) != "station_id,n\nX,3\nY,4\n" {
		t.Errorf("climatology-a.csv: %q %v", b, err)
	}
	files, err = WriteViews(dir, "climatology", "csv", []string{"b", "nope"}, table, WriteCSV)
	if err == nil || len(files) != 1 {
		t.Errorf("unknown view: %v, files %v", err, files)
	}
}
