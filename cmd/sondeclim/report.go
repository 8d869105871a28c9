package main

import (
	"bytes"
	"context"
	"fmt"
	"os"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/report"
)

func init() {
	register("report", "write a self-contained HTML report of a store or station", func(e env) command { return &reportCmd{env: e} })
}

// reportCmd writes the HTML report of a store.
type reportCmd struct {
	env
}

func (c *reportCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("report", "--store DIR --out FILE.html [--station ID] [--method NAME]", `
Write one HTML file that opens offline in any browser (no scripts, fonts or
images from elsewhere): the data coverage per station and year (soundings
attempted, valid, excluded by quality control), the seasonal climatology,
the figures of "sondeclim figures" embedded as images, notes on each
method with references, and the caution about use. --station limits the
report to one station; --method picks the mixing height of the monthly
figure (consensus by default).`,
		`  sondeclim report --store ./store --out report.html
  sondeclim report --store ./store --out sterling.html --station USM00072403`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	out := fs.String("out", "", "HTML `file` to write")
	station := fs.String("station", "", "report only this station `id`")
	method := fs.String("method", "", "mixing-height `method` of the monthly figure (default consensus)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" || *out == "" {
		return fmt.Errorf("report: --store and --out are required: %w", errUsage)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("report: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	defer db.Close()
	r, err := report.Build(ctx, db, report.Options{Station: *station, Method: *method})
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	var buf bytes.Buffer
	if err := r.WriteHTML(&buf); err != nil {
		return err
	}
	if err := os.WriteFile(*out, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	fmt.Fprintf(c.stdout, "%s (%d figures)\n", *out, 3*len(r.Sections))
	return nil
}
