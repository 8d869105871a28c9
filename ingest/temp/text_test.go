package temp

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
)

// TestLineEndsAndJunk: the real Rio report (PROVENANCE.md) written with
// LF, CR LF, CR CR LF or CR-only line ends, or behind a UTF-8 byte-order
// mark, decodes to the same sounding with the same line; words before it
// that are not a report are reported once (ingest.ErrJunk, with their
// line) and the report is still read; GTS framing (ZCZC, NNNN, channel
// sequence numbers) is not junk.
func TestLineEndsAndJunk(t *testing.T) {
	name := filepath.Join(sharedDir(t), "83746-2023-02-23-00Z.txt")
	b, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	lf := strings.ReplaceAll(string(b), "\r\n", "\n")
	ref, errs := readAll(t, NewReader(strings.NewReader(lf), name, Options{}))
	if len(ref) != 1 || len(errs) != 0 {
		t.Fatalf("Rio: %d soundings, %v", len(ref), errs)
	}
	for variant, in := range map[string]string{
		"crlf":   strings.ReplaceAll(lf, "\n", "\r\n"),
		"crcrlf": strings.ReplaceAll(lf, "\n", "\r\r\n"),
		"cr":     strings.ReplaceAll(lf, "\n", "\r"),
		"bom":    ingest.BOM + lf,
		"framed": "ZCZC 042\n" + lf + "\nNNNN\n",
	} {
		ss, errs := readAll(t, NewReader(strings.NewReader(in), name, Options{}))
		if len(ss) != 1 || len(errs) != 0 {
			t.Errorf("%s: %d soundings, errors %v", variant, len(ss), errs)
			continue
		}
		wantLine := ref[0].Source.Line
		if variant == "framed" {
			wantLine++
		}
		if ss[0].Source.Line != wantLine || fmt.Sprint(ss[0].Levels) != fmt.Sprint(ref[0].Levels) && variant != "framed" {
			t.Errorf("%s: sounding at line %d with %d levels, want line %d and the LF file's levels", variant, ss[0].Source.Line, len(ss[0].Levels), wantLine)
		}
	}
	junk := "exported 2023-02-23 by a message switch\r" + strings.Repeat("x", 5000) + "=\r" + lf
	ss, errs := readAll(t, NewReader(strings.NewReader(junk), name, Options{}))
	if len(ss) != 1 || len(ss[0].Levels) != len(ref[0].Levels) {
		t.Errorf("after junk: %d soundings", len(ss))
	}
	if len(errs) != 1 || !errors.Is(errs[0], ingest.ErrJunk) || !strings.Contains(errs[0].Error(), ":1: ") || len(errs[0].Error()) > 400 {
		t.Errorf("junk reported as %v, want one ErrJunk at line 1, quoted short", errs)
	}
}
