// Command sondeclim turns radiosonde sounding archives into boundary-layer
// climatologies: it reads sounding files, derives potential temperature,
// mixing ratio, inversions, mixed layers and mixing heights, writes them to
// a Parquet store and summarises the store with SQL.
//
// Run `sondeclim help` for the subcommands.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"sort"
	"strings"
	"syscall"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/internal/buildinfo"
	"github.com/sondeclim/sondeclim/schema/store"
)

// Exit codes shared by every subcommand.
const (
	exitOK      = 0 // everything asked was done
	exitFailure = 1 // the command could not run (bad store, unwritable output, …)
	exitUsage   = 2 // wrong flags or arguments
	exitSkipped = 3 // done, but some input was skipped: data was lost (see the summary)
	exitNoMatch = 4 // a filter (--station, --years) matched nothing in the store
)

// errUsage marks errors that are the caller's wording, answered with exit 2.
var errUsage = errors.New("usage")

// errSkipped is returned by a command that finished but skipped input.
var errSkipped = errors.New("finished with skipped input")

// env carries a command's standard streams, so tests can run commands in
// process and compare their output with golden files.
type env struct {
	stdin          io.Reader
	stdout, stderr io.Writer
}

// command is one subcommand.
type command interface {
	Run(ctx context.Context, args []string) error
}

// commands holds the subcommands by name. Each subcommand's file
// registers itself in an init function, so adding a command touches only
// its own file.
var commands = map[string]struct {
	summary string
	make    func(env) command
}{}

// register adds a subcommand with its one-line summary for `sondeclim help`.
func register(name, summary string, make func(env) command) {
	commands[name] = struct {
		summary string
		make    func(env) command
	}{summary, make}
}

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], env{os.Stdin, os.Stdout, os.Stderr})
	stop()
	os.Exit(code)
}

// run dispatches to a subcommand and maps its error to an exit code.
func run(ctx context.Context, args []string, e env) int {
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" || args[0] == "-help" {
		if len(args) > 1 {
			if c, ok := commands[args[1]]; ok {
				return exitCode(e, c.make(e).Run(ctx, []string{"-h"}))
			}
		}
		usage(e.stdout)
		if len(args) == 0 {
			return exitUsage
		}
		return exitOK
	}
	if args[0] == "--version" || args[0] == "-version" || args[0] == "version" {
		fmt.Fprint(e.stdout, versionText())
		return exitOK
	}
	c, ok := commands[args[0]]
	if !ok {
		fmt.Fprintf(e.stderr, "sondeclim: unknown command %q\n\n", args[0])
		usage(e.stderr)
		return exitUsage
	}
	return exitCode(e, c.make(e).Run(ctx, args[1:]))
}

func exitCode(e env, err error) int {
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errSkipped):
		return exitSkipped
	case errors.Is(err, errHelp):
		return exitOK
	case errors.Is(err, errNoMatch):
		fmt.Fprintf(e.stderr, "sondeclim: %v\n", err)
		return exitNoMatch
	case errors.Is(err, errUsage):
		fmt.Fprintf(e.stderr, "sondeclim: %v\n", err)
		return exitUsage
	}
	fmt.Fprintf(e.stderr, "sondeclim: %v\n", err)
	return exitFailure
}

// versionText names the program's version and the versions of what it
// writes: the store layout and table schema (a store of another schema
// version is refused) and the derivation (a store of another derivation
// version is rebuilt on the next ingest).
func versionText() string {
	return fmt.Sprintf("sondeclim %s\nstore schema version %d\nderivation version %d\n",
		buildinfo.Version(), store.Version, engine.DerivationVersion)
}

func usage(w io.Writer) {
	var names []string
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	var b strings.Builder
	b.WriteString(`sondeclim builds boundary-layer climatologies (inversions, mixed layers,
mixing height) from radiosonde sounding archives.

Usage:
  sondeclim <command> [flags] [arguments]

Commands:
`)
	for _, n := range names {
		fmt.Fprintf(&b, "  %-12s %s\n", n, commands[n].summary)
	}
	b.WriteString(`
Run "sondeclim <command> -h" for a command's flags and examples, and
"sondeclim --version" for the program, store schema and derivation versions.
Flags may come before or after a command's arguments.

Start here:
  sondeclim demo                                  # invented station, end to end
  sondeclim ingest --store ./store data/*.txt.zip # your archive files
  sondeclim climatology --store ./store

Results and run summaries go to stdout; warnings and progress to stderr
(--log json on the commands that log, for log collectors).

Exit codes: 0 done (remarks on input, such as NIL reports, allowed); 1 could
not run; 2 usage error; 3 done, but some input was skipped and its data lost
(each skipped item is named with file and line on stderr); 4 a filter such as
--station or --years matched nothing (the message lists what the store holds).

Results are estimates from soundings. For regulatory, air-quality or burn
decisions defer to local regulations and licensed meteorological practice.
`)
	io.WriteString(w, b.String())
}
