package queries

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WrittenView is one file written by WriteViews.
type WrittenView struct {
	Path string
	Rows int
}

// WriteViews writes each of views, the tables table returns by name, to
// dir/prefix-VIEW.ext with write (WriteText, WriteCSV, WriteJSON or
// WriteMarkdown), creating dir, and returns the files in views' order.
// The first error stops it; the error names the file.
func WriteViews(dir, prefix, ext string, views []string, table func(string) (*Table, error),
	write func(io.Writer, *Table) error) ([]WrittenView, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	var out []WrittenView
	for _, v := range views {
		t, err := table(v)
		if err != nil {
			return out, err
		}
		path := filepath.Join(dir, prefix+"-"+v+"."+ext)
		f, err := os.Create(path)
		if err != nil {
			return out, err
		}
		err = write(f, t)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return out, fmt.Errorf("write %s: %w", path, err)
		}
		out = append(out, WrittenView{path, len(t.Rows)})
	}
	return out, nil
}
