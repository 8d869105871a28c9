package engine

import (
	"archive/zip"
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/schema"
)

// TestBUFRSamplesStored ingests every real BUFR sample file
// (../shared/validation/bufr, PROVENANCE.md), one of them again inside a
// GTS bulletin in a zip archive, and checks that every message is decoded
// and stored: 427 soundings (the message counts of Debian's ecCodes
// bufr_count: 1 + 1 + 3 + 420 + 1 + 1) and 29,235 levels (the reference
// decoder's temperature-group levels, less the standard levels below the
// surface; ingest/bufr's TestAgainstReferenceDecoder compares them value by
// value), with nothing skipped.
func TestBUFRSamplesStored(t *testing.T) {
	dir := realdata.Dir(t, "bufr")
	files, err := filepath.Glob(filepath.Join(dir, "*.bufr"))
	if err != nil || len(files) != 6 {
		t.Fatalf("sample files %v, %v", files, err)
	}
	in := t.TempDir()
	var zb bytes.Buffer
	za := zip.NewWriter(&zb)
	w, err := za.Create("bulletins/IUSK73.bin")
	if err != nil {
		t.Fatal(err)
	}
	msg := realdata.Text(t, "bufr", "IUSK73_AMMC_040000.bufr")
	w.Write([]byte("\x01\r\r\n287\r\r\nIUSK73 AMMC 040000\r\r\n"))
	w.Write(msg)
	w.Write([]byte("\r\r\n\x03"))
	za.Close()
	if err := os.WriteFile(filepath.Join(in, "gts.zip"), zb.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	sum, err := Run(context.Background(), t.TempDir(), append(files, in), Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(sum.Skipped) != 0 {
		t.Errorf("skipped: %v", sum.Skipped)
	}
	if sum.SoundingsRead != 428 || sum.DuplicatesMerged != 1 || sum.Soundings != 427 {
		t.Errorf("read %d, merged %d, stored %d; want 428, 1, 427", sum.SoundingsRead, sum.DuplicatesMerged, sum.Soundings)
	}
	if n := sum.Rows[schema.TableLevels]; n != 29235 {
		t.Errorf("levels written %d, want 29235", n)
	}
}
