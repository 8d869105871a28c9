package main

import (
	"archive/zip"
	"bufio"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/schema/store"
)

// The tests in this file exercise the store as a scheduler would: real
// subprocesses, SIGKILL at chosen moments, concurrent writers and readers.
// The inputs are the real files in ../shared/validation (PROVENANCE.md).

// TestMain lets the test binary act as the sondeclim command when
// SONDECLIM_RUN_MAIN is set, so crash tests can start and kill a real
// process without building a separate binary.
func TestMain(m *testing.M) {
	if os.Getenv("SONDECLIM_RUN_MAIN") == "1" {
		os.Exit(run(context.Background(), os.Args[1:], env{os.Stdin, os.Stdout, os.Stderr}))
	}
	os.Exit(m.Run())
}

// startSub starts the command in a subprocess; pauseAt, when not empty,
// makes it stop at that point (engine.PauseEnv). It returns once the
// process has reached the pause point (or at once without one).
func startSub(t *testing.T, pauseAt string, args ...string) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "SONDECLIM_RUN_MAIN=1")
	if pauseAt != "" {
		cmd.Env = append(cmd.Env, engine.PauseEnv+"="+pauseAt)
	}
	stderr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { cmd.Process.Kill(); cmd.Wait() })
	if pauseAt == "" {
		go io.Copy(io.Discard, stderr)
		return cmd
	}
	reached := make(chan bool, 1)
	go func() {
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
			if sc.Text() == "paused at "+pauseAt {
				reached <- true
			}
		}
		close(reached)
	}()
	select {
	case ok := <-reached:
		if !ok {
			t.Fatalf("subprocess ended before reaching %q", pauseAt)
		}
	case <-time.After(2 * time.Minute):
		t.Fatalf("subprocess did not reach %q", pauseAt)
	}
	return cmd
}

// dump returns every table of the store as CSV, in a fixed order.
func dump(t *testing.T, storeDir string) string {
	t.Helper()
	var b strings.Builder
	for _, q := range []string{
		"select * from soundings order by station_id, launch_time",
		"select * from levels order by station_id, launch_time, level_index",
		"select * from inversions order by station_id, launch_time, inversion_index",
		"select * from mixed_layers order by station_id, launch_time, layer_index",
		"select * from mixing_heights order by station_id, launch_time, method",
		"select * from afternoon_mixing order by station_id, local_date",
	} {
		code, out, errs := runCmd(t, "query", "--store", storeDir, "--format", "csv", "--exact", q)
		if code != exitOK {
			t.Fatalf("%s: exit %d\n%s", q, code, errs)
		}
		b.WriteString(out)
	}
	return b.String()
}

func mustIngest(t *testing.T, args ...string) {
	t.Helper()
	code, _, errs := runCmd(t, append([]string{"ingest", "--quiet"}, args...)...)
	if code != exitOK {
		t.Fatalf("ingest %v: exit %d\n%s", args, code, errs)
	}
}

// snapshot maps every file of a store to its modification time and hash.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		fi, _ := d.Info()
		h := sha256.Sum256(b)
		rel, _ := filepath.Rel(dir, p)
		out[rel] = fi.ModTime().String() + " " + hex.EncodeToString(h[:])
		return nil
	})
	return out
}

// parquetFiles lists the Parquet files under a store, relative to it.
func parquetFiles(t *testing.T, dir string) map[string]bool {
	t.Helper()
	out := map[string]bool{}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() && strings.Contains(d.Name(), ".parquet") {
			rel, _ := filepath.Rel(dir, p)
			out[rel] = true
		}
		return err
	})
	return out
}

func TestKilledIngestConverges(t *testing.T) {
	v := sharedDir(t)
	a := filepath.Join(v, "archive-v2")
	first := []string{filepath.Join(a, "USM00074794-data-1950-portion.txt"), filepath.Join(a, "SWM00002527-data-hour99.txt")}
	all := append(append([]string{}, first...), filepath.Join(a, "AUM00011035-data.txt.gz"), filepath.Join(a, "USM00072403-data-beg2016.txt.zip"))

	// Reference: one uninterrupted store with the first inputs, one with all.
	ref1, refAll := t.TempDir(), t.TempDir()
	mustIngest(t, append([]string{"--store", ref1}, first...)...)
	mustIngest(t, append([]string{"--store", refAll}, all...)...)
	want1, wantAll := dump(t, ref1), dump(t, refAll)

	for _, point := range []string{"staged", "written", "commit"} {
		t.Run(point, func(t *testing.T) {
			s := t.TempDir()
			mustIngest(t, append([]string{"--store", s}, first...)...)
			cmd := startSub(t, point, append([]string{"ingest", "--workers", "1", "--store", s}, all...)...)
			if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
				t.Fatal(err)
			}
			cmd.Wait()
			// Readers see the last committed state, whatever the killed run left.
			if got := dump(t, s); got != want1 {
				t.Errorf("after SIGKILL at %s the store does not read as its last commit", point)
			}
			if point != "staged" && len(parquetFiles(t, s)) <= len(parquetFiles(t, ref1)) {
				t.Errorf("killed at %s but no extra file was left behind: the test does not test what it claims", point)
			}
			// The next run converges to the uninterrupted result ...
			mustIngest(t, append([]string{"--store", s}, all...)...)
			if got := dump(t, s); got != wantAll {
				t.Errorf("rerun after SIGKILL at %s differs from an uninterrupted run", point)
			}
			// ... with no duplicates and no stray files.
			code, out, _ := runCmd(t, "query", "--store", s, "--format", "csv",
				"select count(*) - count(distinct (station_id, launch_time)) from soundings")
			if code != exitOK || !strings.HasSuffix(out, "\n0\n") {
				t.Errorf("duplicate soundings: %q", out)
			}
			if got, ref := len(parquetFiles(t, s)), len(parquetFiles(t, refAll)); got != ref {
				t.Errorf("store holds %d Parquet files after the rerun, an uninterrupted store %d", got, ref)
			}
		})
	}
}

func TestRerunUnchangedChangesNothing(t *testing.T) {
	v := sharedDir(t)
	s := t.TempDir()
	in := []string{filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz"), filepath.Join(v, "netcdf")}
	mustIngest(t, append([]string{"--store", s}, in...)...)
	before := snapshot(t, s)
	sum := filepath.Join(t.TempDir(), "summary.json")
	mustIngest(t, append([]string{"--store", s, "--summary-json", sum}, in...)...)
	after := snapshot(t, s)
	if len(before) != len(after) {
		t.Errorf("%d files before, %d after", len(before), len(after))
	}
	for f, b := range before {
		if after[f] != b {
			t.Errorf("%s changed: %s → %s", f, b, after[f])
		}
	}
	got := readSummary(t, sum)
	if got.InputsUnchanged != 27 || got.InputsRead != 0 || got.Committed {
		t.Errorf("unchanged rerun: %d unchanged, %d read, committed %v; want 27, 0, false", got.InputsUnchanged, got.InputsRead, got.Committed)
	}
}

func readSummary(t *testing.T, path string) engine.Summary {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var v struct {
		OK      bool
		Summary engine.Summary
	}
	if err := json.Unmarshal(b, &v); err != nil {
		t.Fatal(err)
	}
	return v.Summary
}

// TestGrowingFile: a year-to-date file replaced by a longer copy adds
// exactly the new soundings (Sterling 2016: 662 soundings, PROVENANCE.md).
func TestGrowingFile(t *testing.T) {
	v := sharedDir(t)
	text := unzipFirst(t, filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip"))
	// Cut after the 400th header: the first 400 soundings.
	cut, n := 0, 0
	for i := 0; i < len(text); i++ {
		if text[i] == '#' && (i == 0 || text[i-1] == '\n') {
			if n == 400 {
				cut = i
				break
			}
			n++
		}
	}
	if cut == 0 {
		t.Fatal("could not find the 401st sounding")
	}
	dir := t.TempDir()
	ytd := filepath.Join(dir, "USM00072403-data.txt")
	if err := os.WriteFile(ytd, text[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	s := t.TempDir()
	sum := filepath.Join(dir, "summary.json")
	mustIngest(t, "--store", s, "--summary-json", sum, ytd)
	if got := readSummary(t, sum); got.SoundingsNew != 400 || got.Soundings != 400 {
		t.Fatalf("first part: %d new, %d in store; want 400, 400", got.SoundingsNew, got.Soundings)
	}
	if err := os.WriteFile(ytd, text, 0o644); err != nil {
		t.Fatal(err)
	}
	os.Chtimes(ytd, time.Now().Add(time.Hour), time.Now().Add(time.Hour)) // as the daily download would
	mustIngest(t, "--store", s, "--summary-json", sum, ytd)
	got := readSummary(t, sum)
	if got.SoundingsNew != 262 || got.SoundingsReplaced != 0 || got.SoundingsRemoved != 0 || got.Soundings != 662 {
		t.Errorf("grown file: new %d, replaced %d, removed %d, in store %d; want 262, 0, 0, 662",
			got.SoundingsNew, got.SoundingsReplaced, got.SoundingsRemoved, got.Soundings)
	}
}

func unzipFirst(t *testing.T, path string) []byte {
	t.Helper()
	zr, err := zip.OpenReader(path)
	if err != nil {
		t.Fatal(err)
	}
	defer zr.Close()
	f, err := zr.File[0].Open()
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	out, err := io.ReadAll(f)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func TestConcurrentIngestAndQuery(t *testing.T) {
	v := sharedDir(t)
	s := t.TempDir()
	a := filepath.Join(v, "archive-v2")
	mustIngest(t, "--store", s, filepath.Join(a, "USM00074794-data-1950-portion.txt"))
	// A writer holds the lock, stopped before its commit.
	startSub(t, "commit", "ingest", "--store", s, filepath.Join(a, "AUM00011035-data.txt.gz"))
	code, _, errs := runCmd(t, "ingest", "--store", s, filepath.Join(a, "SWM00002527-data-hour99.txt"))
	if code != exitFailure || !strings.Contains(errs, "locked by another ingest") || !strings.Contains(errs, "--wait") {
		t.Errorf("second ingest: exit %d, stderr %q; want a clean refusal", code, errs)
	}
	// A query meanwhile sees the committed store: Cape Kennedy's 14 only.
	code, out, errs := runCmd(t, "query", "--store", s, "--format", "csv", "select count(*) from soundings")
	if code != exitOK || out != "count_star()\n14\n" {
		t.Errorf("query during ingest: exit %d, %q %s", code, out, errs)
	}
}

func TestShardsEqualUnsharded(t *testing.T) {
	v := sharedDir(t)
	in := []string{filepath.Join(v, "archive-v2"), filepath.Join(v, "netcdf")}
	one, sharded := t.TempDir(), t.TempDir()
	ingestSkipping := func(args ...string) {
		code, _, errs := runCmd(t, append([]string{"ingest", "--quiet"}, args...)...)
		if code != exitOK && code != exitSkipped {
			t.Fatalf("ingest %v: exit %d\n%s", args, code, errs)
		}
	}
	ingestSkipping(append([]string{"--store", one, "--workers", "1"}, in...)...)
	for k := 1; k <= 3; k++ {
		ingestSkipping(append([]string{"--store", sharded, "--workers", "2", "--shard", fmt.Sprintf("%d/3", k)}, in...)...)
	}
	if dump(t, one) != dump(t, sharded) {
		t.Errorf("shards 1/3, 2/3, 3/3 together differ from one unsharded run")
	}
	ms, err := store.ReadAll(sharded)
	if err != nil || len(ms) != 3 {
		t.Fatalf("sharded store: %d manifests, %v", len(ms), err)
	}
	for _, m := range ms {
		if len(m.Partitions) == 0 {
			t.Errorf("shard %s owns no partition: the test data do not spread over the shards", m.Shard)
		}
	}
}

func TestOldStoreRefused(t *testing.T) {
	v := sharedDir(t)
	in := filepath.Join(v, "archive-v2", "USM00074794-data-1950-portion.txt")
	// A store whose manifest says version 1.
	s := t.TempDir()
	os.MkdirAll(filepath.Join(s, store.MetaDir), 0o755)
	os.WriteFile(filepath.Join(s, store.MetaDir, "manifest-all.json"), []byte(`{"version": 1}`), 0o644)
	for _, args := range [][]string{{"ingest", "--store", s, in}, {"query", "--store", s, "select 1"}, {"climatology", "--store", s}} {
		code, _, errs := runCmd(t, args...)
		if code != exitFailure || !strings.Contains(errs, "incompatible version") || !strings.Contains(errs, "new store directory") {
			t.Errorf("%v on a version-1 store: exit %d, %q", args[0], code, errs)
		}
	}
	// A store of Parquet files without a manifest (an earlier layout).
	s2 := t.TempDir()
	mustIngest(t, "--store", s2, in)
	os.RemoveAll(filepath.Join(s2, store.MetaDir))
	code, _, errs := runCmd(t, "ingest", "--store", s2, in)
	if code != exitFailure || !strings.Contains(errs, "no manifest") {
		t.Errorf("ingest into a store without manifest: exit %d, %q", code, errs)
	}
}

// TestParameterChangeKeepsOtherInputs: a run with different analysis
// settings (here --use-suspect) that names only some inputs rebuilds every
// partition, reading the other inputs again, and loses nothing. Real files
// from ../shared/validation (PROVENANCE.md: Cape Kennedy 14, Wien 321).
func TestParameterChangeKeepsOtherInputs(t *testing.T) {
	v := sharedDir(t)
	a := filepath.Join(v, "archive-v2", "USM00074794-data-1950-portion.txt")
	b := filepath.Join(v, "archive-v2", "AUM00011035-data.txt.gz")
	s := t.TempDir()
	mustIngest(t, "--store", s, a, b)
	sum := filepath.Join(t.TempDir(), "summary.json")
	mustIngest(t, "--store", s, "--use-suspect", "--summary-json", sum, a)
	got := readSummary(t, sum)
	if got.Soundings != 14+321 || got.PartitionsWritten != 2 || got.InputsRead != 2 {
		t.Errorf("after a parameter change naming one input: %d soundings in store, %d partitions written, %d inputs read; want 335, 2, 2",
			got.Soundings, got.PartitionsWritten, got.InputsRead)
	}
	code, out, _ := runCmd(t, "query", "--store", s, "--format", "csv", "select count(*) from soundings")
	if code != exitOK || out != "count_star()\n335\n" {
		t.Errorf("store after the rebuild: %q", out)
	}
}

// TestDailyMaxima: --daily-max feeds the afternoon (Holzworth) mixing
// height, and changing it re-derives the store. The sounding file is real
// (Sterling 2016, PROVENANCE.md); the two maxima are invented plumbing
// values, not observations.
func TestDailyMaxima(t *testing.T) {
	v := sharedDir(t)
	in := filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	maxima := filepath.Join(t.TempDir(), "tmax.csv")
	os.WriteFile(maxima, []byte("station_id,date,tmax_c\nUSM00072403,2016-07-01,33.5\nUSM00072403,2016-07-02,31.0\n"), 0o644)
	s := t.TempDir()
	mustIngest(t, "--store", s, in)
	mustIngest(t, "--store", s, "--daily-max", maxima, in)
	code, out, errs := runCmd(t, "query", "--store", s, "--format", "csv",
		"select strftime(local_date, '%Y-%m-%d') as d, tmax_c, status from afternoon_mixing "+
			"where tmax_source = 'daily_maxima' order by 1")
	if code != exitOK {
		t.Fatalf("query: exit %d %s", code, errs)
	}
	if !strings.HasPrefix(out, "d,tmax_c,status\n2016-07-01,33.5,") || !strings.Contains(out, "\n2016-07-02,31,") {
		t.Errorf("afternoon rows from the daily maxima:\n%s", out)
	}
	code, _, errs = runCmd(t, "ingest", "--store", s, "--daily-max", filepath.Join(t.TempDir(), "absent.csv"), in)
	if code != exitUsage || !strings.Contains(errs, "absent.csv") {
		t.Errorf("missing maxima file: exit %d, %q", code, errs)
	}
}
