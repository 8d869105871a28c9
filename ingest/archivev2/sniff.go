package archivev2

// Sniff reports whether prefix, the first bytes of a file, looks like a
// station data file: after any blank lines (and a UTF-8 byte-order mark),
// the first line starts with '#', an 11-character station id without
// spaces in columns 2–12, a blank column 13 and a 4-digit year in columns
// 14–17. A prefix too short to show all of that gives false.
func Sniff(prefix []byte) bool {
	b := prefix
	if len(b) >= 3 && b[0] == 0xEF && b[1] == 0xBB && b[2] == 0xBF {
		b = b[3:]
	}
	for len(b) > 0 && (b[0] == '\n' || b[0] == '\r' || b[0] == ' ' || b[0] == '\t') {
		b = b[1:]
	}
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
