package main

import (
	"context"
	"database/sql"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"math"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/internal/clilog"
	"github.com/sondeclim/sondeclim/queries"
)

// errHelp is returned when -h was asked for; the usage text was printed.
var errHelp = errors.New("help shown")

// newFlags makes a FlagSet that prints usage text to out, with a one-line
// summary, the argument synopsis, the flags and worked examples.
func newFlags(name, synopsis, about, examples string, out io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(out)
	fs.Usage = func() {
		fmt.Fprintf(out, "%s\n\n%s\n", strings.TrimSpace("Usage: sondeclim "+name+" "+synopsis), strings.TrimSpace(about))
		n := 0
		fs.VisitAll(func(*flag.Flag) { n++ })
		if n > 0 {
			fmt.Fprintf(out, "\nFlags:\n")
			fs.PrintDefaults()
		}
		if examples != "" {
			fmt.Fprintf(out, "\nExamples:\n%s\n", strings.TrimRight(examples, "\n"))
		}
	}
	return fs
}

// parseFlags parses args and turns flag errors into usage errors. Flags
// may come after positional arguments ("query 'select 1' --format csv");
// everything after "--" is positional. fs.Args() holds the positional
// arguments in their order afterwards.
func parseFlags(fs *flag.FlagSet, args []string) error {
	var pos []string
	rest := args
	for {
		if err := fs.Parse(rest); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return errHelp
			}
			return fmt.Errorf("%s: %v: %w", fs.Name(), err, errUsage)
		}
		left := fs.Args()
		if n := len(rest) - len(left); n > 0 && rest[n-1] == "--" {
			pos = append(pos, left...) // after "--": all positional
			break
		}
		if len(left) == 0 {
			break
		}
		pos = append(pos, left[0])
		rest = left[1:]
	}
	// Leave the positional arguments in fs.Args().
	if err := fs.Parse(append([]string{"--"}, pos...)); err != nil {
		return fmt.Errorf("%s: %v: %w", fs.Name(), err, errUsage)
	}
	return nil
}

// byteSize is a flag value of a size in bytes, given as a whole number of
// bytes or of KiB, MiB, GiB or TiB ("8GiB", "512 MiB"), and printed in
// the largest of those units that divides it, so that a default reads
// "8GiB" rather than 8589934592.
type byteSize int64

var byteUnits = []struct {
	name string
	size int64
}{{"TiB", 1 << 40}, {"GiB", 1 << 30}, {"MiB", 1 << 20}, {"KiB", 1 << 10}}

func (b *byteSize) String() string {
	for _, u := range byteUnits {
		if n := int64(*b); n >= u.size && n%u.size == 0 {
			return fmt.Sprintf("%d%s", n/u.size, u.name)
		}
	}
	return fmt.Sprint(int64(*b))
}

func (b *byteSize) Set(s string) error {
	num, mult := strings.TrimSpace(s), int64(1)
	for _, u := range byteUnits {
		if v, ok := strings.CutSuffix(num, u.name); ok {
			num, mult = strings.TrimSpace(v), u.size
			break
		}
	}
	n, err := strconv.ParseInt(num, 10, 64)
	if err != nil || n < 0 || n > math.MaxInt64/mult {
		return fmt.Errorf("want a whole number of bytes, KiB, MiB, GiB or TiB, e.g. 8GiB")
	}
	*b = byteSize(n * mult)
	return nil
}

// byteSizeFlag defines a byteSize flag with a default of def bytes.
func byteSizeFlag(fs *flag.FlagSet, name string, def int64, usage string) *byteSize {
	b := byteSize(def)
	fs.Var(&b, name, usage)
	return &b
}

// wrapList writes items comma-separated on lines of at most width
// characters, each line starting with indent, and ends with a full stop.
func wrapList(items []string, width int, indent string) string {
	var b strings.Builder
	line := indent
	for i, it := range items {
		sep := ", "
		if i == len(items)-1 {
			sep = "."
		}
		if len(line) > len(indent) && len(line)+len(it)+len(sep) > width {
			b.WriteString(strings.TrimRight(line, " ") + "\n")
			line = indent
		}
		line += it + sep
	}
	b.WriteString(line)
	return b.String()
}

// caution is printed under every report for people.
const caution = "Caution: estimates from soundings; for regulatory, air-quality or burn decisions defer to local regulations and licensed meteorological practice."

// logFlag adds --log, the format of the records written to stderr.
func logFlag(fs *flag.FlagSet) *string {
	return fs.String("log", clilog.Human, "`format` of log records on stderr: "+clilog.Human+" (one readable line each) or "+clilog.JSON+" (one JSON object each, for log collectors)")
}

// newLogger returns the logger of a command, or a usage error for an
// unknown --log format.
func newLogger(w io.Writer, format string, level slog.Level) (*slog.Logger, error) {
	log, err := clilog.New(w, format, level)
	if err != nil {
		return nil, fmt.Errorf("--log: %v: %w", err, errUsage)
	}
	return log, nil
}

// errNoMatch marks a filter (--station, --years) that matched nothing in
// the store; the command exits with exitNoMatch.
var errNoMatch = errors.New("no match")

// noMatchError says what matched nothing and what the store holds.
type noMatchError struct{ msg string }

func (e *noMatchError) Error() string        { return e.msg }
func (e *noMatchError) Is(target error) bool { return target == errNoMatch }

// noMatch returns the error of a command whose filter matched nothing:
// the filter as given and the stations and years the store holds.
func noMatch(ctx context.Context, db *sql.DB, cmd string, stations []string, years string) error {
	var f []string
	if len(stations) > 0 {
		f = append(f, "--station "+strings.Join(stations, ","))
	}
	if years != "" {
		f = append(f, "--years "+years)
	}
	what := "the store"
	if len(f) > 0 {
		what = strings.Join(f, " ")
	}
	h, err := queries.Holdings(ctx, db)
	if err != nil {
		return fmt.Errorf("%s: nothing matches %s (%v)", cmd, what, err)
	}
	return &noMatchError{fmt.Sprintf("%s: no soundings match %s; %s", cmd, what, queries.DescribeHoldings(h, 12))}
}

// ruleList is the repeatable --rule flag: the user's own episode rules,
// parsed when the flag is read (analyze.ParseRule), so a mistake is a
// usage error naming its position.
type ruleList []analyze.Criterion

func (r *ruleList) String() string {
	var defs []string
	for _, c := range *r {
		defs = append(defs, c.Name+": "+c.Definition())
	}
	return strings.Join(defs, " | ")
}

func (r *ruleList) Set(v string) error {
	c, err := analyze.ParseRule(v)
	if err != nil {
		return err
	}
	for _, o := range *r {
		if o.Name == c.Name {
			return fmt.Errorf("two rules named %s", c.Name)
		}
	}
	*r = append(*r, c)
	return nil
}

// episodeOptions returns the default day and episode options with the
// user's rules after the built-in ones.
func (r ruleList) episodeOptions() queries.EpisodeOptions {
	o := queries.DefaultEpisodeOptions()
	o.Criteria = append(analyze.BuiltinCriteria(), r...)
	return o
}

// ruleFlag adds --rule to a command that builds episodes.
func ruleFlag(fs *flag.FlagSet) *ruleList {
	var r ruleList
	fs.Var(&r, "rule", "your own episode `rule`, NAME: CONDITION[; min_days=N][; max_gap=N], evaluated beside the built-in ones (repeatable; syntax under \"Your own episode rules\" above)")
	return &r
}

// ruleHelp documents the syntax of --rule (analyze.ParseRule) in the help
// of the commands that take it.
const ruleHelp = `Your own episode rules (--rule): NAME: CONDITION[; min_days=N][; max_gap=N].
CONDITION combines the days table's columns (sondeclim schema) with and, or,
not and parentheses; a number column is compared with <, <=, >, >=, = or !=
and a number in the column's unit, a true/false column stands alone:
  true/false  sbi_persists, morning_sbi, afternoon_sbi, deep_stable_layer,
              has_morning, has_afternoon
  numbers     afternoon_mixing_height_m, afternoon_transport_wind_ms,
              afternoon_ventilation_m2s, morning_sbi_strength_k (0 on a
              morning without an inversion), morning_heat_deficit_mj_m2,
              afternoon_heat_deficit_mj_m2, max_heat_deficit_mj_m2,
              stable_layer_fraction, soundings
A day whose needed value is missing is unknown (as NULL in SQL: "unknown and
false" is false, "unknown or true" true). min_days (default 2) is the least
number of days meeting the rule in an episode; max_gap (default 1) the most
unknown days in a row kept inside one: they neither end it nor count, and
are listed as missing; a longer gap ends it. The rule's definition is
recorded in the episodes table's rule column and the climatology's rule
column. Example:
  --rule 'shallow_lid: afternoon_mixing_height_m <= 600 and sbi_persists; min_days=3'`
