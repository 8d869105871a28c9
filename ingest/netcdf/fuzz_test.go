package netcdf

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// FuzzClassic feeds arbitrary bytes to Open, Float64s and Read: they must
// return an error or a result, never panic or allocate beyond the input.
func FuzzClassic(f *testing.F) {
	f.Add(tinyFile(1).bytes())
	f.Add(tinyFile(2).bytes())
	f.Add(tinySonde().bytes())
	lone := &tFile{version: 1, numrecs: 3, dims: []tDim{{"t", 0}},
		vars: []tVar{{name: "s", dims: []int{0}, typ: Short, data: []float64{10, -20, 30}}}}
	f.Add(lone.bytes())
	if dir := findShared(); dir != "" {
		raw, err := os.ReadFile(filepath.Join(dir, "twpsondewnpnC3.b1.20060119.050300.custom.cdf"))
		if err == nil && len(raw) > 4096 {
			f.Add(raw[:4096])
		}
	}
	f.Fuzz(func(t *testing.T, raw []byte) {
		r := bytes.NewReader(raw)
		if file, err := Open(r, int64(len(raw))); err == nil {
			// Variables may overlap in a hostile file, so reading all of
			// them is quadratic in the input size; a few suffice.
			for i := range file.Vars[:min(len(file.Vars), 8)] {
				x, err := file.Float64s(&file.Vars[i])
				if err == nil && int64(len(x)) != file.Vars[i].Len(file) {
					t.Fatalf("variable %q: %d values, Len %d", file.Vars[i].Name, len(x), file.Vars[i].Len(file))
				}
			}
		}
		s, _, err := Read(r, int64(len(raw)), "fuzz.cdf", DefaultMapping())
		if err == nil && len(s.Levels) == 0 {
			t.Fatal("Read returned a sounding without levels and no error")
		}
	})
}

// findShared is sharedDir without a testing.T, for fuzz seeds.
func findShared() string {
	dir, err := os.Getwd()
	if err != nil {
		return ""
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			s := filepath.Join(dir, "..", "shared", "validation", "netcdf")
			if _, err := os.Stat(s); err == nil {
				return s
			}
			return ""
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return ""
		}
		dir = parent
	}
}

// BenchmarkRead measures Read on the largest validation file (MB/s).
func BenchmarkRead(b *testing.B) {
	name := filepath.Join(sharedDir(b), "bnfsondewnpnM1.b1.20250619.053000.cdf")
	raw, err := os.ReadFile(name)
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(raw)))
	for b.Loop() {
		if _, _, err := Read(bytes.NewReader(raw), int64(len(raw)), name, DefaultMapping()); err != nil {
			b.Fatal(err)
		}
	}
}
