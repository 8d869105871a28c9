package input

import (
	"archive/zip"
	"bufio"
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
)

// write creates dir/name (and its parents) holding data.
func write(t *testing.T, dir, name string, data []byte) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func gzipped(t *testing.T, data []byte) []byte {
	t.Helper()
	var b bytes.Buffer
	zw := gzip.NewWriter(&b)
	if _, err := zw.Write(data); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

type member struct {
	name string
	data []byte
}

// zipped builds a zip archive; a name ending in "/" is a directory entry.
func zipped(t *testing.T, ms ...member) []byte {
	t.Helper()
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	for _, m := range ms {
		w, err := zw.Create(m.name)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := w.Write(m.data); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestExpand(t *testing.T) {
	dir := t.TempDir()
	a := write(t, dir, "a.txt", []byte("a"))
	b := write(t, dir, "sub/b.txt", []byte("b"))
	c := write(t, dir, "sub/deeper/c.zip", []byte("c"))
	write(t, dir, "sub/.hidden.txt", []byte("h"))
	write(t, dir, "sub/.git/config", []byte("g"))
	hid := write(t, dir, ".top.txt", []byte("t"))
	all := []string{a, c, b}
	slices.Sort(all)

	tests := []struct {
		name string
		args []string
		want []string
	}{
		{"directory walked, hidden skipped", []string{dir}, all},
		{"order does not matter, duplicates merged", []string{b, dir, a, filepath.Join(dir, "sub", "..", "a.txt")}, all},
		{"glob", []string{filepath.Join(dir, "*.txt")}, []string{a}},
		{"glob matching a directory", []string{filepath.Join(dir, "s*")}, []string{b, c}},
		{"hidden file named explicitly", []string{hid}, []string{hid}},
		{"hidden file by a dot pattern", []string{filepath.Join(dir, ".t*")}, []string{hid}},
		{"nothing", nil, []string{}},
	}
	for _, tc := range tests {
		got, err := Expand(tc.args)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s: got %v, want %v", tc.name, got, tc.want)
		}
	}
	rev := slices.Clone(tests[1].args)
	slices.Reverse(rev)
	if got, _ := Expand(rev); !slices.Equal(got, all) {
		t.Errorf("reversed arguments: %v", got)
	}

	for _, bad := range []string{
		filepath.Join(dir, "missing.txt"),
		filepath.Join(dir, "*.nomatch"),
		filepath.Join(dir, "[x"),
	} {
		_, err := Expand([]string{a, bad})
		if err == nil || !strings.Contains(err.Error(), bad) {
			t.Errorf("Expand(%q) error %v, want one naming it", bad, err)
		}
	}
}

// collect runs Each and returns "member=content" for every call.
func collect(t *testing.T, path string, limit int64) ([]string, error) {
	t.Helper()
	var got []string
	err := Each(path, limit, func(m string, r io.Reader) error {
		b, err := io.ReadAll(r)
		if err != nil {
			return err
		}
		got = append(got, m+"="+string(b))
		return nil
	})
	return got, err
}

func TestEach(t *testing.T) {
	dir := t.TempDir()
	ms := []member{{"z-first.txt", []byte("one")}, {"dir/", nil}, {"dir/a-second.txt", []byte("two")}, {"empty.txt", nil}}
	tests := []struct {
		name string
		file string
		data []byte
		want []string
	}{
		{"plain", "p.txt", []byte("plain text"), []string{"=plain text"}},
		{"empty plain", "e.txt", nil, []string{"="}},
		{"gzip by magic, not name", "g.dat", gzipped(t, []byte("inside gz")), []string{"=inside gz"}},
		{"zip in archive order, directories skipped", "z.bin", zipped(t, ms...),
			[]string{"z-first.txt=one", "dir/a-second.txt=two", "empty.txt="}},
		{"empty zip", "none.zip", zipped(t), nil},
		{"text named .gz is read as text", "fake.gz", []byte("not compressed"), []string{"=not compressed"}},
	}
	for _, tc := range tests {
		got, err := collect(t, write(t, dir, tc.file, tc.data), 0)
		if err != nil || !slices.Equal(got, tc.want) {
			t.Errorf("%s: got %q, %v; want %q", tc.name, got, err, tc.want)
		}
	}
}

func TestEachLimit(t *testing.T) {
	dir := t.TempDir()
	big := bytes.Repeat([]byte{'0'}, 1<<20) // compresses to about 1 KB
	tests := []struct {
		name, file string
		data       []byte
		limit      int64
		member     string // expected in the message
		ok         bool
	}{
		{"zip bomb-like member", "bomb.zip", zipped(t, member{"ok.txt", []byte("x")}, member{"bomb.txt", big}), 1000, "bomb.txt", false},
		{"gzip over the limit", "bomb.gz", gzipped(t, big), 1000, "bomb.gz", false},
		{"plain over the limit", "big.txt", big, 1 << 19, "big.txt", false},
		{"exactly at the limit", "exact.gz", gzipped(t, big), 1 << 20, "", true},
	}
	for _, tc := range tests {
		path := write(t, dir, tc.file, tc.data)
		_, err := collect(t, path, tc.limit)
		if tc.ok {
			if err != nil {
				t.Errorf("%s: %v", tc.name, err)
			}
			continue
		}
		if !errors.Is(err, ingest.ErrTooLarge) || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), tc.member) {
			t.Errorf("%s: error %v, want ErrTooLarge naming %s and %s", tc.name, err, path, tc.member)
		}
	}

	// A callback that ignores read errors still gets ErrTooLarge from Each.
	path := write(t, dir, "swallow.gz", gzipped(t, big))
	err := Each(path, 10, func(_ string, r io.Reader) error {
		io.Copy(io.Discard, r) //nolint:errcheck // the point of the test
		return nil
	})
	if !errors.Is(err, ingest.ErrTooLarge) {
		t.Errorf("swallowed: %v", err)
	}
}

func TestEachStops(t *testing.T) {
	dir := t.TempDir()
	path := write(t, dir, "z.zip", zipped(t, member{"a", []byte("1")}, member{"b", []byte("2")}))
	stop := errors.New("stop")
	calls := 0
	err := Each(path, 0, func(string, io.Reader) error { calls++; return stop })
	if err != stop || calls != 1 {
		t.Errorf("err %v after %d calls, want stop after 1", err, calls)
	}
	if err := Each(filepath.Join(dir, "missing"), 0, func(string, io.Reader) error { return nil }); err == nil {
		t.Error("missing file: no error")
	}
	bad := write(t, dir, "broken.zip", []byte("PK\x03\x04 truncated"))
	if err := Each(bad, 0, func(string, io.Reader) error { return nil }); err == nil || !strings.Contains(err.Error(), bad) {
		t.Errorf("broken zip: %v", err)
	}
}

// validationDir returns ../shared/validation/archive-v2, or skips the test.
func validationDir(t *testing.T) string { return realdata.Dir(t, "archive-v2") }

// headers streams a member and counts its lines and header lines.
func headers(r io.Reader) (lines, hdrs int, first string, err error) {
	sc := bufio.NewScanner(r)
	for sc.Scan() {
		if lines == 0 {
			first = sc.Text()
		}
		lines++
		if strings.HasPrefix(sc.Text(), "#") {
			hdrs++
		}
	}
	return lines, hdrs, first, sc.Err()
}

// Sources: PROVENANCE.md (Sterling zip holds one 7.0 MB text file with 662
// soundings and 131,306 levels; Wien gzip holds 321 soundings); the member
// name and its size 7,006,882 bytes are those `unzip -l` lists.
func TestRealArchives(t *testing.T) {
	dir := validationDir(t)
	var got []string
	err := Each(filepath.Join(dir, "USM00072403-data-beg2016.txt.zip"), 0, func(m string, r io.Reader) error {
		n, err := io.Copy(io.Discard, r)
		got = append(got, fmt.Sprintf("%s %d", m, n))
		return err
	})
	if err != nil || !slices.Equal(got, []string{"USM00072403-data.txt 7006882"}) {
		t.Errorf("Sterling zip: %v, %v", got, err)
	}
	err = Each(filepath.Join(dir, "USM00072403-data-beg2016.txt.zip"), 0, func(m string, r io.Reader) error {
		lines, hdrs, first, err := headers(r)
		if lines != 662+131306 || hdrs != 662 || !strings.HasPrefix(first, "#USM00072403 2016 01 01 00") {
			t.Errorf("Sterling: %d lines, %d headers, first %q", lines, hdrs, first)
		}
		return err
	})
	if err != nil {
		t.Error(err)
	}
	err = Each(filepath.Join(dir, "AUM00011035-data.txt.gz"), 0, func(m string, r io.Reader) error {
		_, hdrs, first, err := headers(r)
		if m != "" || hdrs != 321 || !strings.HasPrefix(first, "#AUM00011035 2015 01 23 12") {
			t.Errorf("Wien: member %q, %d headers, first %q", m, hdrs, first)
		}
		return err
	})
	if err != nil {
		t.Error(err)
	}
	// The real zip's member exceeds a 1 MB limit.
	err = Each(filepath.Join(dir, "USM00072403-data-beg2016.txt.zip"), 1<<20, func(string, io.Reader) error { return nil })
	if !errors.Is(err, ingest.ErrTooLarge) || !strings.Contains(err.Error(), "USM00072403-data.txt") {
		t.Errorf("limited: %v", err)
	}
	files, err := Expand([]string{filepath.Join(dir, "*.txt.*"), dir})
	if err != nil || len(files) != 8 {
		t.Errorf("Expand on the validation folder: %d files (%v), want 8", len(files), err)
	}
}
