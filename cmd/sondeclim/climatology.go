package main

import (
	"context"
	"database/sql"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/queries"
)

func init() {
	register("climatology", "mixing height, inversions, mixed layers and ventilation per station, season or month, and hour",
		func(e env) command { return &climatologyCmd{env: e} })
}

// climatologyCmd prints the boundary-layer climatology of a store.
type climatologyCmd struct {
	env
}

func (c *climatologyCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("climatology", "--store DIR [--by season|month] [--time hour|sun] [--station ID]... [--years Y1-Y2] [--table VIEW] [--format F] [--out DIR]", `
Boundary-layer climatology of a store, one row per cell: station × period
(--by season: DJF, MAM, JJA, SON, named winter/spring/summer/autumn, the
names flipped south of the equator; --by month: 1-12) × time of day (--time
hour: nominal hour UTC; --time sun: day, low_sun, civil_twilight or night
at launch).

Views (--table):
  summary      soundings attempted and valid, consensus mixing height
               p10/p25/p50/p75/p90, surface-based inversion (SBI) frequency
               and median strength, median ventilation index (text default)
  mixing       one row per method (consensus, then every method of the
               mixing_heights table, see sondeclim schema):
               ok/surface/undefined counts and percentiles
  inversions   SBI frequency, median strength and depth where one occurs;
               elevated-inversion frequency, overall and by class
  mixed        well-mixed layer frequency, depth, mean θ and mixing ratio
  ventilation  transport wind, ventilation index, category frequencies
  all          text/markdown: the four views above in turn; csv/json: every
               column in one wide row per cell (csv/json default)
  episodes     per station × episode rule × period (no time of day):
               days with a sounding and days the rule could be judged on,
               episodes and episodes per year, days inside episodes and
               their share of the days, length median/p90/longest in days,
               missing days inside, open-ended episodes (sondeclim schema:
               the episodes, days and rule_months tables); where no day
               could be judged the counts are empty, not 0

Heights are m above ground. Percentiles are Hyndman-Fan type 7 (linear
interpolation between order statistics); a "surface" mixing height counts
as 0 m, "undefined" ones are counted apart and left out. Frequencies are
fractions of the valid soundings. Thin cells stay in the table with a note:
fewer valid soundings than --min-soundings, fewer than --min-tail values
behind p10/p90, or (by season) a month with fewer than 10 valid soundings.
--out DIR writes every view to DIR/climatology-VIEW.EXT instead.

`+ruleHelp,
		`  sondeclim climatology --store ./store
  sondeclim climatology --store ./store --by month --time sun --station USM00072403
  sondeclim climatology --store ./store --years 1991-2020 --table inversions
  sondeclim climatology --store ./store --format csv > climatology.csv
  sondeclim climatology --store ./store --format markdown --out ./tables
  sondeclim climatology --store ./store --table episodes --by month \
    --rule 'calm_shallow: afternoon_mixing_height_m <= 800 and afternoon_transport_wind_ms <= 3; min_days=3'`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	by := fs.String("by", "season", "`period` of a cell: season or month")
	tod := fs.String("time", "hour", "`kind` of time of day of a cell: hour (nominal hour, UTC) or sun (sun class at launch: day, low_sun, civil_twilight, night)")
	var stations stationList
	fs.Var(&stations, "station", "station `ID` to include (repeat or comma-separate; default all)")
	years := fs.String("years", "", "`range` of years to include, e.g. 1991-2020 or 2016 (by season: the season's year, December counting with the following DJF)")
	minN := fs.Int("min-soundings", 0, "valid soundings below which a cell is noted (`N`; default 45 by season, 15 by month)")
	minTail := fs.Int("min-tail", queries.MinTailSoundings, "values below which p10/p90 are noted (`N`)")
	view := fs.String("table", "", "`view`: summary, mixing, inversions, mixed, ventilation, all or episodes (default summary for text and markdown, all for csv and json)")
	format := fs.String("format", "text", "output `format`: text, csv, json or markdown")
	out := fs.String("out", "", "write every view to files in `directory` instead of stdout")
	rules := ruleFlag(fs)
	allHours := fs.Bool("all-hours", false, "give every nominal hour its own row (default: a station's special hours, with under 10 % of its soundings, join the nearest regular hour within 3 h or an \"other\" row)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *store == "" {
		return fmt.Errorf("climatology: --store is required: %w", errUsage)
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("climatology: unexpected argument %q: %w", fs.Arg(0), errUsage)
	}
	first, last, err := parseYears(*years)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	if *minN < 0 || *minTail < 0 {
		return fmt.Errorf("climatology: --min-soundings and --min-tail must not be negative: %w", errUsage)
	}
	write, ext, err := reportWriter(*format)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	if *view == "" {
		*view = "summary"
		if *format == "csv" || *format == "json" {
			*view = "all"
		}
	}
	if !contains(queries.ClimatologyViews, *view) && *view != "episodes" {
		return fmt.Errorf("climatology: unknown --table %q (%s): %w", *view, strings.Join(queries.ClimatologyViews, ", "), errUsage)
	}
	opts := queries.ClimatologyOptions{By: *by, Time: *tod, Stations: stations, FirstYear: first, LastYear: last,
		MinSoundings: *minN, MinTail: *minTail, AllHours: *allHours}
	if (opts.By != queries.BySeason && opts.By != queries.ByMonth) || (opts.Time != queries.ByHour && opts.Time != queries.BySun) {
		return fmt.Errorf("climatology: --by is season or month, --time hour or sun: %w", errUsage)
	}
	db, err := queries.Open(ctx, *store)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	defer db.Close()
	if *view == "episodes" {
		return c.episodes(ctx, db, opts, *rules, stations, *years, *format, write)
	}
	if len(*rules) > 0 {
		return fmt.Errorf("climatology: --rule applies to --table episodes: %w", errUsage)
	}
	people := *format == "text" || *format == "markdown"
	views := []string{*view}
	if *view == "all" && people {
		views = []string{"summary", "mixing", "inversions", "mixed", "ventilation"}
	}
	if *out != "" {
		views = queries.ClimatologyViews
	}
	// Only the tables of the views printed are computed; the summary's is
	// always, since it tells whether the filters matched anything.
	ct, err := queries.ClimatologyFor(ctx, db, opts, append([]string{"summary"}, views...)...)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	if sum, err := ct.Table("summary"); err == nil && len(sum.Rows) == 0 {
		return noMatch(ctx, db, "climatology", stations, *years)
	}
	if *out != "" {
		return writeViews(c.stdout, *out, "climatology", ext, queries.ClimatologyViews, ct.Table, write)
	}
	for i, v := range views {
		t, err := ct.Table(v)
		if err != nil {
			return fmt.Errorf("climatology: %w", err)
		}
		if people {
			if i > 0 {
				fmt.Fprintln(c.stdout)
			}
			fmt.Fprintf(c.stdout, "%s\n\n", climatologyTitle(v, ct.Options))
		}
		if err := write(c.stdout, t); err != nil {
			return err
		}
	}
	if people {
		fmt.Fprintf(c.stdout, "\n%s\n%s\n", climatologyFootnote(ct.Options), caution)
	}
	return nil
}

// episodes prints the climatology of episodes.
func (c *climatologyCmd) episodes(ctx context.Context, db *sql.DB, opts queries.ClimatologyOptions, rules ruleList, stations stationList,
	years, format string, write func(io.Writer, *queries.Table) error) error {
	eo := rules.episodeOptions()
	if _, err := queries.AttachEpisodes(ctx, db, eo); err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	t, err := queries.EpisodeClimatology(ctx, db, opts, eo.Criteria)
	if err != nil {
		return fmt.Errorf("climatology: %w", err)
	}
	if len(t.Rows) == 0 {
		return noMatch(ctx, db, "climatology", stations, years)
	}
	people := format == "text" || format == "markdown"
	if people {
		// The definitions go under the table instead of in a wide column.
		t = t.Without("rule")
		fmt.Fprintf(c.stdout, "Episodes by station, rule and %s\n\n", opts.By)
	}
	if err := write(c.stdout, t); err != nil {
		return err
	}
	if people {
		fmt.Fprintf(c.stdout, "\n%s\n", episodeFootnote)
		if len(rules) > 0 {
			fmt.Fprintln(c.stdout, "Your rules:")
			for _, r := range rules {
				fmt.Fprintf(c.stdout, "  %s: %s\n", r.Name, r.Definition())
			}
		}
		fmt.Fprintln(c.stdout, caution)
	}
	return nil
}

// episodeFootnote states the definitions under the episodes climatology.
const episodeFootnote = `Episodes: runs of consecutive local solar days meeting a rule. Built-in rules
need 2 days; one missing day inside neither ends an episode nor counts
(days_missing), two end it (a rule's min_days and max_gap; csv and json carry
every rule's definition in a rule column).
An episode counts in the period of its first day, each day inside in its own.
share_of_days = days meeting the rule inside episodes / days with a sounding;
n_days_judged = days the rule could be judged on (met or failed): where it is
0 (e.g. no morning sounding for a morning rule) the counts are "-", not 0.
Rules: persistent_inversion_whiteman2001 (morning surface inversion still on
the afternoon/evening sounding), deep_stable_layer_wolyn_mckee1989 (>= 65 % of
the lowest 1.5 km with lapse rate <= 2.5 K/km in the morning),
heat_deficit_pool (morning and afternoon heat deficit >= 4.04 MJ m-2, a
threshold from one basin: set your own), pollution_potential_holzworth1972
(afternoon mixing height <= 1500 m and transport wind <= 4 m/s; Holzworth also
required no precipitation, which soundings do not observe).`

// climatologyTitle is the heading of a view for people.
func climatologyTitle(view string, o queries.ClimatologyOptions) string {
	what := map[string]string{
		"summary":     "Boundary-layer climatology",
		"mixing":      "Mixing height by method",
		"inversions":  "Inversions",
		"mixed":       "Well-mixed layers",
		"ventilation": "Ventilation",
		"all":         "Boundary-layer climatology, every column",
	}[view]
	tod := "nominal hour (UTC)"
	if o.Time == queries.BySun {
		tod = "sun class at launch"
	}
	return fmt.Sprintf("%s per station, %s and %s", what, o.By, tod)
}

// climatologyFootnote states the statistics' definitions under a table.
func climatologyFootnote(o queries.ClimatologyOptions) string {
	hours := "Special launch hours are pooled into the nearest regular hour (note \"with HH UTC\") or an \"other\" row\n" +
		"(hour \"-\"); --all-hours keeps every hour apart.\n"
	if o.AllHours || o.Time == queries.BySun {
		hours = ""
	}
	return fmt.Sprintf("Percentiles: Hyndman-Fan type 7 (linear between order statistics). Heights in m above ground;\n"+
		"surface = 0 m, undefined counted apart. Frequencies are fractions of the valid soundings.\n%s"+
		"Notes mark cells with fewer than %d valid soundings or fewer than %d values behind p10/p90\n"+
		"(--min-soundings, --min-tail; \"sondeclim climatology -h\").", hours, o.MinSoundings, o.MinTail)
}

// reportWriter returns the writer and file extension of an output format.
func reportWriter(format string) (func(io.Writer, *queries.Table) error, string, error) {
	switch format {
	case "text":
		return queries.WriteText, "txt", nil
	case "csv":
		return queries.WriteCSV, "csv", nil
	case "json":
		return queries.WriteJSON, "json", nil
	case "markdown", "md":
		return queries.WriteMarkdown, "md", nil
	}
	return nil, "", fmt.Errorf("unknown --format %q (text, csv, json or markdown): %w", format, errUsage)
}

// writeViews writes each view to dir/prefix-VIEW.ext (queries.WriteViews)
// and lists the files on w.
func writeViews(w io.Writer, dir, prefix, ext string, views []string, table func(string) (*queries.Table, error),
	write func(io.Writer, *queries.Table) error) error {
	files, err := queries.WriteViews(dir, prefix, ext, views, table, write)
	for _, f := range files {
		fmt.Fprintf(w, "%s\t%d rows\n", f.Path, f.Rows)
	}
	if err != nil {
		return fmt.Errorf("%s: %w", prefix, err)
	}
	return nil
}

// stationList is a flag holding station ids, repeatable and
// comma-separated.
type stationList []string

func (s *stationList) String() string { return strings.Join(*s, ",") }

func (s *stationList) Set(v string) error {
	for _, id := range strings.Split(v, ",") {
		if id = strings.TrimSpace(id); id != "" {
			*s = append(*s, id)
		}
	}
	return nil
}

// parseYears reads "Y1-Y2" or "Y" (empty: no bound) into an inclusive
// range; 0 means open.
func parseYears(s string) (first, last int, err error) {
	if s == "" {
		return 0, 0, nil
	}
	a, b, ok := strings.Cut(s, "-")
	if !ok {
		b = a
	}
	first, err1 := strconv.Atoi(strings.TrimSpace(a))
	last, err2 := strconv.Atoi(strings.TrimSpace(b))
	if err1 != nil || err2 != nil || first < 1 || last < first || last > 9999 {
		return 0, 0, fmt.Errorf("--years %q: want YEAR or FIRST-LAST, e.g. 1991-2020: %w", s, errUsage)
	}
	return first, last, nil
}

// contains reports whether list holds s.
func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}
