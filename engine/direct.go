package engine

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"io"
	"sort"

	"github.com/sondeclim/sondeclim/ingest/input"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
	"github.com/sondeclim/sondeclim/sounding"
)

// Analyse reads paths (files, directories and globs, plain, gzip or zip,
// station lists among them, as Run does), checks, deduplicates and
// analyses the soundings with opt's configuration, and returns their rows
// in memory (schema.RowSet), per station-year in station and year order, as Run would
// write them. It touches no store: opt's store fields (Shard, Full, Wait)
// are ignored. Unreadable input is reported in the summary's Skipped, as
// with Run; the error is for a run that could not be carried out.
func Analyse(ctx context.Context, paths []string, opt Options) (*schema.RowSet, *Summary, error) {
	files, err := input.Expand(paths)
	if err != nil {
		return nil, nil, err
	}
	r := newRun(ctx, "", files, opt)
	files = r.takeStationLists(files)

	parts := map[string][]*sounding.Sounding{}
	for _, path := range files {
		err := input.Each(path, opt.SizeLimit, func(member string, rd io.Reader) error {
			r.sum.Members++
			return r.readMember(ctx, path, member, rd, func(s *sounding.Sounding) error {
				if err := store.CheckStationID(s.StationID); err != nil {
					r.badStation(s, err)
					return nil
				}
				key := store.PartitionKey(s.StationID, s.NominalTime.Year())
				parts[key] = append(parts[key], s)
				return nil
			})
		})
		if err != nil {
			if ctx.Err() != nil {
				return nil, nil, ctx.Err()
			}
			// Nothing is written here, so every failure is the input's.
			r.skip(Skip{Where: path, Reason: reasonOf(err), Detail: err.Error()})
		}
	}
	keys := make([]string, 0, len(parts))
	for k := range parts {
		keys = append(keys, k)
	}
	sort.Strings(keys) // station, then year: the keys are "station/year" with four-digit years
	out := &schema.RowSet{}
	var enc []byte
	for _, k := range keys {
		all := parts[k]
		sortCopies(all)
		observed := make(map[*sounding.Sounding]string, len(all))
		for _, s := range all {
			enc = sounding.AppendBinary(enc[:0], s, false)
			sum := sha256.Sum256(enc)
			observed[s] = hex.EncodeToString(sum[:8])
		}
		var levels schema.RowSlice[schema.LevelRow]
		stats := &buildStats{}
		var context []*sounding.Sounding // the head of the next year, as Run reads it (context.go)
		if nk, ok := neighbourKey(k, 1); ok {
			for _, s := range parts[nk] {
				if sounding.InYearHead(s.NominalTime) {
					context = append(context, s)
				}
			}
		}
		rows := r.analysePart(all, context, observed, &levels, stats)
		out.Add(&rows)
		r.sum.Soundings += len(rows.Soundings)
		r.sum.DuplicatesMerged += stats.duplicates
	}
	sortSkips(r.sum.Skipped)
	sortSkips(r.sum.Notes)
	r.warnMetadata()
	return out, r.sum, nil
}
