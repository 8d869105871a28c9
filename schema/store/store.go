// Package store keeps a sondeclim store consistent: the manifest that says
// which Parquet files make up the tables, the lock that allows one writer at
// a time, and the rules for sharded writing.
//
// Layout of a store directory:
//
//	TABLE/station=ID/year=YYYY/part-HASH.parquet   table data (Hive partitions; ID escaped, see EscapeStation)
//	_sondeclim/manifest-SHARD.json                  committed state of one shard
//	_sondeclim/lock-SHARD                           writer lock of one shard
//
// A writer writes new partition files under names no live file has (the
// name carries a hash of the partition's content and of the analysis
// parameters), then commits by atomically replacing its manifest. Readers
// read only the files listed in the manifests, so a writer killed at any
// moment leaves the store as it was at the last commit; files it left behind
// are removed by the next run. Files dropped by a commit are deleted only by
// the commit after it, so a reader that listed the previous manifest can
// still finish.
package store

import (
	"encoding/json"
	"errors"
	"fmt"
	"hash/fnv"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

// Version is the store layout and table schema version (the same number
// as schema.Version, recorded in every Parquet file). A store written with
// another version is refused with a message saying how to rebuild it.
const Version = schema.Version

// MetaDir is the store's metadata directory (not a table: table names are
// lower-case identifiers and never start with "_").
const MetaDir = "_sondeclim"

// ErrVersion is returned for a store written by an incompatible version.
var ErrVersion = errors.New("store written by an incompatible version of sondeclim")

// Shard selects the stations one writer owns: station s belongs to shard K
// of N when fnv32a(s) mod N = K−1. The zero Shard (N = 0) owns everything.
type Shard struct{ K, N int }

// ParseShard parses "K/N" (1 ≤ K ≤ N); "" is the zero Shard.
func ParseShard(s string) (Shard, error) {
	if s == "" {
		return Shard{}, nil
	}
	k, n, ok := strings.Cut(s, "/")
	K, err1 := strconv.Atoi(k)
	N, err2 := strconv.Atoi(n)
	if !ok || err1 != nil || err2 != nil || N < 1 || K < 1 || K > N {
		return Shard{}, fmt.Errorf("shard %q: want K/N with 1 ≤ K ≤ N, e.g. 2/8", s)
	}
	return Shard{K, N}, nil
}

// Owns reports whether the shard owns station.
func (s Shard) Owns(station string) bool {
	if s.N <= 1 {
		return true
	}
	h := fnv.New32a()
	h.Write([]byte(station))
	return int(h.Sum32()%uint32(s.N)) == s.K-1
}

// Name is the shard's file-name suffix: "all" or "K-of-N".
func (s Shard) Name() string {
	if s.N <= 1 {
		return "all"
	}
	return fmt.Sprintf("%d-of-%d", s.K, s.N)
}

// String returns "K/N", or "" for the zero Shard.
func (s Shard) String() string {
	if s.N <= 1 {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.K, s.N)
}

// Input is what the manifest remembers of one input file.
type Input struct {
	SizeBytes int64     `json:"size_bytes"`
	ModTime   time.Time `json:"mod_time"`
	SHA256    string    `json:"sha256"`
	// Partitions lists the station-year partitions ("ID/YYYY") the input
	// contributed soundings to, sorted.
	Partitions []string `json:"partitions"`
	Soundings  int      `json:"soundings"`
	// Pending lists partitions ("ID/YYYY") the input has soundings for
	// that a run could not rebuild (another input they need was gone):
	// the next run reads the input again for them.
	Pending []string `json:"pending,omitempty"`
}

// Partition is one station-year of the store.
type Partition struct {
	// ContentHash identifies the deduplicated input soundings together
	// with the analysis parameters; equal hashes mean equal files.
	ContentHash string `json:"content_hash"`
	// Files maps a table name to its file, relative to the store.
	Files     map[string]string `json:"files"`
	Soundings int               `json:"soundings"`
	// Inputs lists the input files whose soundings are in the partition.
	Inputs []string `json:"inputs"`
	// ContextHash identifies the soundings of the head of the following
	// station-year (its first 36 hours, sounding.InYearHead) that the
	// partition was built with, as context of the afternoon pairing of
	// its last local day; "" when there were none. The following year's
	// head changing makes this partition stale. It is part of
	// ContentHash.
	ContextHash string `json:"context_hash,omitempty"`
	// Sums maps a table name to the size and SHA-256 of its file, so
	// that a truncated, altered or missing file is detected (Damage).
	// Partitions written before sums were recorded have none.
	Sums map[string]FileSum `json:"sums,omitempty"`
}

// Manifest is the committed state of one shard of a store.
type Manifest struct {
	Version int `json:"version"`
	// Shard is "K/N" or "" for an unsharded store.
	Shard string `json:"shard"`
	// Params is a digest of the analysis parameters the partitions were
	// derived with; ParamsText is their readable form.
	Params     string                `json:"params"`
	ParamsText string                `json:"params_text"`
	Committed  time.Time             `json:"committed"`
	Inputs     map[string]*Input     `json:"inputs"`
	Partitions map[string]*Partition `json:"partitions"`
}

// NewManifest returns an empty manifest for a shard.
func NewManifest(sh Shard, params, paramsText string) *Manifest {
	return &Manifest{Version: Version, Shard: sh.String(), Params: params, ParamsText: paramsText,
		Inputs: map[string]*Input{}, Partitions: map[string]*Partition{}}
}

// PartitionKey returns the manifest key of a station-year, "ID/YYYY".
func PartitionKey(station string, year int) string { return station + "/" + strconv.Itoa(year) }

// SplitPartitionKey is the inverse of PartitionKey.
func SplitPartitionKey(k string) (station string, year int, err error) {
	i := strings.LastIndexByte(k, '/')
	if i < 0 {
		return "", 0, fmt.Errorf("partition key %q", k)
	}
	year, err = strconv.Atoi(k[i+1:])
	return k[:i], year, err
}

// PartitionDir returns the directory of a station-year of a table,
// relative to the store; the station is escaped (EscapeStation), so any
// identifier CheckStationID accepts gives a directory inside the table's.
func PartitionDir(table, station string, year int) string {
	return filepath.Join(table, "station="+EscapeStation(station), "year="+strconv.Itoa(year))
}

func manifestPath(dir string, sh Shard) string {
	return filepath.Join(dir, MetaDir, "manifest-"+sh.Name()+".json")
}

// ReadManifest reads a shard's manifest; a store without one gives
// (nil, nil). A manifest of another version is ErrVersion.
func ReadManifest(dir string, sh Shard) (*Manifest, error) {
	return readManifestFile(manifestPath(dir, sh))
}

func readManifestFile(path string) (*Manifest, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("store: %w", err)
	}
	var m Manifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("store: manifest %s: %w", path, err)
	}
	if m.Version != Version {
		return nil, fmt.Errorf("%w: %s has version %d, this sondeclim writes and reads version %d; "+
			"ingest your inputs into a new store directory (`sondeclim ingest --store NEWDIR PATH...`) or delete this one",
			ErrVersion, path, m.Version, Version)
	}
	if m.Inputs == nil {
		m.Inputs = map[string]*Input{}
	}
	if m.Partitions == nil {
		m.Partitions = map[string]*Partition{}
	}
	return &m, nil
}

// Commit writes the manifest atomically (temporary file, sync, rename,
// directory sync). It sets Committed.
func Commit(dir string, sh Shard, m *Manifest) error {
	m.Committed = time.Now().UTC().Truncate(time.Second)
	meta := filepath.Join(dir, MetaDir)
	if err := os.MkdirAll(meta, 0o755); err != nil {
		return fmt.Errorf("store: %w", err)
	}
	b, err := json.MarshalIndent(m, "", " ")
	if err != nil {
		return fmt.Errorf("store: encode manifest: %w", err)
	}
	f, err := createTemp(meta, ".manifest-")
	if err != nil {
		return fmt.Errorf("store: %w", err)
	}
	_, err = f.Write(append(b, '\n'))
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(f.Name(), manifestPath(dir, sh))
	}
	if err != nil {
		if rerr := os.Remove(f.Name()); rerr != nil && !errors.Is(rerr, fs.ErrNotExist) {
			err = errors.Join(err, rerr)
		}
		return fmt.Errorf("store: commit manifest: %w", err)
	}
	// The rename is durable only once the directory is synced: a commit
	// whose directory sync fails is reported, not assumed.
	d, err := os.Open(meta)
	if err != nil {
		return fmt.Errorf("store: commit manifest: %w", err)
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("store: commit manifest: sync directory %s: %w", meta, err)
	}
	return nil
}

// Files returns the sorted files (relative to the store) the manifest
// references, per table.
func (m *Manifest) Files() map[string][]string {
	out := map[string][]string{}
	for _, p := range m.Partitions {
		for t, f := range p.Files {
			out[t] = append(out[t], f)
		}
	}
	for t := range out {
		sort.Strings(out[t])
	}
	return out
}

// Live returns the set of files the manifest references.
func (m *Manifest) Live() map[string]bool {
	live := map[string]bool{}
	for _, p := range m.Partitions {
		for _, f := range p.Files {
			live[f] = true
		}
	}
	return live
}

// ReadAll reads the manifests of every shard in the store, sorted by
// shard name. A store without manifests gives none and no error.
func ReadAll(dir string) ([]*Manifest, error) {
	paths, err := filepath.Glob(filepath.Join(escapeGlob(dir), MetaDir, "manifest-*.json"))
	if err != nil {
		return nil, err
	}
	sort.Strings(paths)
	var out []*Manifest
	for _, p := range paths {
		m, err := readManifestFile(p)
		if err != nil {
			return nil, err
		}
		if m != nil {
			out = append(out, m)
		}
	}
	return out, nil
}

// TableFiles returns, per table, the absolute paths of the files all the
// store's manifests reference. ok is false when the store has no manifest
// (a store laid out by hand or by another tool), in which case readers fall
// back to every Parquet file in the table directories.
func TableFiles(dir string) (files map[string][]string, ok bool, err error) {
	ms, err := ReadAll(dir)
	if err == nil && len(ms) == 0 {
		err = checkManifestLost(dir)
	}
	if err != nil || len(ms) == 0 {
		return nil, false, err
	}
	files = map[string][]string{}
	for _, m := range ms {
		for t, fs := range m.Files() {
			for _, f := range fs {
				files[t] = append(files[t], filepath.Join(dir, f))
			}
		}
	}
	for t := range files {
		sort.Strings(files[t])
	}
	return files, true, nil
}

// CheckUnmanaged refuses a store directory that holds table files but no
// manifest: it was written by an older sondeclim (or by hand), and a
// writer would otherwise treat its files as strays. It reads the schema
// version of one file to say which.
func CheckUnmanaged(dir string) error {
	if ms, err := ReadAll(dir); err != nil || len(ms) > 0 {
		return err // another shard's manifest manages the files
	}
	var found string
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if !e.IsDir() || strings.HasPrefix(e.Name(), "_") || strings.HasPrefix(e.Name(), ".") {
			continue
		}
		filepath.WalkDir(filepath.Join(dir, e.Name()), func(p string, d os.DirEntry, err error) error {
			if err == nil && found == "" && !d.IsDir() && strings.HasSuffix(p, ".parquet") {
				found = p
			}
			return nil
		})
	}
	if found == "" {
		return nil
	}
	if err := checkManifestLost(dir); err != nil {
		return err
	}
	v, err := schema.ReadVersion(found)
	what := fmt.Sprintf("schema version %d", v)
	if err != nil {
		what = "no sondeclim schema version"
	}
	return fmt.Errorf("%w: %s holds table files (%s has %s) but no manifest; this sondeclim writes version %d. "+
		"Ingest into a new directory (or delete this one) and run `sondeclim ingest --store NEWDIR PATH...`",
		ErrVersion, dir, found, what, Version)
}

// ErrManifestLost is returned for a store whose layout record says a
// sondeclim of this kind wrote it but whose manifests are gone.
var ErrManifestLost = errors.New("store manifest missing")

// checkManifestLost refuses a store that was written with a layout record
// (so by a sondeclim that keeps manifests) but has no manifest any more:
// the manifest says which files are in force, and without it stale and
// partly written files cannot be told from live ones.
func checkManifestLost(dir string) error {
	l, err := readLayout(dir)
	if err != nil || l == nil {
		return err
	}
	return fmt.Errorf("%w: %s has a layout record (%s) but no manifest (%s): it was deleted or never committed. "+
		"The manifest lists the files in force, so the store cannot be read or extended safely without it: restore it "+
		"from a backup, or rebuild the store with `sondeclim ingest --store NEWDIR PATH...` (or delete %s and ingest again)",
		ErrManifestLost, dir, layoutPath(dir), filepath.Join(dir, MetaDir, "manifest-*.json"), dir)
}
