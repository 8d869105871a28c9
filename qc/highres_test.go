package qc

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/netcdf"
)

// TestHighResolutionFlights: the real 1–2 s sonde flights of
// ../shared/validation/netcdf (PROVENANCE.md) report pressure to 0.1 hPa
// and often repeat or waver by one step. That is the sensor's resolution,
// not a fault: no level may be dropped for pressure order, and no
// hydrostatic finding may come from the 0.1 hPa steps near the top (where
// one step is tens of metres of thickness).
func TestHighResolutionFlights(t *testing.T) {
	dir := filepath.Join(filepath.Dir(validationDir(t)), "netcdf")
	files, _ := filepath.Glob(filepath.Join(dir, "*.cdf"))
	if len(files) != 26 {
		t.Fatalf("%d flights in %s, PROVENANCE.md lists 26", len(files), dir)
	}
	levels := 0
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		s, _, err := netcdf.Read(bytesReader(b), int64(len(b)), f, netcdf.DefaultMapping())
		if err != nil {
			t.Fatal(err)
		}
		levels += len(s.Levels)
		for _, fd := range Check(s, DefaultConfig()).Findings {
			if fd.Check == CheckPressureOrder || fd.Check == CheckHydrostatic {
				t.Errorf("%s level %d: %s: %s", filepath.Base(f), fd.Level, fd.Check, fd.Message)
			}
		}
	}
	if levels < 26*400 {
		t.Errorf("only %d levels read: the test would not exercise high resolution", levels)
	}
	// With the resolution allowance off, the same flights do break the
	// strict order: the allowance is what the test checks.
	cfg := DefaultConfig()
	cfg.PressureResolutionPa = 0
	b, _ := os.ReadFile(files[0])
	s, _, _ := netcdf.Read(bytesReader(b), int64(len(b)), files[0], netcdf.DefaultMapping())
	n := 0
	for _, fd := range Check(s, cfg).Findings {
		if fd.Check == CheckPressureOrder {
			n++
		}
	}
	if n == 0 {
		t.Errorf("%s: no pressure-order finding without the allowance; pick a flight with repeated pressures", files[0])
	}
}

func bytesReader(b []byte) *bytes.Reader { return bytes.NewReader(b) }
