package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"strings"

	"github.com/sondeclim/sondeclim/internal/clilog"
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

// parseFlags parses args and turns flag errors into usage errors.
func parseFlags(fs *flag.FlagSet, args []string) error {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return errHelp
		}
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
