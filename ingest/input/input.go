// Package input turns command-line arguments into the byte streams the
// readers decode: Expand resolves files, directories and glob patterns into
// a sorted list of paths, and Each streams a plain, gzip or zip file member
// by member without extracting anything to disk, under a limit on the
// decompressed size of each member.
package input

import (
	"archive/zip"
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync/atomic"
	"syscall"

	"github.com/klauspost/compress/flate"
	"github.com/klauspost/compress/gzip"

	"github.com/sondeclim/sondeclim/ingest"
)

// DefaultLimit is the decompressed-size limit per member used when Each is
// given 0: 8 GiB.
const DefaultLimit int64 = 8 << 30

// Expand resolves args into the list of files to read. Each argument is a
// file, a directory (walked recursively, skipping files and directories
// whose names begin with '.'; the directory named by the argument itself is
// always walked) or a glob pattern in the syntax of path/filepath.Match
// whose matches are treated the same way (hidden names are left out of the
// matches unless the pattern's last element itself begins with '.'). The
// result holds absolute, cleaned paths, each file once (a file reached
// under two names, by a relative and an absolute path, a link or a hard
// link, is listed under the first of them in order), sorted, so it depends
// neither on the order of args nor on the working directory the paths
// were given from: an input has one identity.
//
// A path that does not exist, a pattern that matches nothing or is
// malformed, and a directory that cannot be walked are errors naming the
// argument. No arguments give an empty list.
func Expand(args []string) ([]string, error) {
	seen := make(map[string]bool)
	for _, arg := range args {
		paths := []string{arg}
		if _, err := os.Stat(arg); err != nil {
			if !errors.Is(err, fs.ErrNotExist) || !hasMeta(arg) {
				return nil, fmt.Errorf("input %q: %w", arg, err)
			}
			m, gerr := filepath.Glob(arg)
			if gerr != nil {
				return nil, fmt.Errorf("input pattern %q: %w", arg, gerr)
			}
			m = slices.DeleteFunc(m, func(p string) bool {
				return isHidden(p) && !isHidden(arg)
			})
			if len(m) == 0 {
				return nil, fmt.Errorf("input pattern %q matches no file", arg)
			}
			paths = m
		}
		for _, p := range paths {
			if err := addPath(p, seen); err != nil {
				return nil, fmt.Errorf("input %q: %w", arg, err)
			}
		}
	}
	abs := make(map[string]bool, len(seen))
	for p := range seen {
		a, err := filepath.Abs(p)
		if err != nil {
			return nil, fmt.Errorf("input %q: %w", p, err)
		}
		abs[a] = true
	}
	out := make([]string, 0, len(abs))
	for p := range abs {
		out = append(out, p)
	}
	slices.Sort(out)
	// One file under two names (a hard link, a link to a file) is one
	// input: the first name in order stands for it.
	type fileID struct{ dev, ino uint64 }
	ids := make(map[fileID]bool, len(out))
	return slices.DeleteFunc(out, func(p string) bool {
		fi, err := os.Stat(p)
		if err != nil {
			return false
		}
		st, ok := fi.Sys().(*syscall.Stat_t)
		if !ok {
			return false
		}
		id := fileID{uint64(st.Dev), uint64(st.Ino)}
		if ids[id] {
			return true
		}
		ids[id] = true
		return false
	}), nil
}

// isHidden reports whether the last element of p begins with '.'.
func isHidden(p string) bool {
	b := filepath.Base(p)
	return strings.HasPrefix(b, ".") && b != "." && b != ".."
}

func hasMeta(s string) bool { return strings.ContainsAny(s, `*?[\`) }

// addPath adds a file, or the non-hidden files below a directory.
func addPath(p string, seen map[string]bool) error {
	info, err := os.Stat(p)
	if err != nil {
		return err
	}
	if !info.IsDir() {
		seen[filepath.Clean(p)] = true
		return nil
	}
	root := filepath.Clean(p)
	return filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if path != root && strings.HasPrefix(d.Name(), ".") {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			return nil
		}
		if d.Type()&fs.ModeSymlink != 0 {
			// Follow a link to a file; links to directories are not walked.
			if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
				return nil
			}
		} else if !d.Type().IsRegular() {
			return nil
		}
		seen[path] = true
		return nil
	})
}

// Each calls fn with the content of the file at path: once for a plain
// file or a gzip file (member ""), or once per regular member of a zip
// archive, in archive order, skipping directories. The kind is told by the
// first bytes (gzip 1F 8B, zip "PK\x03\x04" or "PK\x05\x06"), not by the
// name. Members are decompressed as they are read, never to disk.
//
// limit bounds the decompressed bytes of each member (0 means
// DefaultLimit); a member that exceeds it makes Each return an error
// wrapping ingest.ErrTooLarge that names file and member, whether or not fn
// passed the read error on. An error returned by fn stops Each and is
// returned as it is. Other errors are wrapped with the path.
func Each(path string, limit int64, fn func(member string, r io.Reader) error) error {
	return EachWithin(path, limit, nil, fn)
}

// Budget bounds the decompressed bytes of many streams together: the
// members of one input, or every compressed input of a run. It is safe
// for concurrent use.
type Budget struct {
	Limit int64  // bytes
	What  string // for messages: "per input", "per run"
	used  atomic.Int64
}

// Used returns the bytes charged so far.
func (b *Budget) Used() int64 { return b.used.Load() }

// Refund gives back n bytes charged for data that is read again.
func (b *Budget) Refund(n int64) { b.used.Add(-n) }

// Charge charges n bytes decompressed at once, as a stream of them read
// through EachWithin would be charged, and reports whether they fit; on
// false nothing is charged.
func (b *Budget) Charge(n int64) bool {
	if b.used.Add(n) > b.Limit {
		b.used.Add(-n)
		return false
	}
	return true
}

// BudgetError is the error of a stream stopped by an exhausted Budget; it
// wraps ingest.ErrTooLarge.
type BudgetError struct {
	Budget *Budget
	Where  string // file[!member]
}

func (e *BudgetError) Error() string {
	return fmt.Sprintf("%s: %v: the decompressed-size budget %s (%d bytes) is used up", e.Where, ingest.ErrTooLarge, e.Budget.What, e.Budget.Limit)
}
func (e *BudgetError) Unwrap() error { return ingest.ErrTooLarge }

// EachWithin is Each with budgets: every decompressed byte of a gzip or
// zip file is charged to each of them (plain files are not charged), and a
// stream that would exceed one fails with a *BudgetError, as the
// per-member limit does.
func EachWithin(path string, limit int64, budgets []*Budget, fn func(member string, r io.Reader) error) error {
	if limit <= 0 {
		limit = DefaultLimit
	}
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	br := bufio.NewReaderSize(f, 64<<10)
	magic, err := br.Peek(4)
	if err != nil && err != io.EOF {
		return fmt.Errorf("read %s: %w", path, err)
	}
	switch KindOf(magic) {
	case Gzip:
		zr, err := gzip.NewReader(br)
		if err != nil {
			return fmt.Errorf("read %s: %w", path, err)
		}
		defer zr.Close()
		return call(path, "", zr, limit, budgets, fn)
	case Zip:
		return eachZip(f, path, limit, budgets, fn)
	}
	return call(path, "", br, limit, nil, fn)
}

// Kind is how a file holds its content.
type Kind int

const (
	Plain Kind = iota // the content itself
	Gzip              // one gzip stream
	Zip               // a zip archive of members
)

// KindOf tells the kind of a file from its first bytes (at least 4 when
// the file has them): gzip starts 1F 8B, zip "PK\x03\x04" or "PK\x05\x06"
// (an empty archive); anything else is plain.
func KindOf(magic []byte) Kind {
	switch {
	case len(magic) >= 2 && magic[0] == 0x1f && magic[1] == 0x8b:
		return Gzip
	case len(magic) >= 4 && (string(magic[:4]) == "PK\x03\x04" || string(magic[:4]) == "PK\x05\x06"):
		return Zip
	}
	return Plain
}

func eachZip(f *os.File, path string, limit int64, budgets []*Budget, fn func(string, io.Reader) error) error {
	info, err := f.Stat()
	if err != nil {
		return fmt.Errorf("read %s: %w", path, err)
	}
	zr, err := zip.NewReader(f, info.Size())
	if err != nil {
		return fmt.Errorf("read %s: %w", path, err)
	}
	zr.RegisterDecompressor(zip.Deflate, inflater)
	for _, zf := range zr.File {
		if !zf.Mode().IsRegular() || strings.HasSuffix(zf.Name, "/") {
			continue
		}
		if zf.UncompressedSize64 > uint64(limit) {
			return tooLarge(path, zf.Name, limit)
		}
		rc, err := zf.Open()
		if err != nil {
			return fmt.Errorf("read %s!%s: %w", path, zf.Name, err)
		}
		err = call(path, zf.Name, rc, limit, budgets, fn)
		rc.Close()
		if err != nil {
			return err
		}
	}
	return nil
}

// inflater decompresses a zip member's deflate stream. It is the same
// format as the standard library's (RFC 1951), decoded by a faster
// implementation: on the real Sterling file, gzip and deflate were about a
// seventh of all ingest CPU time with the standard library's decoder.
func inflater(r io.Reader) io.ReadCloser { return flate.NewReader(r) }

func tooLarge(path, member string, limit int64) error {
	name := path
	if member != "" {
		name += "!" + member
	}
	return fmt.Errorf("%s: %w (limit %d bytes)", name, ingest.ErrTooLarge, limit)
}

// call runs fn on r capped at limit bytes, and reports a tripped cap even
// when fn swallowed it.
func call(path, member string, r io.Reader, limit int64, budgets []*Budget, fn func(string, io.Reader) error) error {
	c := &capReader{r: r, left: limit, tooLarge: tooLarge(path, member, limit), budgets: budgets, where: path}
	if member != "" {
		c.where += "!" + member
	}
	err := fn(member, c)
	if c.tripped {
		return c.tooLarge
	}
	return err
}

// capReader passes at most left bytes through and fails, rather than
// truncating silently, when the source holds more.
type capReader struct {
	r        io.Reader
	left     int64
	tooLarge error
	tripped  bool
	budgets  []*Budget
	where    string
}

func (c *capReader) Read(p []byte) (int, error) {
	if c.tripped {
		return 0, c.tooLarge
	}
	if len(p) == 0 {
		return 0, nil
	}
	if c.left <= 0 {
		var one [1]byte
		for {
			n, err := c.r.Read(one[:])
			if n > 0 {
				c.tripped = true
				return 0, c.tooLarge
			}
			if err != nil {
				return 0, err
			}
		}
	}
	if int64(len(p)) > c.left {
		p = p[:c.left]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	for _, b := range c.budgets {
		if b.used.Add(int64(n)) > b.Limit {
			c.tripped = true
			c.tooLarge = &BudgetError{Budget: b, Where: c.where}
			return 0, c.tooLarge
		}
	}
	return n, err
}
