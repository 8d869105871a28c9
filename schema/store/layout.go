package store

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/sondeclim/sondeclim/schema"
)

// ErrLayout is returned for a run whose sharding does not match the
// store's recorded layout.
var ErrLayout = errors.New("store has another shard layout")

// Layout is the store's shard layout, recorded in _sondeclim/layout.json by
// the first writer: Shards is N for a store written as N shards, 1 for an
// unsharded store. Every writer must use it: the shards of one layout
// partition the stations, so mixing layouts would store a station twice
// (once per manifest that owns it).
type Layout struct {
	Shards int `json:"shards"`
}

func layoutOf(sh Shard) Layout { return Layout{Shards: max(1, sh.N)} }

func (l Layout) String() string {
	if l.Shards <= 1 {
		return "unsharded"
	}
	return fmt.Sprintf("%d shards (--shard K/%d)", l.Shards, l.Shards)
}

func layoutPath(dir string) string { return filepath.Join(dir, MetaDir, "layout.json") }

// CheckLayout makes sure a writer of shard sh may write the store at dir:
// the store's recorded layout must be sh's. A store without a record gets
// one: the layout its manifests show (stores written before the record
// existed), or sh's for a new store. The record is created with an
// exclusive link, so of two first writers with different layouts starting
// at once, one is refused. Writers call it with their shard's lock held.
func CheckLayout(dir string, sh Shard) error {
	want := layoutOf(sh)
	have, err := readLayout(dir)
	if err != nil {
		return err
	}
	if have == nil {
		rec, err := layoutOfManifests(dir)
		if err != nil {
			return err
		}
		if rec == nil {
			rec = &want
		}
		if err := createLayout(dir, *rec); err != nil {
			return err
		}
		if have, err = readLayout(dir); err != nil {
			return err
		}
	}
	if *have != want {
		this := "an unsharded run"
		if sh.N > 1 {
			this = "a run with --shard " + sh.String()
		}
		return fmt.Errorf("%w: %s is %s (recorded in %s), and %s would store its stations a second time; "+
			"use the store's layout, or ingest into a new store directory", ErrLayout, dir, have, layoutPath(dir), this)
	}
	return nil
}

func readLayout(dir string) (*Layout, error) {
	b, err := os.ReadFile(layoutPath(dir))
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("store: %w", err)
	}
	var l Layout
	if err := json.Unmarshal(b, &l); err != nil || l.Shards < 1 {
		return nil, fmt.Errorf("store: %s is damaged (%q); it records the store's shard layout: restore it, "+
			"or write it as {\"shards\": N} (1 for an unsharded store)", layoutPath(dir), Quote(string(b)))
	}
	return &l, nil
}

// layoutOfManifests infers the layout from the manifests' names: nil for a
// store without manifests; an error when they disagree (a store mixed
// before layouts were recorded).
func layoutOfManifests(dir string) (*Layout, error) {
	paths, err := filepath.Glob(filepath.Join(escapeGlob(dir), MetaDir, "manifest-*.json"))
	if err != nil {
		return nil, err
	}
	var found *Layout
	var names []string
	for _, p := range paths {
		name := strings.TrimSuffix(strings.TrimPrefix(filepath.Base(p), "manifest-"), ".json")
		l := Layout{Shards: 1}
		if name != "all" {
			var k, n int
			if _, err := fmt.Sscanf(name, "%d-of-%d", &k, &n); err != nil || n < 1 {
				continue
			}
			l.Shards = n
		}
		names = append(names, filepath.Base(p))
		if found != nil && *found != l {
			return nil, fmt.Errorf("%w: %s holds manifests of different layouts (%s), so some stations are stored twice; "+
				"rebuild it: ingest the inputs into a new store directory", ErrLayout, dir, strings.Join(names, ", "))
		}
		found = &l
	}
	return found, nil
}

// createLayout records l unless a record exists (which then stands).
func createLayout(dir string, l Layout) error {
	meta := filepath.Join(dir, MetaDir)
	b, _ := json.Marshal(l)
	tmp, err := createTemp(meta, ".layout-")
	if err != nil {
		return fmt.Errorf("store: %w", err)
	}
	defer os.Remove(tmp.Name())
	_, err = tmp.Write(append(b, '\n'))
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Link(tmp.Name(), layoutPath(dir))
		if errors.Is(err, os.ErrExist) {
			return nil
		}
	}
	if err != nil {
		return fmt.Errorf("store: record layout: %w", err)
	}
	syncDir(meta)
	return nil
}

func createTemp(dir, prefix string) (*os.File, error) { return schema.CreateTemp(dir, prefix) }

// escapeGlob escapes the characters filepath.Glob treats as pattern
// syntax, so that a store directory named with them is taken literally.
func escapeGlob(dir string) string {
	var b strings.Builder
	for _, c := range dir {
		if strings.ContainsRune(`*?[]\`, c) {
			b.WriteByte('\\')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// syncDir makes a rename or link in dir durable (best effort).
func syncDir(dir string) {
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}
