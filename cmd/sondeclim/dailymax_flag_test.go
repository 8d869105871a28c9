package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/synth"
)

// TestDailyMaxUsage: a --daily-max file that cannot be used is a usage
// error (exit 2, as "sondeclim help" and the README define it: the
// caller's input), like a bad --ventilation-table, and the message names
// the file and, for a bad record, the line. A station the run knows
// nowhere (no input, store partition or station list) is refused too,
// before anything is built. The input is the demo's invented archive,
// one year; the temperatures are invented plumbing values.
func TestDailyMaxUsage(t *testing.T) {
	dir := t.TempDir()
	cfg := synth.DefaultConfig()
	cfg.Years = 1
	in, _, err := synth.WriteFile(dir, cfg)
	if err != nil {
		t.Fatal(err)
	}
	id := cfg.Station().ID
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte("station_id,date,tmax_c\n"+text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	good := id + ",2001-07-01,31.5\n"
	for _, c := range []struct{ file, want string }{
		{filepath.Join(dir, "absent.csv"), "absent.csv: cannot be read"},
		{dir, dir + ": cannot be read"},
		{write("fields.csv", good+id+",2001-07-02\n"), "fields.csv:3: wrong number of fields"},
		{write("date.csv", good+id+",2001-07-32,30\n"), `date.csv:3: date "2001-07-32" is not YYYY-MM-DD`},
		{write("twice.csv", good+id+",2001-07-01,30\n"), "twice.csv:3: repeated station " + id + " and date 2001-07-01"},
		{write("hot.csv", good+id+",2001-07-02,310.2\n"), `hot.csv:3: tmax_c "310.2" is not a temperature`},
		{write("station.csv", good+"\n72403,2001-07-01,30\n72403,2001-07-02,30\n"), `station.csv:4: station "72403" is not known`},
	} {
		st := filepath.Join(t.TempDir(), "store")
		sum := filepath.Join(t.TempDir(), "summary.json")
		code, _, errs := runCmd(t, "ingest", "--quiet", "--store", st, "--summary-json", sum, "--daily-max", c.file, in)
		if code != exitUsage || !strings.Contains(errs, "--daily-max: daily maxima ") || !strings.Contains(errs, c.want) {
			t.Errorf("--daily-max %s: exit %d, stderr %q; want exit %d naming %q", c.file, code, errs, exitUsage, c.want)
		}
		if !strings.Contains(c.file, "station") {
			if _, err := os.Stat(st); err == nil {
				t.Errorf("%s: a refused file left a store behind", c.file)
			}
			continue
		}
		// Refused after the inputs are read: nothing is stored, and the
		// summary for schedulers carries the same exit code.
		var v struct {
			ExitCode int    `json:"exit_code"`
			Error    string `json:"error"`
		}
		if b, err := os.ReadFile(sum); err != nil || json.Unmarshal(b, &v) != nil || v.ExitCode != exitUsage || !strings.Contains(v.Error, "72403") {
			t.Errorf("summary of the refused run: %+v (%v)", v, err)
		}
		if code, _, errs := runCmd(t, "query", "--store", st, "select count(*) from soundings"); code != exitFailure || !strings.Contains(errs, "has no tables") {
			t.Errorf("store after the refused run: exit %d %s", code, errs)
		}
	}
	// The same file without the unknown station is used; a station of
	// the built-in list (Sterling, USM00072403) with no soundings yet is
	// known, so a file may cover stations still to come.
	st := filepath.Join(t.TempDir(), "store")
	mustIngest(t, "--store", st, "--daily-max", write("ok.csv", good+"USM00072403,2001-07-01,30\n"), in)
	code, out, errs := runCmd(t, "query", "--store", st, "--format", "csv", "select tmax_c from afternoon_mixing where tmax_source = 'daily_maxima'")
	if code != exitOK || out != "tmax_c\n31.5\n" {
		t.Errorf("afternoon rows from the good file: exit %d %q %s", code, out, errs)
	}
}
