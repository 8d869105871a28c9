// Package validation locates the real observed soundings that tests check
// the pipeline against: the folder shared/validation that lies beside the
// repository (../shared/validation from the directory holding go.mod; its
// PROVENANCE.md says where each file comes from). The files are never
// copied into the repository, so a clone elsewhere does not have them:
// Dir then skips the calling test with a message saying so.
package validation

import (
	"os"
	"path/filepath"
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
