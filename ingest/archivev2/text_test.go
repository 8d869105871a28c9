package archivev2

import (
	"bytes"
	"errors"
	"reflect"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
)

// TestLineEndsAndMarks: the same two soundings written with LF, CR LF,
// CR CR LF and CR-only line ends, behind a UTF-8 byte-order mark, or
// concatenated with a second file that has its own mark, read as the same
// soundings with the same line numbers; lines of text before the first
// header are reported once (orphan records, with their lines) and the
// soundings after them are read. Reading by segments (Index) agrees with
// reading whole in every case. The records are the invented scaffolding
// of unit_test.go; line ends and marks as in the Unicode standard
// (U+FEFF, §23.8) and common practice for CR-only text, no source.
func TestLineEndsAndMarks(t *testing.T) {
	lines := []string{hdrA, lvSfc, lvStd, hdrB, lvSfc}
	want, perrs := readAll(t, strings.NewReader(strings.Join(lines, "\n")+"\n"), "f")
	if len(want) != 2 || len(perrs) != 0 {
		t.Fatalf("scaffolding reads as %d soundings, %v", len(want), perrs)
	}
	type shape struct {
		station string
		line    int
		levels  []int
	}
	shapes := func(in string) ([]shape, []*ingest.ParseError) {
		t.Helper()
		ss, pe := readAll(t, strings.NewReader(in), "f")
		var out []shape
		for _, s := range ss {
			sh := shape{station: s.StationID, line: s.Source.Line}
			for _, l := range s.Levels {
				sh.levels = append(sh.levels, l.Line)
			}
			out = append(out, sh)
		}
		checkSame(t, []byte(in))
		return out, pe
	}
	ref, _ := shapes(strings.Join(lines, "\n") + "\n")
	for name, in := range map[string]string{
		"crlf":     strings.Join(lines, "\r\n") + "\r\n",
		"crcrlf":   strings.Join(lines, "\r\r\n") + "\r\r\n",
		"cr":       strings.Join(lines, "\r") + "\r",
		"cr-noend": strings.Join(lines, "\r"),
		"bom":      ingest.BOM + strings.Join(lines, "\n") + "\n",
		"bom-cr":   ingest.BOM + strings.Join(lines, "\r"),
	} {
		got, pe := shapes(in)
		if !reflect.DeepEqual(got, ref) || len(pe) != 0 {
			t.Errorf("%s: %v, errors %v; want %v", name, got, pe, ref)
		}
	}
	// Two files concatenated, the second with its own mark.
	two := ingest.BOM + strings.Join(lines[:3], "\n") + "\n" + ingest.BOM + strings.Join(lines[3:], "\n") + "\n"
	if got, pe := shapes(two); !reflect.DeepEqual(got, ref) || len(pe) != 0 {
		t.Errorf("concatenated with marks: %v, errors %v; want %v", got, pe, ref)
	}
	// Junk before the first header: reported at its lines, the rest read.
	junk := "Downloaded 2024-05-01 from the archive\r\nsee readme\r\n" + strings.Join(lines, "\r\n") + "\r\n"
	got, pe := shapes(junk)
	if len(got) != 2 || got[0].line != 3 || got[1].line != 6 {
		t.Errorf("after junk: %v, want the soundings at lines 3 and 6", got)
	}
	if len(pe) != 1 || pe[0].Line != 1 || !errors.Is(pe[0], ingest.ErrOrphanLevel) || !strings.Contains(pe[0].Error(), "lines 1-2") {
		t.Errorf("junk reported as %v, want one orphan-record error at line 1 naming lines 1-2", pe)
	}
	if !Sniff([]byte(junk)) {
		t.Errorf("a file with two lines of text before its first header is not recognised")
	}
}

func TestSniffText(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want bool
	}{
		{"note\r" + hdrA + "\r", true},
		{strings.Repeat("x\n", sniffLines-1) + hdrA, true},
		{strings.Repeat("x\n", sniffLines) + hdrA, false},
		{"\x00\x01\x02\n" + hdrA, false}, // binary before it
		{"note only\n", false},
		{hdrA[:10] + "\n" + hdrA, true},
	} {
		if got := Sniff([]byte(tc.in)); got != tc.want {
			t.Errorf("Sniff(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
	var b bytes.Buffer
	b.WriteString(ingest.BOM)
	b.WriteString(hdrA)
	if !Sniff(b.Bytes()) {
		t.Error("mark then header not recognised")
	}
}
