package main

import (
	"strings"
	"testing"
)

// TestByteSize: sizes are whole numbers of bytes or of the IEC binary
// units (IEC 80000-13: 1 KiB = 1024 bytes, 1 MiB = 1024 KiB, ...), and a
// default prints in the largest unit that divides it.
func TestByteSize(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{{"100", 100}, {"8GiB", 8589934592}, {"512 MiB", 536870912}, {"3KiB", 3072}, {"1TiB", 1099511627776}, {"0", 0}} {
		var b byteSize
		if err := b.Set(c.in); err != nil || int64(b) != c.want {
			t.Errorf("Set(%q) = %d, %v; want %d", c.in, b, err, c.want)
		}
	}
	for _, in := range []string{"", "3XB", "-1", "1.5GiB", "GiB", "9999999TiB", "8 gib"} {
		var b byteSize
		if err := b.Set(in); err == nil {
			t.Errorf("Set(%q) = %d, want an error", in, b)
		}
	}
	for n, want := range map[int64]string{8 << 30: "8GiB", 128 << 20: "128MiB", 256 << 30: "256GiB", 1536: "1536", 2048: "2KiB", 1000: "1000"} {
		if b := byteSize(n); b.String() != want {
			t.Errorf("byteSize(%d) prints %q, want %q", n, b.String(), want)
		}
	}
}

// TestHelpReads: every command's help keeps its lines within 80 columns
// outside the flag list and the examples (commands and flag texts are
// printed by the flag package, one per line), and a command without flags
// shows no empty flag list.
func TestHelpReads(t *testing.T) {
	for name := range commands {
		code, out, errs := runCmd(t, name, "-h")
		text := out + errs
		if code != exitOK {
			t.Errorf("%s -h: exit %d", name, code)
		}
		body, _, _ := strings.Cut(text, "\nFlags:\n")
		body, _, _ = strings.Cut(body, "\nExamples:\n")
		for i, line := range strings.Split(body, "\n") {
			if i == 0 || strings.HasPrefix(line, "  --") {
				continue // the synopsis, an example flag
			}
			if n := len([]rune(line)); n > 80 {
				t.Errorf("%s -h: line of %d columns: %q", name, n, line)
			}
		}
		if strings.Contains(text, "Flags:\n\n") || strings.Contains(text, "Flags:\nExamples") {
			t.Errorf("%s -h: empty flag list", name)
		}
	}
}

// TestWrapList: the items in order, comma-separated, a full stop at the
// end, no line over the width.
func TestWrapList(t *testing.T) {
	items := []string{"mixed_layer_depth", "mixing_height", "parcel_height", "sbi_depth", "sbi_frequency", "sbi_strength"}
	got := wrapList(items, 40, "  ")
	for _, l := range strings.Split(got, "\n") {
		if len(l) > 40 || !strings.HasPrefix(l, "  ") {
			t.Errorf("line %q", l)
		}
	}
	flat := strings.Join(strings.Fields(got), " ")
	if want := strings.Join(items, ", ") + "."; flat != want {
		t.Errorf("wrapList: %q, want %q", flat, want)
	}
}
