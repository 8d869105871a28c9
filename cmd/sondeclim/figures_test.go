package main

import (
	"bytes"
	"encoding/xml"
	"errors"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// checkImageFile fails unless path is non-empty and decodes as PNG or
// parses as SVG with root <svg>, by its extension.
func checkImageFile(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Error(err)
		return
	}
	if len(b) == 0 {
		t.Errorf("%s is empty", path)
		return
	}
	switch filepath.Ext(path) {
	case ".png":
		if _, err := png.Decode(bytes.NewReader(b)); err != nil {
			t.Errorf("%s: %v", path, err)
		}
	case ".svg":
		d := xml.NewDecoder(bytes.NewReader(b))
		root := ""
		for {
			tok, err := d.Token()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Errorf("%s: %v", path, err)
				return
			}
			if se, ok := tok.(xml.StartElement); ok && root == "" {
				root = se.Name.Local
			}
		}
		if root != "svg" {
			t.Errorf("%s: root element %q, want svg", path, root)
		}
	default:
		t.Errorf("%s: unexpected file type", path)
	}
}

// TestFiguresReal draws the figures of the real archive-v2 stations
// (../shared/validation, PROVENANCE.md: five stations).
func TestFiguresReal(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, filepath.Join(v, "archive-v2")); code != exitSkipped {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	out := filepath.Join(t.TempDir(), "figs")
	code, list, errs := runCmd(t, "figures", "--store", store, "--out", out, "--format", "both")
	if code != exitOK {
		t.Fatalf("figures: exit %d\n%s", code, errs)
	}
	files := strings.Fields(list)
	// 5 stations × 4 figures × 2 formats.
	if len(files) != 40 {
		t.Errorf("%d files listed, want 40:\n%s", len(files), list)
	}
	for _, f := range files {
		checkImageFile(t, f)
	}
	for _, want := range []string{"USM00072403-mixing-height-monthly-consensus.png", "USM00072403-sbi-frequency-monthly.svg", "AUM00011035-sbi-strength-seasonal.png",
		"USM00072403-episode-calendar.png"} {
		if !strings.Contains(list, want) {
			t.Errorf("no %s among\n%s", want, list)
		}
	}
}

// TestFiguresDemo draws one station of the demo store with one method.
func TestFiguresDemo(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "1", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	store, out := filepath.Join(dir, "store"), filepath.Join(dir, "figs")
	code, list, errs := runCmd(t, "figures", "--store", store, "--out", out, "--station", "ZZXSYN00001", "--method", "heffter", "--format", "svg")
	if code != exitOK {
		t.Fatalf("figures: exit %d\n%s", code, errs)
	}
	files := strings.Fields(list)
	if len(files) != 4 || !strings.HasSuffix(files[0], "ZZXSYN00001-mixing-height-monthly-heffter.svg") ||
		!strings.HasSuffix(files[3], "ZZXSYN00001-episode-calendar.svg") {
		t.Errorf("files %v", files)
	}
	for _, f := range files {
		checkImageFile(t, f)
	}
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"figures", "--store", store}, exitUsage, "--out are required"},
		{[]string{"figures", "--store", store, "--out", out, "--format", "gif"}, exitUsage, "unknown --format"},
		{[]string{"figures", "--store", store, "--out", out, "--station", "NOPE"}, exitFailure, "ZZXSYN00001"},
		{[]string{"figures", "--store", store, "--out", out, "--method", "guesswork"}, exitFailure, "bulk_richardson"},
	} {
		code, _, errs := runCmd(t, c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d with %q", c.args, code, errs, c.code, c.want)
		}
	}
}
