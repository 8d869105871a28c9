package ingest

import (
	"bytes"
	"io"
	"strings"
	"testing"
	"testing/iotest"
)

// TestLineEnds: a CR of its own reads as LF, CR LF and CR CR LF are kept
// (they are one line end to the readers), also when the CRs and the LF
// fall into different reads; byte positions never move. Line-end
// conventions from common practice (LF Unix, CR LF DOS and WMO bulletins,
// CR old Macintosh), no source.
func TestLineEnds(t *testing.T) {
	for in, want := range map[string]string{
		"a\rb\rc":       "a\nb\nc",
		"a\r\nb\r":      "a\r\nb\n",
		"a\r\r\nb":      "a\r\r\nb",
		"a\r\rb":        "a\n\nb",
		"\r":            "\n",
		"no ends":       "no ends",
		"a\r\r\r\r\r\n": "a\r\r\r\r\r\n",
	} {
		for name, r := range map[string]io.Reader{
			"whole":    strings.NewReader(in),
			"one byte": iotest.OneByteReader(strings.NewReader(in)),
			"halves":   iotest.HalfReader(strings.NewReader(in)),
		} {
			got, err := io.ReadAll(LineEnds(r))
			if err != nil || string(got) != want {
				t.Errorf("%q read %s: %q, %v; want %q", in, name, got, err, want)
			}
		}
	}
	// A long input with CRs at every chunk boundary.
	in := bytes.Repeat([]byte("0123456\r"), 100000)
	got, _ := io.ReadAll(LineEnds(bytes.NewReader(in)))
	if want := bytes.ReplaceAll(in, []byte("\r"), []byte("\n")); !bytes.Equal(got, want) {
		t.Error("long CR-only input not converted")
	}
}

// TestQuote: a quoted token is at most QuoteLimit bytes of the input plus
// the escapes and the length, whatever the token's size.
func TestQuote(t *testing.T) {
	if got := Quote("ab\x00"); got != `"ab\x00"` {
		t.Errorf("short: %s", got)
	}
	big := strings.Repeat("x", 20<<20)
	got := Quote(big)
	if len(got) > 3*QuoteLimit || !strings.Contains(got, "(20971520 bytes)") {
		t.Errorf("20 MB token quoted as %d bytes: %.200s", len(got), got)
	}
	if got := QuoteBytes([]byte(big)); len(got) > 3*QuoteLimit {
		t.Errorf("QuoteBytes: %d bytes", len(got))
	}
}
