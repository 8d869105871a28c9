package engine

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"maps"
	"slices"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
	"github.com/sondeclim/sondeclim/sounding"
)

// The afternoon pairing across the new year.
//
// A station-year partition holds the soundings whose nominal time falls in
// that UTC year, and the afternoon_mixing row of a local day is written by
// the partition of its morning sounding (the row describes that sounding:
// its year column and its partition are the sounding's). The afternoon
// sounding of the same local day is always later than the morning one, so
// it lies in the same UTC year or in the head of the next (a station west
// of Greenwich: the 31 December evening launch at 00 UTC on 1 January; one
// east of it: the 1 January morning launch on 31 December UTC, its
// afternoon on 1 January). A partition is therefore built with the head of
// the following station-year (sounding.InYearHead: its first 36 hours) as
// context: those soundings are checked, deduplicated and analysed like the
// partition's own, may serve as the afternoon sounding of a morning of the
// partition, and are written nowhere by it. The identity of that context
// (Partition.ContextHash) enters the partition's content hash, so the
// partition is rebuilt when the head of the next year changes, and only
// then.

// neighbourKey returns the key of the same station's partition d years
// from key k.
func neighbourKey(k string, d int) (string, bool) {
	station, year, err := store.SplitPartitionKey(k)
	if err != nil {
		return "", false
	}
	return store.PartitionKey(station, year+d), true
}

// writeIdentity adds one staged copy to a partition identity h: the hash
// of its observation, then its source position. It returns the
// observation hash (the sounding_hash of the copy if it is kept) and the
// scratch buffer.
func writeIdentity(h hash.Hash, s *sounding.Sounding, enc []byte) (string, []byte) {
	enc = sounding.AppendBinary(enc[:0], s, false)
	sum := sha256.Sum256(enc)
	h.Write(sum[:])
	h.Write(sounding.AppendSourceBinary(enc[:0], s))
	return hex.EncodeToString(sum[:8]), enc
}

// readHead decodes the staged copies in the head of station-year k (the
// segments staged as head, sounding.InYearHead), in sortCopies order, and
// returns them with the hash that identifies them ("" when there are
// none). It reports nothing: the soundings and the rejected lines are
// counted and reported by the build of k itself.
func (r *run) readHead(st *staged, k string, levels *sounding.LevelArena) ([]*sounding.Sounding, string, error) {
	var out []*sounding.Sounding
	var buf, data []byte
	var err error
	for _, sg := range st.byPart[k] {
		if !sg.head || st.dropped[sg.file] {
			continue
		}
		if data, buf, err = readSegment(st, sg, buf); err != nil {
			return nil, "", err
		}
		if st.inPlace[sg.file] {
			rd := archivev2.NewReaderBytesAt(data, st.inputs[sg.file], sg.member, sg.line)
			rd.UseLevelArena(levels)
			for {
				s, err := rd.Next()
				if err == io.EOF {
					break
				}
				var pe *ingest.ParseError
				if errors.As(err, &pe) {
					continue
				}
				if err != nil {
					return nil, "", fmt.Errorf("%s: %w", ingest.Where(st.inputs[sg.file], sg.member), err)
				}
				if info, ok := r.opt.Stations[s.StationID]; ok {
					info.Fill(s)
				}
				out = append(out, s)
			}
			continue
		}
		rest := data
		for range sg.count {
			s, tail, err := sounding.DecodeBinary(rest)
			if err != nil {
				return nil, "", err
			}
			out = append(out, s)
			rest = tail
		}
	}
	return out, headHash(out), nil
}

// headHash sorts the copies of a year's head and returns their identity,
// "" for none.
func headHash(all []*sounding.Sounding) string {
	if len(all) == 0 {
		return ""
	}
	sortCopies(all)
	h := sha256.New()
	var enc []byte
	for _, s := range all {
		_, enc = writeIdentity(h, s, enc)
	}
	return hex.EncodeToString(h.Sum(nil))
}

// analyseContext checks, deduplicates and analyses the ascents among the
// context copies ctx (the head of the next station-year) as that
// station-year's own build does, for the afternoon pairing only: no rows
// are kept. az is the station-year's Analyzer.
func (r *run) analyseContext(ctx []*sounding.Sounding, az *analyze.Analyzer) []result {
	ascents, _ := splitDescents(ctx)
	if len(ascents) == 0 {
		return nil
	}
	reports := make(map[*sounding.Sounding]qc.Report, len(ascents))
	for _, s := range ascents {
		reports[s] = qc.Check(s, r.qcCfg)
	}
	kept, _ := deduplicate(ascents, reports)
	scratch := schema.PartRows{Levels: discardLevels{}}
	out := make([]result, len(kept))
	var res analyze.Result
	for i, d := range kept {
		out[i] = analyzeOne(d.s, reports[d.s], az, r.opt.UseSuspect, &scratch, &res)
		scratch = schema.PartRows{Levels: discardLevels{}}
	}
	return out
}

// discardLevels drops the level rows of context soundings.
type discardLevels struct{}

func (discardLevels) Append(schema.LevelRow) {}

// addNeighbours completes the set of partitions to build (affected) with
// what the pairing across the new year needs, once the partitions' own
// inputs are staged:
//   - a committed partition left alone so far whose next year is rebuilt
//     with another head than the one it was built with is rebuilt too;
//   - the inputs of the next year of every partition to build, when that
//     year is not rebuilt itself, are staged for that year (its head is
//     read as context), and the inputs of the partitions added by the
//     first rule are staged for them.
//
// covered says which station-years each input was staged for already (a
// nil set: all of them). A partition whose context or own inputs cannot
// be read (gone, or left unread by the run's budget) is held as
// committed, as partitions whose own inputs are gone are.
func (r *run) addNeighbours(st *staged, affected map[string]bool, next *store.Manifest, missing map[string]bool,
	covered map[string]map[string]bool, results []readResult) error {
	stale := map[string]bool{}
	for _, k := range slices.Sorted(maps.Keys(affected)) {
		pk, ok := neighbourKey(k, -1)
		if !ok || affected[pk] {
			continue
		}
		p := next.Partitions[pk]
		if p == nil {
			continue
		}
		_, h, err := r.readHead(st, k, nil)
		if err != nil {
			return err
		}
		if h != p.ContextHash {
			stale[pk] = true
		}
	}

	// What each partition to build needs staged, as input → station-years.
	needs := map[string]map[string]bool{}
	neededBy := map[string][]string{} // input → partitions to build that need it
	build := maps.Clone(affected)
	maps.Copy(build, stale)
	for _, k := range slices.Sorted(maps.Keys(build)) {
		want := map[string][]string{} // station-year → its inputs needed for k
		if stale[k] {
			want[k] = next.Partitions[k].Inputs
		}
		if nk, ok := neighbourKey(k, 1); ok && !affected[nk] {
			if p := next.Partitions[nk]; p != nil {
				want[nk] = p.Inputs
			}
		}
		var gone []string
		for _, ins := range want {
			for _, in := range ins {
				if missing[in] && !r.opt.PruneMissing {
					gone = append(gone, in)
				}
			}
		}
		if len(gone) > 0 {
			slices.Sort(gone)
			delete(affected, k)
			delete(stale, k)
			r.hold(k, slices.Compact(gone), results, next)
			continue
		}
		for key, ins := range want {
			for _, in := range ins {
				if c, ok := covered[in]; ok && (c == nil || c[key]) || missing[in] {
					continue
				}
				if needs[in] == nil {
					needs[in] = map[string]bool{}
				}
				needs[in][key] = true
				neededBy[in] = append(neededBy[in], k)
			}
		}
	}
	if len(needs) > 0 {
		files := slices.Sorted(maps.Keys(needs))
		r.log.Info("re-reading unchanged inputs for the pairing across the new year", "files", len(files))
		res, err := r.stageInputs(files, st, func(path string) map[string]bool { return needs[path] })
		if err != nil {
			return err
		}
		for _, rr := range res {
			if !rr.deferred {
				if c, ok := covered[rr.path]; !ok {
					covered[rr.path] = maps.Clone(needs[rr.path])
				} else if c != nil {
					maps.Copy(c, needs[rr.path])
				}
				continue
			}
			for _, k := range neededBy[rr.path] {
				if affected[k] || stale[k] {
					delete(affected, k)
					delete(stale, k)
					r.hold(k, []string{rr.path + " (not read: run budget used up)"}, results, next)
				}
			}
		}
	}
	maps.Copy(affected, stale)
	return nil
}
