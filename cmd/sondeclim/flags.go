package main

import (
	"context"
	"database/sql"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"strings"

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
		fmt.Fprintf(out, "Usage: sondeclim %s %s\n\n%s\n\nFlags:\n", name, synopsis, strings.TrimSpace(about))
		fs.PrintDefaults()
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
