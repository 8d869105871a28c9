package engine

import (
	"context"
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// countHandler counts log records by message prefix.
type countHandler struct {
	mu   sync.Mutex
	msgs []string
}

func (h *countHandler) Enabled(context.Context, slog.Level) bool { return true }
func (h *countHandler) Handle(_ context.Context, r slog.Record) error {
	h.mu.Lock()
	h.msgs = append(h.msgs, r.Message)
	h.mu.Unlock()
	return nil
}
func (h *countHandler) WithAttrs([]slog.Attr) slog.Handler { return h }
func (h *countHandler) WithGroup(string) slog.Handler      { return h }

func (h *countHandler) count(prefix string) int {
	n := 0
	for _, m := range h.msgs {
		if strings.HasPrefix(m, prefix) {
			n++
		}
	}
	return n
}

// TestStationMetadata: a TEMP report carries no position or elevation
// (WMO-No. 306 FM-35 has only the block and station number). The real
// Rio de Janeiro-Galeão report (PROVENANCE.md, temp/) read without any
// station list leaves its sounding without position and elevation, and the
// run warns once for each, naming what is affected; with the built-in list
// (the archive's public station list: BRM00083746, 22.8167 S, 43.25 W,
// 6 m) nothing is missing and nothing is warned.
func TestStationMetadata(t *testing.T) {
	b := realdata.Text(t, "temp", "83746-2023-02-23-00Z.txt")
	in := filepath.Join(t.TempDir(), "83746-2023-02-23-00Z.txt") // the name gives the year and month
	if err := os.WriteFile(in, b, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, builtin := range []bool{false, true} {
		h := &countHandler{}
		sum, err := Run(context.Background(), t.TempDir(), []string{in},
			Options{Workers: 1, NoBuiltinStations: !builtin, Log: slog.New(h)})
		if err != nil {
			t.Fatal(err)
		}
		pos, elev := h.count("soundings without a station position"), h.count("soundings without a station elevation")
		switch {
		case sum.SoundingsRead == 0:
			t.Fatalf("builtin %v: nothing read", builtin)
		case !builtin && (sum.NoPosition != sum.SoundingsRead || sum.NoElevation != sum.SoundingsRead || pos != 1 || elev != 1):
			t.Errorf("without a station list: %d/%d soundings without position, %d without elevation; warnings %d, %d (want one each)",
				sum.NoPosition, sum.SoundingsRead, sum.NoElevation, pos, elev)
		case builtin && (sum.NoPosition != 0 || sum.NoElevation != 0 || pos+elev != 0):
			t.Errorf("with the built-in list: %d without position, %d without elevation, %d warnings", sum.NoPosition, sum.NoElevation, pos+elev)
		}
	}
}
