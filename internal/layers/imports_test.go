// Package layers holds the test that keeps the tree's import direction
// (DEVELOPERS.md): ingest → qc → analyze → schema → engine → queries → cmd,
// each importing only packages at or below its own layer, with the shared
// model and physics importable from anywhere. bench, the benchmark
// harness, sits beside queries: it may import engine and queries.
package layers

import (
	"bytes"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const module = "github.com/sondeclim/sondeclim"

// layerOf returns the layer of a package directory (relative to the module
// root, slash-separated): 0 for the shared pieces beside the path.
func layerOf(dir string) (int, bool) {
	for _, l := range []struct {
		prefix string
		layer  int
	}{
		{"sounding", 0}, {"physics", 0}, {"internal/clilog", 0}, {"internal/buildinfo", 0},
		{"ingest", 1}, {"qc", 2}, {"analyze", 3}, {"schema", 4},
		{"engine", 5}, {"queries", 6}, {"bench", 6}, {"cmd", 7},
	} {
		if dir == l.prefix || strings.HasPrefix(dir, l.prefix+"/") {
			return l.layer, true
		}
	}
	return 0, false
}

// TestImportDirection parses the imports of every production (non-test)
// Go file and checks that no package imports one above it on the path,
// that queries does not import engine, that nothing imports cmd, that the
// test-only internal/realdata and internal/benchcpu are imported by tests only, and that cmd
// holds less than maxCmdShare of the production lines (issue 13: cmd only
// parses flags, calls packages and prints; it held 23 % before the engine
// moved out of it).
func TestImportDirection(t *testing.T) {
	root, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(root, "go.mod")); err != nil {
		t.Fatalf("module root not found: %v", err)
	}
	fset := token.NewFileSet()
	checked := 0
	lines := map[bool]int{} // under cmd/ → production lines
	err = filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (strings.HasPrefix(d.Name(), ".") || d.Name() == "testdata") && path != root {
			return fs.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
			return nil
		}
		rel, _ := filepath.Rel(root, filepath.Dir(path))
		dir := filepath.ToSlash(rel)
		from, known := layerOf(dir)
		f, err := parser.ParseFile(fset, path, nil, parser.ImportsOnly)
		if err != nil {
			return err
		}
		checked++
		src, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		lines[dir == "cmd" || strings.HasPrefix(dir, "cmd/")] += bytes.Count(src, []byte("\n"))
		for _, im := range f.Imports {
			p, _ := strconv.Unquote(im.Path.Value)
			target, ok := strings.CutPrefix(p, module+"/")
			if !ok {
				continue
			}
			name := filepath.Base(path)
			switch to, tknown := layerOf(target); {
			case strings.HasPrefix(target, "cmd"):
				t.Errorf("%s/%s imports %s: nothing imports cmd", dir, name, target)
			case target == "internal/realdata", target == "internal/benchcpu":
				t.Errorf("%s/%s imports %s, which is for tests only", dir, name, target)
			case strings.HasPrefix(dir, "queries") && strings.HasPrefix(target, "engine"):
				t.Errorf("%s/%s imports %s: queries reads stores and must not depend on the engine", dir, name, target)
			case known && tknown && to > from:
				t.Errorf("%s/%s (layer %d) imports %s (layer %d), above it", dir, name, from, target, to)
			case known && tknown && from == 0 && to == 0 && strings.HasPrefix(dir, "physics") && strings.HasPrefix(target, "sounding"):
				t.Errorf("%s/%s imports %s: the physics packages are leaves", dir, name, target)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if checked < 50 {
		t.Fatalf("only %d files checked: the walk missed the tree", checked)
	}
	total := lines[true] + lines[false]
	if share := float64(lines[true]) / float64(total); share >= maxCmdShare {
		t.Errorf("cmd holds %d of %d production lines (%.1f %%, limit %.0f %%): move logic out of the command into the packages it calls",
			lines[true], total, 100*share, 100*maxCmdShare)
	} else {
		t.Logf("cmd holds %d of %d production lines (%.1f %%)", lines[true], total, 100*share)
	}
}

// maxCmdShare is the largest share of the production (non-test) Go lines
// that cmd/ may hold (issue 13).
const maxCmdShare = 0.15
