// Package realdata locates the real observed soundings that tests check
// the pipeline against: the folder shared/validation that lies beside the
// repository (../shared/validation from the directory holding go.mod; its
// PROVENANCE.md says where each file comes from). The files are never
// copied into the repository, so a clone elsewhere does not have them:
// (test-only: it is imported by _test.go files alone.) Dir then skips the calling test with a message saying so.
package realdata

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Dir returns ../shared/validation/SUB… (relative to the module root) for
// the calling test, or skips the test when that folder is absent.
func Dir(tb testing.TB, sub ...string) string {
	tb.Helper()
	root, err := moduleRoot()
	if err != nil {
		tb.Skipf("real validation data unavailable: %v", err)
	}
	dir := filepath.Join(append([]string{root, "..", "shared", "validation"}, sub...)...)
	if _, err := os.Stat(dir); err != nil {
		tb.Skipf("real validation data absent (%v); it lives in ../shared/validation beside the repository, see its PROVENANCE.md", err)
	}
	return dir
}

// Text returns the content of ../shared/validation/SUB…, decompressed when
// its name ends in ".gz", the content of its only member when it ends in
// ".zip", or skips the calling test as Dir does; a file that cannot be
// read, or a zip of more or fewer than one member, fails the test.
func Text(tb testing.TB, sub ...string) []byte {
	tb.Helper()
	path := Dir(tb, sub...)
	b, err := os.ReadFile(path)
	if err != nil {
		tb.Fatal(err)
	}
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(bytes.NewReader(b))
		if err != nil {
			tb.Fatalf("%s: %v", path, err)
		}
		if b, err = io.ReadAll(zr); err != nil {
			tb.Fatalf("%s: %v", path, err)
		}
	}
	if strings.HasSuffix(path, ".zip") {
		zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
		if err != nil {
			tb.Fatalf("%s: %v", path, err)
		}
		if len(zr.File) != 1 {
			tb.Fatalf("%s: %d members, want 1 (PROVENANCE.md)", path, len(zr.File))
		}
		rc, err := zr.File[0].Open()
		if err != nil {
			tb.Fatalf("%s: %v", path, err)
		}
		defer rc.Close()
		if b, err = io.ReadAll(rc); err != nil {
			tb.Fatalf("%s: %v", path, err)
		}
	}
	return b
}

// moduleRoot walks up from the working directory (a test's package
// directory) to the directory holding go.mod.
func moduleRoot() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", os.ErrNotExist
		}
		dir = parent
	}
}
