package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestVentilationTableUsage: a --ventilation-table that is neither a
// built-in table nor a readable, well-formed file is a usage error (exit
// 2, as "sondeclim help" and the README define it: the caller's wording),
// and the message names the file and, for a malformed one, the line.
func TestVentilationTableUsage(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.txt")
	if err := os.WriteFile(bad, []byte("name: county_smoke\nunit: kt*ft\n0 poor\n100 poor\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	input := filepath.Join(dir, "none.txt") // never read: the table is refused first
	for _, c := range []struct{ table, want string }{
		{bad, bad + `:4: label "poor" given twice`},
		{filepath.Join(dir, "absent.txt"), filepath.Join(dir, "absent.txt")},
		{"no_such_table", "generic, nc_vis"},
	} {
		code, _, errs := runCmd(t, "ingest", "--quiet", "--store", filepath.Join(dir, "store"), "--ventilation-table", c.table, input)
		if code != exitUsage || !strings.Contains(errs, c.want) {
			t.Errorf("--ventilation-table %s: exit %d, stderr %q; want exit %d naming %q", c.table, code, errs, exitUsage, c.want)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "store")); err == nil {
		t.Error("a refused table left a store behind")
	}
}
