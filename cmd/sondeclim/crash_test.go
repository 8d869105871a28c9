package main

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/ingest/tidycsv"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/sounding"
)

// crashInputs writes the inputs of the crash test to dir: station A's
// year split into two plain files (so that the second rebuilds the
// partition the first made), 100 soundings in all; 60 soundings of
// station B gzip-compressed (read through a decompressed copy) and 30 of
// station C as tidy CSV (decoded into staging files). All invented (ingest/synth). It
// returns the files of the first run of the incremental case and all
// files.
func crashInputs(t *testing.T, dir string) (base, all []string) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	gen := func(station int) []string {
		var b bytes.Buffer
		if _, err := synth.Write(&b, synth.Config{Seed: 21, StartYear: 2004, Years: 1, StationIndex: station}); err != nil {
			t.Fatal(err)
		}
		return splitSoundings(b.String())
	}
	a := gen(0)[:100]
	h := len(a) / 2
	a1, a2 := filepath.Join(dir, "a-first.txt"), filepath.Join(dir, "a-second.txt")
	writeFile(t, a1, strings.Join(a[:h], ""))
	writeFile(t, a2, strings.Join(a[h:], ""))
	var gz bytes.Buffer
	gw := gzip.NewWriter(&gz)
	gw.Write([]byte(strings.Join(gen(1)[:60], "")))
	gw.Close()
	b := filepath.Join(dir, "b.txt.gz")
	writeFile(t, b, gz.String())
	var ss []*sounding.Sounding
	rd := archivev2.NewReader(strings.NewReader(strings.Join(gen(2)[:30], "")), "c", "")
	for {
		s, err := rd.Next()
		if err != nil {
			break
		}
		ss = append(ss, s)
	}
	var csv bytes.Buffer
	if err := tidycsv.Write(&csv, ss); err != nil {
		t.Fatal(err)
	}
	c := filepath.Join(dir, "c.csv")
	writeFile(t, c, csv.String())
	return []string{a1}, []string{a1, a2, b, c}
}

// rowHashes returns, per stored table, its row count and a hash of its
// rows' hashes in sorted order (so row order does not matter), from one
// query; "" with the error text when the store cannot be queried.
func rowHashes(t *testing.T, st string) (string, string) {
	t.Helper()
	docs, err := schema.Tables()
	if err != nil {
		t.Fatal(err)
	}
	var parts []string
	for _, d := range docs {
		parts = append(parts, fmt.Sprintf("select '%s' as t, count(*) as n, md5(coalesce(string_agg(h, '' order by h), '')) as rows "+
			"from (select md5(x::varchar) as h from %s x)", d.Name, d.Name))
	}
	code, out, errs := runCmd(t, "query", "--store", st, "--format", "csv", "--exact", strings.Join(parts, " union all ")+" order by t")
	if code != exitOK {
		return "", errs
	}
	return out, ""
}

// TestRandomKills: ingest is killed (SIGKILL) at seeded random moments
// spread over the time an uninterrupted run takes, into a fresh store and
// into a store holding an earlier run (incremental: new inputs, and one
// that rebuilds a station-year already committed). After each kill the
// store reads as its last commit (the earlier run, or the completed one
// when the kill came after the commit); the next run then gives exactly
// the tables of an uninterrupted run (every table's row hashes), the
// store holds no Parquet file but those of the uninterrupted run (and, in
// the incremental case, those the last commit replaced, which the next
// run removes), and verify finds nothing damaged. 20 delays for each case
// (a run that ends before its kill is retried with half the delay)
// (4 in -short mode). The subprocess is the test binary acting as the
// command (TestMain), so it is the code under test, built as the tests are.
func TestRandomKills(t *testing.T) {
	root := t.TempDir()
	base, all := crashInputs(t, filepath.Join(root, "in"))

	// References: the earlier run, and one uninterrupted run of all inputs
	// in a subprocess, timed to spread the kills over its length.
	baseStore := filepath.Join(root, "base")
	mustIngest(t, append([]string{"--store", baseStore}, base...)...)
	wantBase, _ := rowHashes(t, baseStore)
	baseFiles := parquetFiles(t, baseStore)
	// The shorter of two runs (the first may pay for cold caches).
	full := filepath.Join(root, "full")
	var took time.Duration
	for _, dir := range []string{filepath.Join(root, "full-first"), full} {
		start := time.Now()
		cmd := exec.Command(os.Args[0], append([]string{"ingest", "--quiet", "--workers", "2", "--store", dir}, all...)...)
		cmd.Env = append(os.Environ(), "SONDECLIM_RUN_MAIN=1")
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("uninterrupted run: %v\n%s", err, out)
		}
		if d := time.Since(start); took == 0 || d < took {
			took = d
		}
	}
	want, errs := rowHashes(t, full)
	if want == "" || wantBase == "" {
		t.Fatalf("reference stores cannot be queried: %s", errs)
	}
	wantFiles := parquetFiles(t, full)

	n := 20
	if testing.Short() {
		n = 4
	}
	rng := rand.New(rand.NewPCG(12, 2026))
	matched, killed := 0, 0
	for _, incremental := range []bool{false, true} {
		name := "fresh"
		if incremental {
			name = "incremental"
		}
		for i := range n {
			// Stratified: one delay in each n-th of the run's length.
			delay := time.Duration(float64(took) * (float64(i) + rng.Float64()) / float64(n))
			st := filepath.Join(root, fmt.Sprintf("%s-%02d", name, i))
			// A run that ended before its kill (the machine was quicker
			// than when the reference was timed) is tried again from the
			// same starting store with half the delay, up to three times,
			// so the kills land inside runs whatever the load.
			for attempt := 0; ; attempt++ {
				if err := os.RemoveAll(st); err != nil {
					t.Fatal(err)
				}
				if incremental {
					if err := os.CopyFS(st, os.DirFS(baseStore)); err != nil {
						t.Fatal(err)
					}
				}
				cmd := exec.Command(os.Args[0], append([]string{"ingest", "--quiet", "--workers", "2", "--store", st}, all...)...)
				cmd.Env = append(os.Environ(), "SONDECLIM_RUN_MAIN=1")
				if err := cmd.Start(); err != nil {
					t.Fatal(err)
				}
				time.Sleep(delay)
				cmd.Process.Signal(syscall.SIGKILL)
				err := cmd.Wait()
				var ee *exec.ExitError
				if errors.As(err, &ee) && ee.Sys().(syscall.WaitStatus).Signaled() {
					killed++
					break
				}
				if attempt == 3 {
					break
				}
				delay /= 2
			}
			// What the killed run left reads as a commit.
			if incremental {
				if got, errs := rowHashes(t, st); got != wantBase && got != want {
					t.Errorf("%s kill %d after %v: the store reads as neither the earlier nor the complete run\n%s%s", name, i, delay, got, errs)
				}
			}
			code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--store", st}, all...)...)
			got, qerrs := rowHashes(t, st)
			files := parquetFiles(t, st)
			vcode, vout, _ := runCmd(t, "verify", "--store", st)
			var extra, lost []string
			for f := range files {
				// A file of the earlier run that the last commit replaced
				// stays for readers until the next run removes it.
				if !wantFiles[f] && !(incremental && baseFiles[f]) {
					extra = append(extra, f)
				}
			}
			for f := range wantFiles {
				if !files[f] {
					lost = append(lost, f)
				}
			}
			if code != exitOK || got != want || len(extra)+len(lost) > 0 || vcode != exitOK {
				t.Errorf("%s kill %d after %v: rerun exit %d, tables equal %v, Parquet files not in the uninterrupted store %v, missing %v, verify exit %d\n%s%s%s\n%s",
					name, i, delay, code, got == want, extra, lost, vcode, errs, qerrs, vout, got)
				continue
			}
			matched++
		}
	}
	t.Logf("uninterrupted run %v; %d of %d runs killed before they ended; %d of %d reruns match the uninterrupted tables",
		took.Round(time.Millisecond), killed, 2*n, matched, 2*n)
	if killed < n/2 {
		t.Errorf("only %d of %d runs were killed before they ended: the delays do not cover the run", killed, 2*n)
	}
}
