package engine

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/schema/store"
)

// TestYearContextSamePaths: a partition built with the head of the next
// year as context (context.go) gets the same identity whether its inputs
// are read in place or decoded into staging files, built at once or year
// by year, with one worker or two. The input is the invented demo archive
// (ingest/synth) for 2001–2002, split into one file per year; its station
// lies at 101.85° W, so the evening launch of 31 December 2001 local time
// is at 00 UTC on 1 January 2002. The pairing's values are checked against
// the Holzworth construction by hand in cmd/sondeclim (newyear_test.go);
// this test checks the plumbing.
func TestYearContextSamePaths(t *testing.T) {
	var all bytes.Buffer
	if _, err := synth.Write(&all, synth.Config{Seed: 1, StartYear: 2001, Years: 2}); err != nil {
		t.Fatal(err)
	}
	cut := bytes.Index(all.Bytes(), []byte(" 2002 01 01 00 "))
	cut = bytes.LastIndexByte(all.Bytes()[:cut], '\n') + 1
	if cut <= 0 {
		t.Fatal("no 2002 header in the demo archive")
	}
	in := t.TempDir()
	y1, y2 := filepath.Join(in, "a-2001.txt"), filepath.Join(in, "b-2002.txt")
	if err := os.WriteFile(y1, all.Bytes()[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(y2, all.Bytes()[cut:], 0o644); err != nil {
		t.Fatal(err)
	}
	id := synth.Station().ID
	parts := func(storeDir string) map[string]store.Partition {
		m, err := store.ReadManifest(storeDir, store.Shard{})
		if err != nil {
			t.Fatal(err)
		}
		out := map[string]store.Partition{}
		for k, p := range m.Partitions {
			q := *p
			q.Inputs, q.Files, q.Sums = nil, nil, nil // the files' names carry the hash; their sums the Parquet writer's metadata
			out[k] = q
		}
		return out
	}
	at := func(opt Options, runs ...[]string) map[string]store.Partition {
		storeDir := t.TempDir()
		for _, files := range runs {
			if _, err := Run(context.Background(), storeDir, files, opt); err != nil {
				t.Fatal(err)
			}
		}
		return parts(storeDir)
	}
	once := at(Options{Workers: 1}, []string{y1, y2})
	first := once[store.PartitionKey(id, 2001)]
	if first.ContextHash == "" || once[store.PartitionKey(id, 2002)].ContextHash != "" || len(once) != 2 {
		t.Fatalf("partitions %+v: want 2001 with the head of 2002 as context, 2002 without", once)
	}
	for name, got := range map[string]map[string]store.Partition{
		"decoded, at once, 2 workers":   at(Options{Workers: 2, decodeAll: true}, []string{y2, y1}),
		"in place, year by year":        at(Options{Workers: 2}, []string{y1}, []string{y1, y2}),
		"decoded, year by year":         at(Options{Workers: 1, decodeAll: true}, []string{y1}, []string{y2, y1}),
		"in place, later year first":    at(Options{Workers: 1}, []string{y2}, []string{y1, y2}),
		"decoded, later year first, 2w": at(Options{Workers: 2, decodeAll: true}, []string{y2}, []string{y2, y1}),
	} {
		if !reflect.DeepEqual(got, once) {
			t.Errorf("%s: partitions\n%+v\nwant\n%+v", name, got, once)
		}
	}
	alone := at(Options{Workers: 1}, []string{y1})[store.PartitionKey(id, 2001)]
	if alone.ContextHash != "" || alone.ContentHash == first.ContentHash {
		t.Errorf("2001 alone: context %q, content hash %s (with 2002: %s): want no context and another hash", alone.ContextHash, alone.ContentHash, first.ContentHash)
	}
}
