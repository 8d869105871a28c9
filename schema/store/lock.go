package store

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
)

// ErrLocked is returned by Lock when another writer holds the shard's lock.
var ErrLocked = errors.New("store is locked by another ingest")

// Lock is a held writer lock.
type Lock struct{ f *os.File }

// Acquire takes the writer lock of a shard of the store at dir, creating
// the store's metadata directory if needed. With wait it blocks until the
// lock is free; otherwise it fails at once with an error wrapping ErrLocked
// that says who holds it. The lock is an advisory flock(2) on
// _sondeclim/lock-SHARD, released by Release or when the process ends (a
// killed writer never leaves a stale lock).
func Acquire(dir string, sh Shard, wait bool) (*Lock, error) {
	meta := filepath.Join(dir, MetaDir)
	if err := os.MkdirAll(meta, 0o755); err != nil {
		return nil, fmt.Errorf("store: %w", err)
	}
	path := filepath.Join(meta, "lock-"+sh.Name())
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("store: %w", err)
	}
	how := syscall.LOCK_EX
	if !wait {
		how |= syscall.LOCK_NB
	}
	if err := syscall.Flock(int(f.Fd()), how); err != nil {
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("%w (lock file %s); wait for it to finish or use --wait", ErrLocked, path)
		}
		return nil, fmt.Errorf("store: lock %s: %w", path, err)
	}
	// The lock file is never written, so a run that changes nothing
	// changes no file of the store.
	return &Lock{f}, nil
}

// Release frees the lock.
func (l *Lock) Release() error {
	if l == nil || l.f == nil {
		return nil
	}
	syscall.Flock(int(l.f.Fd()), syscall.LOCK_UN)
	err := l.f.Close()
	l.f = nil
	return err
}

// Clean removes, in the partitions the shard owns, files that no manifest
// references any more: temporary files of interrupted writes, part files
// written by a run that was killed before its commit, and files the
// last commit replaced. Files any manifest references, and files in
// partitions of stations another shard owns, are never touched. It returns
// the paths removed; a file that could not be removed is an error naming
// it (after the others were removed). Writers call it after taking the
// lock, before writing.
func Clean(dir string, sh Shard, m *Manifest) ([]string, error) {
	all, err := ReadAll(dir)
	if err != nil {
		return nil, err
	}
	live := map[string]bool{}
	for _, mm := range all {
		for f := range mm.Live() {
			live[f] = true
		}
	}
	for f := range m.Live() {
		live[f] = true
	}
	var removed []string
	var failed []error // removals that failed (the files stay, unreferenced)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("store: %w", err)
	}
	for _, e := range entries {
		if !e.IsDir() || strings.HasPrefix(e.Name(), "_") || strings.HasPrefix(e.Name(), ".") {
			continue
		}
		table := e.Name()
		err := filepath.WalkDir(filepath.Join(dir, table), func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if d.IsDir() {
				if v, ok := strings.CutPrefix(d.Name(), "station="); ok {
					if st, err := UnescapeStation(v); err != nil || !sh.Owns(st) {
						return fs.SkipDir // another shard's, or not the store's
					}
				}
				return nil
			}
			rel, _ := filepath.Rel(dir, p)
			name := d.Name()
			stray := strings.HasPrefix(name, ".part") || (strings.HasSuffix(name, ".parquet") && !live[rel])
			if stray {
				switch err := os.Remove(p); {
				case err == nil:
					removed = append(removed, rel)
				case !errors.Is(err, fs.ErrNotExist):
					failed = append(failed, err)
				}
			}
			return nil
		})
		if err != nil {
			return removed, fmt.Errorf("store: clean %s: %w", table, err)
		}
	}
	// Stray temporary manifests.
	tmps, _ := filepath.Glob(filepath.Join(escapeGlob(dir), MetaDir, ".manifest-*"))
	for _, t := range tmps {
		switch err := os.Remove(t); {
		case err == nil:
			removed = append(removed, filepath.Join(MetaDir, filepath.Base(t)))
		case !errors.Is(err, fs.ErrNotExist):
			failed = append(failed, err)
		}
	}
	if len(failed) > 0 {
		return removed, fmt.Errorf("store: clean: %d file(s) could not be removed: %w", len(failed), errors.Join(failed...))
	}
	return removed, nil
}

// Sync makes every file written so far durable, with one sync(2) call,
// which a writer of many files does once before it commits its manifest
// instead of syncing each file (sync(2) also flushes other file systems; it
// is portable across Unix systems, unlike syncfs). dir is checked to exist.
func Sync(dir string) error {
	if _, err := os.Stat(dir); err != nil {
		return fmt.Errorf("store: sync: %w", err)
	}
	syscall.Sync()
	return nil
}
