package main

import (
	"os"
	"strings"
	"testing"
)

// TestBenchHelp keeps the help of bench (golden file), whose harness lives
// in package bench: moving it must leave the command's flags and text as
// they were. The temporary directory, which differs between machines, is
// written as $TMPDIR.
func TestBenchHelp(t *testing.T) {
	code, _, errs := runCmd(t, "bench", "-h")
	if code != exitOK {
		t.Fatalf("bench -h: exit %d", code)
	}
	golden(t, "help-bench.txt", strings.ReplaceAll(errs, os.TempDir(), "$TMPDIR"))
}
