package engine

import (
	"context"
	"testing"

	"github.com/sondeclim/sondeclim/schema/store"
)

// runOutcome is what a test compares between two ways of ingesting the
// same inputs: the committed partitions' content hashes and inputs'
// digests by key, the skips, and the summary.
type runOutcome struct {
	hashes map[string]string
	inputs map[string]string
	skips  []Skip
	sum    *Summary
}

// ingestOutcome ingests paths into a new store with opt and returns the
// outcome; any error of the run fails the test.
func ingestOutcome(t *testing.T, paths []string, opt Options) runOutcome {
	t.Helper()
	storeDir := t.TempDir()
	sum, err := Run(context.Background(), storeDir, paths, opt)
	if err != nil {
		t.Fatal(err)
	}
	m, err := store.ReadManifest(storeDir, store.Shard{})
	if err != nil {
		t.Fatal(err)
	}
	o := runOutcome{hashes: map[string]string{}, inputs: map[string]string{}, skips: sum.Skipped, sum: sum}
	for k, p := range m.Partitions {
		o.hashes[k] = p.ContentHash
	}
	for k, p := range m.Inputs {
		o.inputs[k] = p.SHA256
	}
	return o
}
