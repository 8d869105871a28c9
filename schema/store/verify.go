package store

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"sort"
)

// FileSum is what a manifest records of one table file.
type FileSum struct {
	SizeBytes int64  `json:"size_bytes"`
	SHA256    string `json:"sha256"`
}

// SumFile returns the size and SHA-256 of the file at path.
func SumFile(path string) (FileSum, error) {
	f, err := os.Open(path)
	if err != nil {
		return FileSum{}, err
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return FileSum{}, err
	}
	return FileSum{SizeBytes: n, SHA256: hex.EncodeToString(h.Sum(nil))}, nil
}

// Damage is one table file of a partition that is not as committed.
type Damage struct {
	Partition string `json:"partition"` // "ID/YYYY"
	File      string `json:"file"`      // relative to the store
	Problem   string `json:"problem"`   // missing, size, checksum, unreadable
	Detail    string `json:"detail"`
}

// Damage checks the partition's files under dir: that each exists and has
// its recorded size and, with checksums, its recorded SHA-256. A partition
// without recorded sums can only be checked for missing files.
func (p *Partition) Damage(dir, key string, checksums bool) []Damage {
	var out []Damage
	for _, t := range slices.Sorted(maps.Keys(p.Files)) {
		f := p.Files[t]
		path := filepath.Join(dir, f)
		fi, err := os.Stat(path)
		if errors.Is(err, os.ErrNotExist) {
			out = append(out, Damage{key, f, "missing", "the file the manifest lists does not exist"})
			continue
		}
		if err != nil {
			out = append(out, Damage{key, f, "unreadable", err.Error()})
			continue
		}
		want, ok := p.Sums[t]
		if !ok {
			continue
		}
		if fi.Size() != want.SizeBytes {
			out = append(out, Damage{key, f, "size", fmt.Sprintf("%d bytes, committed with %d", fi.Size(), want.SizeBytes)})
			continue
		}
		if !checksums {
			continue
		}
		got, err := SumFile(path)
		switch {
		case err != nil:
			out = append(out, Damage{key, f, "unreadable", err.Error()})
		case got.SHA256 != want.SHA256:
			out = append(out, Damage{key, f, "checksum", "SHA-256 " + got.SHA256[:16] + "…, committed with " + want.SHA256[:16] + "…"})
		}
	}
	return out
}

// VerifyReport is what Verify found.
type VerifyReport struct {
	Files        int      `json:"files_checked"`
	Unverifiable int      `json:"files_without_checksum"` // written before sums were recorded: checked for presence only
	Damaged      []Damage `json:"damaged"`
}

// Verify checks every file every manifest of the store at dir lists
// (presence, size, SHA-256) and returns what it found, damaged files
// sorted by path. An unreadable or damaged manifest is an error.
func Verify(dir string) (*VerifyReport, error) {
	ms, err := ReadAll(dir)
	if err != nil {
		return nil, err
	}
	if len(ms) == 0 {
		if err := checkManifestLost(dir); err != nil {
			return nil, err
		}
		return nil, fmt.Errorf("store: %s has no manifest: not a store written by sondeclim ingest", dir)
	}
	rep := &VerifyReport{}
	for _, m := range ms {
		for _, k := range slices.Sorted(maps.Keys(m.Partitions)) {
			p := m.Partitions[k]
			rep.Files += len(p.Files)
			for t := range p.Files {
				if _, ok := p.Sums[t]; !ok {
					rep.Unverifiable++
				}
			}
			rep.Damaged = append(rep.Damaged, p.Damage(dir, k, true)...)
		}
	}
	sort.Slice(rep.Damaged, func(i, j int) bool { return rep.Damaged[i].File < rep.Damaged[j].File })
	return rep, nil
}
