package report

import (
	"bytes"
	_ "embed"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"os"
	"path"
	"path/filepath"
	"strings"
)

//go:embed page.html
var pageHTML string

var page = template.Must(template.New("report").Funcs(template.FuncMap{
	"alignCSS": alignCSS,
	"plural": func(n int, one, many string) string {
		if n == 1 {
			return one
		}
		return many
	},
}).Parse(pageHTML))

// FigureDir returns the folder Save writes the figures of the page
// htmlPath into: the page's name without its extension, plus "-figures".
func FigureDir(htmlPath string) string {
	base := filepath.Base(htmlPath)
	return strings.TrimSuffix(base, filepath.Ext(base)) + "-figures"
}

// WriteHTML writes the report as one HTML5 page. Figures not embedded are
// referred to as FigureDir/NAME.png (set FigureDir, or use Save).
func (r *Report) WriteHTML(w io.Writer) error {
	for i := range r.Sections {
		for j := range r.Sections[i].Images {
			im := &r.Sections[i].Images[j]
			if r.Embed {
				im.Source = template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(im.PNG))
			} else {
				im.Source = template.URL(path.Join(r.FigureDir, im.Name+".png"))
			}
		}
	}
	var buf bytes.Buffer
	if err := page.Execute(&buf, r); err != nil {
		return fmt.Errorf("%w", err)
	}
	_, err := w.Write(buf.Bytes())
	return err
}

// Save writes the page to htmlPath and, unless the figures are embedded,
// each figure to FigureDir(htmlPath) beside it (created if missing). It
// returns the number of bytes written, page and figures.
func (r *Report) Save(htmlPath string) (int64, error) {
	var total int64
	if !r.Embed {
		r.FigureDir = FigureDir(htmlPath)
		dir := filepath.Join(filepath.Dir(htmlPath), r.FigureDir)
		if r.Figures() > 0 {
			if err := os.MkdirAll(dir, 0o755); err != nil {
				return 0, err
			}
		}
		for _, s := range r.Sections {
			for _, im := range s.Images {
				if err := os.WriteFile(filepath.Join(dir, im.Name+".png"), im.PNG, 0o644); err != nil {
					return 0, err
				}
				total += int64(len(im.PNG))
			}
		}
	}
	var buf bytes.Buffer
	if err := r.WriteHTML(&buf); err != nil {
		return 0, err
	}
	if err := os.WriteFile(htmlPath, buf.Bytes(), 0o644); err != nil {
		return 0, err
	}
	return total + int64(buf.Len()), nil
}

// Figures returns the number of figures of the report.
func (r *Report) Figures() int {
	n := 0
	for _, s := range r.Sections {
		n += len(s.Images)
	}
	return n
}
