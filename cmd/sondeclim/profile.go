package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
)

func init() {
	register("profile", "show one sounding: levels with derived values and QC flags, layers, mixing heights", func(e env) command { return &profileCmd{env: e} })
}

// profileCmd prints one sounding from a store or from sounding files.
type profileCmd struct {
	env
}

func (c *profileCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("profile", "(--store DIR --station ID --time TIME | --file PATH [--station ID] [--time TIME]) [--format text|json] [--figure FILE]", `
Show one sounding: its identity and status, the mixing height by every
method with its status, the ventilation index, the inversion layers with
their class, the well-mixed layers, and every level with the derived
potential temperature and mixing ratio and the flags of quality control.

The sounding is the one whose launch or nominal time is nearest to --time
(UTC) within --within. With --file the sounding files are read through the
same readers and analysis as "sondeclim ingest" (in memory, without a
store), so the values are identical to those a store would hold;
--station and --time may be left out when the file holds one station or
one sounding.

Level flags: "z derived" is a height filled by hypsometric integration;
"T removed_upstream" a value the archive's own QC removed; "T suspect",
"T bad", "T corrected" are this program's QC flags (p, z, T, Td, wind).`,
		`  sondeclim profile --store ./store --station USM00072403 --time 2016-07-01T12
  sondeclim profile --store ./store --station USM00072403 --time 2016-07-01T00 --format json > sounding.json
  sondeclim profile --file USM00072403-data.txt.zip --time 2016-07-01T12 --figure sounding.png`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	file := fs.String("file", "", "sounding `file` to read directly (any input format ingest reads)")
	station := fs.String("station", "", "station `id`")
	at := fs.String("time", "", "UTC `time` of the sounding: 2016-07-01T12, 2016-07-01T11:03 or RFC 3339")
	within := fs.Duration("within", 3*time.Hour, "largest distance between --time and the launch or nominal time, a `duration` such as 90m or 6h")
	format := fs.String("format", "text", "output `format`: text or json")
	figure := fs.String("figure", "", "also draw the sounding to `FILE` (.png or .svg)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("profile: unexpected argument %q (use --file PATH): %w", fs.Arg(0), errUsage)
	}
	if (*store == "") == (*file == "") {
		return fmt.Errorf("profile: give exactly one of --store and --file: %w", errUsage)
	}
	if *format != "text" && *format != "json" {
		return fmt.Errorf("profile: unknown --format %q (text or json): %w", *format, errUsage)
	}
	figFormat := ""
	if *figure != "" {
		figFormat = strings.TrimPrefix(strings.ToLower(filepath.Ext(*figure)), ".")
		if figFormat != "png" && figFormat != "svg" {
			return fmt.Errorf("profile: --figure %s: name must end in .png or .svg: %w", *figure, errUsage)
		}
	}
	var when time.Time
	if *at != "" {
		t, err := parseUTC(*at)
		if err != nil {
			return fmt.Errorf("profile: --time: %v: %w", err, errUsage)
		}
		when = t
	} else if *store != "" {
		return fmt.Errorf("profile: --time is required with --store: %w", errUsage)
	}
	if *store != "" && *station == "" {
		return fmt.Errorf("profile: --station is required with --store: %w", errUsage)
	}

	var p *figures.Profile
	skipped := false
	if *file != "" {
		rs, sum, err := engine.Analyse(ctx, []string{*file}, engine.Options{Workers: 1})
		if err != nil {
			return fmt.Errorf("profile: %w", err)
		}
		for _, s := range sum.Skipped {
			fmt.Fprintf(c.stderr, "%s: %s\n", s.Where, s.Detail)
		}
		skipped = len(sum.Skipped) > 0
		if sum.Soundings == 0 {
			return fmt.Errorf("profile: %s holds no sounding that could be read", *file)
		}
		if *station == "" || *at == "" {
			picked := when.IsZero()
			if *station, when, err = figures.OnlySounding(rs.Soundings, *file, *station, when); err != nil {
				return fmt.Errorf("profile: %v: %w", err, errUsage)
			}
			if picked {
				*within = 0 // the file's one sounding of the station, at its launch time
			}
		}
		if p, err = figures.ProfileFromRows(rs, *station, when, *within); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	} else {
		db, err := queries.Open(ctx, *store)
		if err != nil {
			return fmt.Errorf("profile: %w", err)
		}
		defer db.Close()
		if p, err = figures.LoadProfile(ctx, db, *station, when, *within); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	}
	if *format == "json" {
		if err := p.WriteJSON(c.stdout); err != nil {
			return err
		}
	} else {
		if err := p.WriteText(c.stdout); err != nil {
			return err
		}
		if _, err := fmt.Fprintln(c.stdout, caution); err != nil {
			return err
		}
	}
	if *figure != "" {
		if err := writeFigure(*figure, figures.ProfileFigure(p), figFormat); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	}
	if skipped {
		return errSkipped
	}
	return nil
}

// parseUTC reads a UTC time written as 2016-07-01T12, 2016-07-01T12:30,
// 2016-07-01T12:30:00, 2016-07-01 12:30, 2016-07-01, or RFC 3339.
func parseUTC(s string) (time.Time, error) {
	for _, layout := range []string{time.RFC3339, "2006-01-02T15:04:05", "2006-01-02T15:04", "2006-01-02T15", "2006-01-02 15:04", "2006-01-02"} {
		if t, err := time.ParseInLocation(layout, strings.TrimSuffix(s, "Z"), time.UTC); err == nil {
			return t.UTC(), nil
		}
		if t, err := time.Parse(layout, s); err == nil {
			return t.UTC(), nil
		}
	}
	return time.Time{}, fmt.Errorf("cannot read %q as a UTC time (e.g. 2016-07-01T12 or 2016-07-01T11:03)", s)
}

// writeFigure renders f to path in format ("png" or "svg").
func writeFigure(path string, f *figures.Figure, format string) error {
	out, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := f.Render(out, format); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}
