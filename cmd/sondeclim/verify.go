package main

import (
	"context"
	"encoding/json"
	"fmt"

	"github.com/sondeclim/sondeclim/schema/store"
)

func init() {
	register("verify", "check every file of a store against the size and checksum its manifest recorded", func(e env) command { return &verifyCmd{env: e} })
}

// verifyCmd checks a store's files.
type verifyCmd struct {
	env
}

func (c *verifyCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("verify", "--store DIR [--json]", `
Check every Parquet file the store's manifests list: that it exists, has
the size recorded when it was committed and the same SHA-256. Damaged
files are listed with their partition (station/year) and the problem;
"sondeclim ingest" with the same inputs rebuilds damaged partitions (it
always checks presence and size, and checksums with --verify). Files
written before checksums were recorded are checked for presence only and
counted.

Exit codes: 0 every file intact; 1 could not run (no store, damaged
manifest); 3 some file damaged.`,
		`  sondeclim verify --store ./store
  sondeclim verify --store /data/store --json > verify.json`, c.stderr)
	dir := fs.String("store", "", "store `directory` written by sondeclim ingest")
	asJSON := fs.Bool("json", false, "print the report as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *dir == "" {
		return fmt.Errorf("verify: --store is required: %w", errUsage)
	}
	rep, err := store.Verify(*dir)
	if err != nil {
		return fmt.Errorf("verify: %w", err)
	}
	if *asJSON {
		b, _ := json.MarshalIndent(rep, "", "  ")
		fmt.Fprintln(c.stdout, string(b))
	} else {
		for _, d := range rep.Damaged {
			fmt.Fprintf(c.stdout, "damaged: %s (partition %s): %s: %s\n", d.File, d.Partition, d.Problem, d.Detail)
		}
		fmt.Fprintf(c.stdout, "%d files checked, %d damaged, %d without a recorded checksum (presence checked only)\n",
			rep.Files, len(rep.Damaged), rep.Unverifiable)
	}
	if len(rep.Damaged) > 0 {
		return fmt.Errorf("verify: %d damaged file(s): %w", len(rep.Damaged), errSkipped)
	}
	return nil
}
