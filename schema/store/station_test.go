package store

import (
	"errors"
	"strings"
	"testing"
)

// TestEscapeStation: the partition value of any identifier is one plain
// file name (no '/', '=', '.', glob or control character) and reverses to
// the identifier; ordinary ids stand for themselves. The escape is the
// percent-encoding of RFC 3986 §2.1.
func TestEscapeStation(t *testing.T) {
	for id, want := range map[string]string{
		"USM00072520": "USM00072520",
		"0-20000-0-1": "0-20000-0-1",
		"../../../..": "%2E%2E%2F%2E%2E%2F%2E%2E%2F%2E%2E",
		"a=b":         "a%3Db",
		"?*[]":        "%3F%2A%5B%5D",
		"50%":         "50%25",
		"x\x00\n\xff": "x%00%0A%FF",
		"é":           "%C3%A9",
	} {
		got := EscapeStation(id)
		if got != want {
			t.Errorf("EscapeStation(%q) = %q, want %q", id, got, want)
		}
		back, err := UnescapeStation(got)
		if err != nil || back != id {
			t.Errorf("UnescapeStation(%q) = %q, %v; want %q", got, back, err, id)
		}
		if strings.ContainsAny(got, "/=.?*[]{}\\\x00\n") {
			t.Errorf("%q escapes to %q, which holds an unsafe character", id, got)
		}
	}
	for _, v := range []string{"%", "%4", "%zz", "a%2"} {
		if _, err := UnescapeStation(v); err == nil {
			t.Errorf("UnescapeStation(%q) accepted a malformed escape", v)
		}
	}
	if n := len("station=" + EscapeStation(strings.Repeat("\xff", MaxStationIDBytes))); n > 255 {
		t.Errorf("the longest escaped directory name is %d bytes, over the 255-byte name limit", n)
	}
}

func TestCheckStationID(t *testing.T) {
	for _, id := range []string{"USM00072520", "../x", "a=b", "é", strings.Repeat("x", MaxStationIDBytes)} {
		if err := CheckStationID(id); err != nil {
			t.Errorf("CheckStationID(%q) = %v, want nil", id, err)
		}
	}
	for _, id := range []string{"", "a\nb", "a\x00", "\xff", "a\x7f", strings.Repeat("x", MaxStationIDBytes+1), strings.Repeat("y", 300)} {
		err := CheckStationID(id)
		if !errors.Is(err, ErrStationID) {
			t.Errorf("CheckStationID(%q) = %v, want ErrStationID", id, err)
		} else if len(err.Error()) > 200 {
			t.Errorf("message of %d bytes for a %d-byte id", len(err.Error()), len(id))
		}
	}
}
