package engine

import (
	"fmt"
	"io"
	"sort"
	"text/tabwriter"
)

// WriteText writes the run's summary for people: one line per count
// (inputs, soundings, partitions, levels, skipped items and notes by
// reason), the store's directory store and a last line of the main counts;
// with quiet only that last line.
func (s *Summary) WriteText(w io.Writer, store string, quiet bool) error {
	skipped := len(s.Skipped)
	if !quiet {
		tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
		row := func(k string, v any) { fmt.Fprintf(tw, "%s\t%v\n", k, v) }
		row("input files", len(s.Inputs))
		row("  unchanged since the last run", s.InputsUnchanged)
		row("  read (files, members)", fmt.Sprintf("%d (%d)", s.InputsRead, s.Members))
		if s.StationLists > 0 {
			row("  station lists", s.StationLists)
		}
		row("soundings decoded", s.SoundingsRead)
		if s.OtherShards > 0 {
			row("  belonging to other shards", s.OtherShards)
		}
		row("  duplicates merged (station, launch)", s.DuplicatesMerged)
		row("soundings new/replaced/unchanged/removed",
			fmt.Sprintf("%d / %d / %d / %d", s.SoundingsNew, s.SoundingsReplaced, s.SoundingsUnchanged, s.SoundingsRemoved))
		for _, k := range sortedKeys(s.NotAnalysable) {
			row("  not analysable: "+k, s.NotAnalysable[k])
		}
		row("partitions written / unchanged", fmt.Sprintf("%d / %d", s.PartitionsWritten, s.PartitionsUnchanged))
		if s.PartitionsDropped > 0 {
			row("partitions dropped (--full)", s.PartitionsDropped)
		}
		row("levels written", s.Rows["levels"])
		row("input items skipped", skipped)
		by := s.SkippedByReason()
		for _, k := range sortedKeys(by) {
			row("  skipped: "+k, by[k])
		}
		if len(s.Notes) > 0 {
			row("notes on input (no data lost)", len(s.Notes))
			nb := map[string]int{}
			for _, n := range s.Notes {
				nb[n.Reason]++
			}
			for _, k := range sortedKeys(nb) {
				row("  note: "+k, nb[k])
			}
		}
		row("soundings in the store", s.Soundings)
		row("elapsed", fmt.Sprintf("%.1f s", s.Elapsed.Seconds()))
		tw.Flush()
		fmt.Fprintf(w, "store: %s\n", store)
	}
	_, err := fmt.Fprintf(w, "ingest: %d soundings new, %d replaced; %d in the store; %d input items skipped, %d notes\n",
		s.SoundingsNew, s.SoundingsReplaced, s.Soundings, skipped, len(s.Notes))
	return err
}

// sortedKeys returns the keys of m in order.
func sortedKeys(m map[string]int) []string {
	var k []string
	for n := range m {
		k = append(k, n)
	}
	sort.Strings(k)
	return k
}
