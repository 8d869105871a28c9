package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/schema"
)

// TestTableHashes ingests the real archive-v2 files of ../shared/validation
// (plain, gzip and zip inputs: PROVENANCE.md) and hashes every table of the
// store, row by row in a fixed order. It guards changes made for speed
// (reader, decompression, QC, analysis and writer internals) against
// altering what is written: the hashes must equal testdata/table-hashes.txt,
// which was written by the code before such changes and is therefore a
// regression record, not a check of correctness (the values themselves are
// checked against outside sources by the other tests). A change meant to
// alter the tables rewrites it with -update; review it with the diff of the
// golden files that show the values.
//
// The same store is built with one worker in the given file order and with
// three workers in the reverse order: the hashes must not differ (house
// rule: results do not depend on worker count or file order).
func TestTableHashes(t *testing.T) {
	v := sharedDir(t)
	files, err := filepath.Glob(filepath.Join(v, "archive-v2", "*-data*"))
	if err != nil || len(files) < 5 {
		t.Fatalf("validation archive-v2 files: %v, %d found", err, len(files))
	}
	docs, err := schema.Tables()
	if err != nil {
		t.Fatal(err)
	}
	hashes := func(workers string, files []string) string {
		store := t.TempDir()
		code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--store", store, "--workers", workers}, files...)...)
		if code != exitSkipped { // the truncated Barrow sounding (PROVENANCE.md)
			t.Fatalf("ingest: exit %d, want %d\n%s", code, exitSkipped, errs)
		}
		var b strings.Builder
		for _, d := range docs {
			code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", "--exact",
				"select * from "+d.Name+" order by all")
			if code != exitOK {
				t.Fatalf("table %s: exit %d\n%s", d.Name, code, errs)
			}
			out = strings.ReplaceAll(out, v, "VALIDATION")
			rows := strings.Count(out, "\n") - 1
			sum := sha256.Sum256([]byte(out))
			fmt.Fprintf(&b, "%s %d %s\n", d.Name, rows, hex.EncodeToString(sum[:]))
		}
		return b.String()
	}
	one := hashes("1", files)
	rev := slices.Clone(files)
	slices.Reverse(rev)
	if three := hashes("3", rev); three != one {
		t.Errorf("tables differ between --workers 1 and --workers 3 with the inputs reversed:\n%s\n%s", one, three)
	}
	// PROVENANCE.md: 131,306 levels in the Sterling file alone, so the
	// levels table cannot be short of that.
	var n int
	if _, err := fmt.Sscanf(one[strings.Index(one, schema.TableLevels+" "):], schema.TableLevels+" %d", &n); err != nil || n < 131306 {
		t.Errorf("levels rows %d (%v): too few to be meaningful", n, err)
	}
	golden(t, "table-hashes.txt", one)
	if _, err := os.Stat(filepath.Join("testdata", "table-hashes.txt")); err != nil {
		t.Fatal(err)
	}
}
