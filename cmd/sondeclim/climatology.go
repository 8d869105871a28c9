package main

import (
	"context"
	"fmt"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("climatology", "print the seasonal mixing-height and surface-inversion climatology of a store", func(e env) command { return &climatologyCmd{env: e} })
}

// climatologyCmd prints the seasonal climatology of a store.
type climatologyCmd struct {
	env
}

func (c *climatologyCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("climatology", "--store DIR [--format text|csv|json]", `
Print, per station, season (DJF, MAM, JJA, SON) and nominal hour (UTC): the
soundings attempted and valid, the 10th/25th/50th/75th/90th percentiles of
the parcel mixing height in m above ground (linear interpolation between
order statistics, Hyndman-Fan type 7; "surface" counts as 0 m, "undefined"
is counted apart and left out of the percentiles), and the share of valid
soundings with a surface-based inversion with its median strength and top.`,
		`  sondeclim climatology --store ./store
  sondeclim climatology --store ./store --format csv > climatology.csv`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	format := fs.String("format", "text", "output `format`: text, csv or json")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("climatology: --store is required: %w", errUsage)
	}
	write, err := tableWriter(*format)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	defer db.Close()
	t, err := queries.Climatology(ctx, db)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	if err := write(c.stdout, t); err != nil {
		return err
	}
	if *format == "text" {
		fmt.Fprintf(c.stdout, "\nPercentiles: Hyndman-Fan type 7. Heights in m above ground.\n%s\n", caution)
	}
	return nil
}
