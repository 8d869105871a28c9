package store

import (
	"errors"
	"fmt"
	"strings"
	"unicode/utf8"

	"github.com/sondeclim/sondeclim/ingest"
)

// MaxStationIDBytes is the longest station identifier the store accepts,
// bytes. Station identifiers in use are far shorter (5-digit WMO numbers,
// 11-character archive ids, WIGOS identifiers of up to about 35
// characters); the bound keeps every escaped partition directory name
// (at most 3 bytes per byte of the id, see EscapeStation) under the
// 255-byte name limit of common file systems.
const MaxStationIDBytes = 64

// ErrStationID is wrapped by CheckStationID's errors.
var ErrStationID = errors.New("station identifier not storable")

// CheckStationID reports whether a station identifier can be stored: it is
// not empty, at most MaxStationIDBytes bytes, valid UTF-8 and free of
// control characters (newline, NUL, …), which no identifier scheme uses
// and which a table value or a manifest key would not carry back intact.
// Any other character is allowed; the partition directory escapes it.
func CheckStationID(id string) error {
	switch {
	case id == "":
		return fmt.Errorf("%w: empty", ErrStationID)
	case len(id) > MaxStationIDBytes:
		return fmt.Errorf("%w: %d bytes, longer than %d (%s…)", ErrStationID, len(id), MaxStationIDBytes, Quote(id[:32]))
	case !utf8.ValidString(id):
		return fmt.Errorf("%w: %s is not valid UTF-8", ErrStationID, Quote(id))
	case strings.IndexFunc(id, func(r rune) bool { return r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) }) >= 0:
		return fmt.Errorf("%w: %s holds a control character", ErrStationID, Quote(id))
	}
	return nil
}

// EscapeStation turns a station identifier into the value of its
// partition directory (TABLE/station=VALUE/…): ASCII letters, digits, '-'
// and '_' stand for themselves, every other byte is written as '%'
// followed by two upper-case hex digits (the percent-encoding of RFC 3986
// §2.1, applied to every byte outside that set, '.' included). The result
// never holds '/', '=', '.', a glob character or a byte a file system
// refuses, so it cannot name another directory or break the Hive layout;
// UnescapeStation reverses it. Readers of the store do not rely on the
// directory: every table file carries station_id.
func EscapeStation(id string) string {
	const hex = "0123456789ABCDEF"
	var b strings.Builder
	for i := 0; i < len(id); i++ {
		c := id[i]
		if c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_' {
			b.WriteByte(c)
			continue
		}
		b.WriteByte('%')
		b.WriteByte(hex[c>>4])
		b.WriteByte(hex[c&15])
	}
	return b.String()
}

// UnescapeStation reverses EscapeStation. A value EscapeStation cannot
// have produced is an error.
func UnescapeStation(v string) (string, error) {
	var b strings.Builder
	for i := 0; i < len(v); i++ {
		c := v[i]
		if c != '%' {
			b.WriteByte(c)
			continue
		}
		if i+2 >= len(v) {
			return "", fmt.Errorf("partition value %s: truncated escape", Quote(v))
		}
		hi, lo := unhex(v[i+1]), unhex(v[i+2])
		if hi < 0 || lo < 0 {
			return "", fmt.Errorf("partition value %s: bad escape", Quote(v))
		}
		b.WriteByte(byte(hi<<4 | lo))
		i += 2
	}
	return b.String(), nil
}

func unhex(c byte) int {
	switch {
	case c >= '0' && c <= '9':
		return int(c - '0')
	case c >= 'A' && c <= 'F':
		return int(c-'A') + 10
	}
	return -1
}

// Quote quotes s for a message, at most ingest.QuoteLimit bytes of it
// (ingest.Quote: the one quoting rule of every message about input).
func Quote(s string) string { return ingest.Quote(s) }
