package temp

import (
	"bytes"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
)

// token is one whitespace-separated group with the 1-based line it is on.
type token struct {
	s    string
	line int
}

// rawReport is the token list of one report (text up to "="), with the
// correction rank of its bulletin and its position in the stream.
type rawReport struct {
	toks  []token
	rank  int
	order int
}

// splitStream cuts a bulletin stream into reports. SOH (0x01) and ETX
// (0x03) end a bulletin, abbreviated heading lines set the correction rank
// of the reports that follow, and "=" ends a report. A line ends at LF, at
// CRs followed by LF (so CR CR LF counts as one line end) and at a CR of
// its own; a UTF-8 byte-order mark at the start of a line is ignored.
func splitStream(data []byte) []rawReport {
	var (
		out  []rawReport
		cur  []token
		rank int
	)
	flush := func() {
		if len(cur) > 0 {
			out = append(out, rawReport{toks: cur, rank: rank, order: len(out)})
			cur = nil
		}
	}
	line := 1
	for len(data) > 0 {
		var ln []byte
		if i := bytes.IndexAny(data, "\r\n"); i >= 0 {
			// CR* LF is one line end (WMO bulletins end lines CR CR LF);
			// a CR of its own is one too (old Macintosh text).
			j := i
			for j < len(data) && data[j] == '\r' {
				j++
			}
			switch {
			case j < len(data) && data[j] == '\n':
				j++
			case j > i:
				j = i + 1
			default:
				j = i + 1 // LF
			}
			ln, data = data[:i], data[j:]
		} else {
			ln, data = data, nil
		}
		ln = bytes.TrimPrefix(ln, []byte(ingest.BOM))
		// Framing characters end the current bulletin.
		if bytes.IndexByte(ln, 0x01) >= 0 || bytes.IndexByte(ln, 0x03) >= 0 {
			flush()
			rank = 0
			ln = bytes.Map(func(r rune) rune {
				if r == 0x01 || r == 0x03 {
					return ' '
				}
				return r
			}, ln)
		}
		text := strings.ReplaceAll(string(ln), "\r", "")
		if r, ok := headingRank(text); ok {
			flush()
			rank = r
			line++
			continue
		}
		for _, f := range strings.Fields(text) {
			for {
				i := strings.IndexByte(f, '=')
				if i < 0 {
					break
				}
				if i > 0 {
					cur = append(cur, token{f[:i], line})
				}
				flush()
				f = f[i+1:]
			}
			if f != "" {
				cur = append(cur, token{f, line})
			}
		}
		line++
	}
	flush()
	return out
}

// headingRank reports whether line is a WMO abbreviated heading
// "T1T2A1A2ii CCCC YYGGgg [BBB]" and returns the rank of its correction
// indicator: 0 for none, RRx 1–26, AAx 101–126, CCx 201–226.
func headingRank(line string) (int, bool) {
	f := strings.Fields(line)
	if len(f) < 3 || len(f) > 4 {
		return 0, false
	}
	if len(f[0]) != 6 || !isUpper(f[0][:4]) || !isDigits(f[0][4:]) {
		return 0, false
	}
	if len(f[1]) != 4 || !isUpper(f[1]) || len(f[2]) != 6 || !isDigits(f[2]) {
		return 0, false
	}
	if len(f) == 3 {
		return 0, true
	}
	b := f[3]
	if len(b) != 3 || b[2] < 'A' || b[2] > 'Z' {
		return 0, false
	}
	n := int(b[2]-'A') + 1
	switch b[:2] {
	case "RR":
		return n, true
	case "AA":
		return 100 + n, true
	case "CC":
		return 200 + n, true
	}
	return 0, false
}

func isUpper(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < 'A' || s[i] > 'Z' {
			return false
		}
	}
	return s != ""
}

func isDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return s != ""
}
