package archivev2

import "bytes"

// sniffLines is how many lines Sniff looks at for the first header: a few
// lines of text before it (a download note) are reported by the Reader and
// do not stop detection.
const sniffLines = 20

// Sniff reports whether prefix, the first bytes of a file, looks like a
// station data file: within its first lines (ending at LF or CR; blank ones
// and a UTF-8 byte-order mark ignored), after at most a few lines of plain
// text, a line starts with '#', an 11-character station id without spaces
// in columns 2–12, a blank column 13 and a 4-digit year in columns 14–17.
// A line holding control characters before that header gives false (binary
// content), as does a prefix too short to show a whole header.
func Sniff(prefix []byte) bool {
	b := prefix
	for range sniffLines {
		i := bytes.IndexAny(b, "\r\n")
		line := b
		if i >= 0 {
			line, b = b[:i], b[i+1:]
		} else {
			b = nil
		}
		line = bytes.TrimLeft(trimBOM(line), " \t")
		if len(line) == 0 {
			if b == nil {
				return false
			}
			continue
		}
		if isHeaderStart(line) {
			return true
		}
		if b == nil || !isText(line) {
			return false
		}
	}
	return false
}

func trimBOM(b []byte) []byte { return bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) }

func isHeaderStart(b []byte) bool {
	if len(b) < 17 || b[0] != '#' || b[12] != ' ' {
		return false
	}
	for _, c := range b[1:12] {
		if c <= ' ' || c > '~' {
			return false
		}
	}
	for _, c := range b[13:17] {
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}

// isText reports whether a line holds no control character but tab.
func isText(b []byte) bool {
	for _, c := range b {
		if c < ' ' && c != '\t' || c == 0x7f {
			return false
		}
	}
	return true
}
