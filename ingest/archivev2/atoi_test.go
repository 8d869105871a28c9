package archivev2

import (
	"strconv"
	"strings"
	"testing"
)

// atoiReference is atoi written with the standard library's strconv.Atoi:
// an optionally signed decimal integer of 1 to 9 digits, surrounded by
// spaces only.
func atoiReference(s string) (int, bool) {
	t := strings.Trim(s, " ")
	body := t
	if len(body) > 0 && (body[0] == '+' || body[0] == '-') {
		body = body[1:]
	}
	if len(body) == 0 || len(body) > 9 || strings.ContainsFunc(body, func(r rune) bool { return r < '0' || r > '9' }) {
		return 0, false
	}
	v, err := strconv.Atoi(t)
	return v, err == nil
}

// FuzzAtoi: the field parser agrees with strconv.Atoi on every input.
func FuzzAtoi(f *testing.F) {
	for _, s := range []string{"", " ", "-9999", "-8888", "  123", "123  ", " -12 ", "+5", "- 5", "5 5", "--1", "1-",
		"+", "-", "000000001", "0000000001", "999999999", "1234567890", " 1\t", "\x00", "12a", " 0 "} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, ok := atoi([]byte(s))
		want, wok := atoiReference(s)
		if ok != wok || (ok && got != want) {
			t.Errorf("atoi(%q) = %d, %v; strconv gives %d, %v", s, got, ok, want, wok)
		}
	})
}
