package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest/synth"
)

// episodeTables returns the derived tables of a store as CSV, in a fixed
// order.
func episodeTables(t *testing.T, store string) string {
	t.Helper()
	var b strings.Builder
	for _, q := range []string{
		"select * from days order by all",
		"select * from episodes order by all",
		"select * from episode_days order by all",
		"select * from rule_months order by all",
	} {
		code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", q)
		if code != exitOK {
			t.Fatalf("%s: exit %d\n%s", q, code, errs)
		}
		b.WriteString(out)
	}
	return b.String()
}

func queryOne(t *testing.T, store, q string) string {
	t.Helper()
	code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", q)
	if code != exitOK {
		t.Fatalf("%s: exit %d\n%s", q, code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) < 2 {
		return ""
	}
	return strings.Join(lines[1:], "\n")
}

// TestEpisodesIncremental: days and episodes are the same whether the
// record is ingested at once, grown by a nightly append that cuts through
// an episode at the year boundary, or split by year and ingested in
// reverse order with another worker count. The invented archive (seed 5,
// 2001–2002) has a persistent-inversion episode from 29 December 2001 to 2
// January 2002; the 00 UTC sounding of 1 January is launched at 23 UTC on
// 31 December, so it is 31 December's evening sounding but lies in the
// 2002 partition: the day itself spans two partitions.
func TestEpisodesIncremental(t *testing.T) {
	dir := t.TempDir()
	path, _, err := synth.WriteFile(dir, synth.Config{Seed: 5, StartYear: 2001, Years: 2})
	if err != nil {
		t.Fatal(err)
	}
	text, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	cut := bytes.Index(text, []byte("#ZZXSYN00001 2002 01 01 00 "))
	if cut < 0 {
		t.Fatal("no 2002-01-01 00 UTC sounding in the invented archive")
	}

	whole := t.TempDir()
	mustIngest(t, "--store", whole, "--workers", "1", path)
	span := queryOne(t, whole, "select strftime(first_day, '%Y-%m-%d'), strftime(last_day, '%Y-%m-%d'), length_days, days_missing from episodes "+
		"where criterion = 'persistent_inversion_whiteman2001' and first_day <= '2001-12-31' and last_day >= '2002-01-01'")
	if span != "2001-12-29,2002-01-02,5,0" {
		t.Fatalf("episode over the year boundary: %q, want 2001-12-29,2002-01-02,5,0", span)
	}
	want := episodeTables(t, whole)

	// Nightly append: first the record up to 31 December 12 UTC, then the
	// grown file.
	grown := filepath.Join(t.TempDir(), filepath.Base(path))
	if err := os.WriteFile(grown, text[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	appended := t.TempDir()
	mustIngest(t, "--store", appended, "--workers", "2", grown)
	// Before the append, 31 December has no evening sounding: the episode
	// ends on 30 December with an open end (it may go on).
	part := queryOne(t, appended, "select strftime(last_day, '%Y-%m-%d'), open_end from episodes "+
		"where criterion = 'persistent_inversion_whiteman2001' and first_day = '2001-12-29'")
	if part != "2001-12-30,true" {
		t.Errorf("before the append: %q, want 2001-12-30,true", part)
	}
	if err := os.WriteFile(grown, text, 0o644); err != nil {
		t.Fatal(err)
	}
	bumpMtime(t, grown)
	mustIngest(t, "--store", appended, "--workers", "2", grown)
	if got := episodeTables(t, appended); got != want {
		t.Errorf("after the nightly append the derived tables differ from a single ingest:\n%s", firstDiff(got, want))
	}

	// Split by year, ingested in reverse order with 3 workers.
	yearDir := t.TempDir()
	y1, y2 := filepath.Join(yearDir, "a-2001.txt"), filepath.Join(yearDir, "b-2002.txt")
	if err := os.WriteFile(y1, text[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(y2, text[cut:], 0o644); err != nil {
		t.Fatal(err)
	}
	split := t.TempDir()
	mustIngest(t, "--store", split, "--workers", "3", y2, y1)
	if got := episodeTables(t, split); got != want {
		t.Errorf("split by year, reversed, 3 workers: derived tables differ:\n%s", firstDiff(got, want))
	}
}

// TestDemoEpisodes checks the invented valley's episodes for plausibility:
// winter (November–March) episodes of every rule, lasting a few days
// (persistent cold-air pools last multiple days, Whiteman et al. 2001 as
// summarised by Lareau et al. 2013; the scenario's pools last 2–7 days),
// and none in June–August, when the scenario has no pools and deep
// afternoon mixed layers.
func TestDemoEpisodes(t *testing.T) {
	dir := t.TempDir()
	path, _, err := synth.WriteFile(dir, synth.DefaultConfig())
	if err != nil {
		t.Fatal(err)
	}
	store := t.TempDir()
	mustIngest(t, "--store", store, path)
	rows := queryOne(t, store, `select criterion, count(*), median(length_days), max(length_days),
		count(*) filter (where month in (6, 7, 8)), count(*) filter (where month in (11, 12, 1, 2, 3))
		from episodes group by 1 order by 1`)
	seen := map[string]bool{}
	for _, line := range strings.Split(rows, "\n") {
		f := strings.Split(line, ",")
		if len(f) != 6 {
			t.Fatalf("row %q", line)
		}
		n, _ := strconv.Atoi(f[1])
		med, _ := strconv.ParseFloat(f[2], 64)
		longest, _ := strconv.Atoi(f[3])
		summer, _ := strconv.Atoi(f[4])
		winter, _ := strconv.Atoi(f[5])
		seen[f[0]] = true
		if summer != 0 {
			t.Errorf("%s: %d episodes in June-August, want none", f[0], summer)
		}
		if winter < n*3/4 || winter < 5 {
			t.Errorf("%s: %d of %d episodes in November-March, want most, and at least 5 in five winters", f[0], winter, n)
		}
		if med < 2 || med > 7 || longest > 21 {
			t.Errorf("%s: median length %g days, longest %d: want a few days, at most three weeks", f[0], med, longest)
		}
	}
	for _, c := range []string{"persistent_inversion_whiteman2001", "pollution_potential_holzworth1972", "heat_deficit_pool"} {
		if !seen[c] {
			t.Errorf("no %s episodes in the demo", c)
		}
	}
}

func bumpMtime(t *testing.T, path string) {
	t.Helper()
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	later := fi.ModTime().Add(3600e9)
	if err := os.Chtimes(path, later, later); err != nil {
		t.Fatal(err)
	}
}

// firstDiff returns the first differing line of two texts.
func firstDiff(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := 0; i < len(al) && i < len(bl); i++ {
		if al[i] != bl[i] {
			return "got:  " + al[i] + "\nwant: " + bl[i]
		}
	}
	return "lengths differ"
}

// TestClimatologyEpisodesGolden records the demo's episode climatology
// (regression record: the values are checked by TestDemoEpisodes and the
// analyze tests).
func TestClimatologyEpisodesGolden(t *testing.T) {
	dir := t.TempDir()
	path, _, err := synth.WriteFile(dir, synth.Config{Seed: 1, StartYear: 2001, Years: 2})
	if err != nil {
		t.Fatal(err)
	}
	store := t.TempDir()
	mustIngest(t, "--store", store, path)
	code, out, errs := runCmd(t, "climatology", "--store", store, "--table", "episodes")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	golden(t, "climatology-episodes.txt", out)
	code, out, errs = runCmd(t, "climatology", "--store", store, "--table", "episodes", "--by", "month", "--format", "csv")
	if code != exitOK || !strings.HasPrefix(out, "station_id,criterion,month,n_years,n_days,n_days_judged,n_episodes") {
		t.Fatalf("by month: exit %d\n%s\n%s", code, out, errs)
	}
}

// TestRuleFlag: a --rule saying in the rule syntax what a built-in rule
// says (its documentation: persistent_inversion_whiteman2001 is the
// morning SBI still on the afternoon/evening sounding, for at least 2
// days with 1 missing day kept inside) gives the built-in's episodes, day
// for day, through the command line; the rule's definition is recorded in
// the episodes table and the climatology; a broken rule is a usage error
// naming its position.
func TestRuleFlag(t *testing.T) {
	dir := t.TempDir()
	path, _, err := synth.WriteFile(dir, synth.Config{Seed: 1, StartYear: 2001, Years: 2})
	if err != nil {
		t.Fatal(err)
	}
	store := t.TempDir()
	mustIngest(t, "--store", store, path)
	cols := "station_id, first_day, last_day, length_days, days_met, days_missing, soundings, open_start, open_end, " +
		"peak_heat_deficit_mj_m2, lowest_afternoon_mixing_height_m, lowest_ventilation_m2s"
	rule := func(name string) []string {
		return []string{"--rule", name + ": sbi_persists", "--rule", "lid_holz: afternoon_mixing_height_m <= 1500 and afternoon_transport_wind_ms <= 4; min_days=2; max_gap=1"}
	}
	run := func(sql string) string {
		code, out, errs := runCmd(t, append(append([]string{"query", "--store", store, "--format", "csv", "--exact"}, rule("mine")...), sql)...)
		if code != exitOK {
			t.Fatalf("%s: exit %d\n%s", sql, code, errs)
		}
		return out
	}
	for builtin, mine := range map[string]string{"persistent_inversion_whiteman2001": "mine", "pollution_potential_holzworth1972": "lid_holz"} {
		want := run("select " + cols + " from episodes where criterion = '" + builtin + "' order by all")
		got := run("select " + cols + " from episodes where criterion = '" + mine + "' order by all")
		if n := strings.Count(want, "\n"); n < 5 {
			t.Fatalf("%s: %d episodes in the invented archive, too few to compare", builtin, n-1)
		}
		if got != want {
			t.Errorf("--rule %s vs %s: episodes differ:\n%s", mine, builtin, firstDiff(got, want))
		}
		wantDays := run("select station_id, local_date, status from episode_days where criterion = '" + builtin + "' order by all")
		gotDays := run("select station_id, local_date, status from episode_days where criterion = '" + mine + "' order by all")
		if gotDays != wantDays {
			t.Errorf("--rule %s vs %s: episode days differ:\n%s", mine, builtin, firstDiff(gotDays, wantDays))
		}
	}
	if got := run("select distinct rule from episodes where criterion in ('mine', 'persistent_inversion_whiteman2001')"); got != "rule\nsbi_persists; min_days=2; max_gap=1\n" {
		t.Errorf("recorded rules %q, want one definition for both", got)
	}
	code, out, errs := runCmd(t, append([]string{"climatology", "--store", store, "--table", "episodes", "--format", "csv"}, rule("mine")...)...)
	if code != exitOK || !strings.Contains(out, ",mine,DJF,") || !strings.Contains(out, "sbi_persists; min_days=2; max_gap=1") {
		t.Errorf("climatology with --rule: exit %d, no row of rule mine with its definition\n%s\n%s", code, out, errs)
	}
	code, out, _ = runCmd(t, append([]string{"climatology", "--store", store, "--table", "episodes"}, rule("mine")...)...)
	if code != exitOK || !strings.Contains(out, "Your rules:\n  mine: sbi_persists; min_days=2; max_gap=1\n") {
		t.Errorf("climatology text with --rule: exit %d, rules not listed under the table\n%s", code, out)
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"query", "--store", store, "--rule", "x: afternoon_mixing_height_m <= and sbi_persists", "select * from episodes"}, "position 33"},
		{[]string{"query", "--store", store, "--rule", "x: sbi_persists", "select 1"}, "name the episodes"},
		{[]string{"query", "--store", store, "--rule", "x: sbi_persists", "--rule", "x: deep_stable_layer", "select * from episodes"}, "two rules named x"},
		{[]string{"climatology", "--store", store, "--rule", "x: sbi_persists"}, "--table episodes"},
	} {
		code, _, errs := runCmd(t, tc.args...)
		if code != exitUsage || !strings.Contains(errs, tc.want) {
			t.Errorf("%v: exit %d, want %d and %q in\n%s", tc.args, code, exitUsage, tc.want, errs)
		}
	}
}
