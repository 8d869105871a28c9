package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/schema/store"
)

// The afternoon pairing across the new year (engine/context.go): a local
// day whose morning sounding is in one UTC year and whose afternoon
// sounding is in the next is paired although the two are stored in
// different station-year partitions.
//
// The soundings are invented (a plain winter profile with a surface
// inversion), written in the archive-v2 layout of
// ../shared/validation/archive-v2/igra2-data-format.txt.

// nyLevel is one level of an invented sounding: pressure hPa, temperature
// degC, geopotential height m (filled by nySounding when 0).
type nyLevel struct{ pHPa, tC, zM float64 }

func lv(pHPa, tC float64) nyLevel { return nyLevel{pHPa: pHPa, tC: tC} }

// The morning profile: a surface inversion from 1000 to 950 hPa, then a
// plain winter troposphere (invented).
var nyMorning = []nyLevel{lv(1000, -5), lv(990, -3), lv(975, -1), lv(950, 1), lv(925, 0), lv(900, -1.5), lv(850, -4.5),
	lv(700, -13), lv(500, -30), lv(400, -40), lv(300, -52), lv(250, -56), lv(200, -57), lv(150, -58), lv(100, -60)}

// The afternoon profile: 4 degC at the surface, mixed to 925 hPa.
var nyAfternoon = []nyLevel{lv(1000, 4), lv(975, 2), lv(950, -0.2), lv(925, -2.4), lv(900, -3), lv(850, -5),
	lv(700, -13), lv(500, -30), lv(400, -40), lv(300, -52), lv(250, -56), lv(200, -57), lv(150, -58), lv(100, -60)}

// nyHeights fills the heights of a profile hypsometrically from the
// surface (elevation zSfc m): Δz = (R_d/g) T̄ ln(p1/p2), with T̄ the mean
// of the layer's end temperatures, R_d = 287.05 J/(kg K) and g = 9.80665
// m/s² (U.S. Standard Atmosphere 1976), rounded to whole metres as the
// archive reports them.
func nyHeights(levels []nyLevel, zSfc float64) []nyLevel {
	out := make([]nyLevel, len(levels))
	copy(out, levels)
	z := zSfc
	for i := range out {
		if i > 0 {
			tm := (out[i-1].tC+out[i].tC)/2 + 273.15
			z += 287.05 / 9.80665 * tm * math.Log(out[i-1].pHPa/out[i].pHPa)
		}
		out[i].zM = math.Round(z)
	}
	return out
}

// nySounding writes one sounding in the archive-v2 layout (header and
// level columns of igra2-data-format.txt; release time 9999: not given).
// The first level is the surface; dewpoint depression 5 K, wind 270° at
// 5 m/s throughout.
func nySounding(id string, t time.Time, latDeg, lonDeg float64, levels []nyLevel) string {
	var b strings.Builder
	fmt.Fprintf(&b, "#%s %04d %02d %02d %02d 9999 %4d %-8s %-8s %7d %8d\n", id, t.Year(), int(t.Month()), t.Day(), t.Hour(),
		len(levels), "invented", "", int(math.Round(latDeg*1e4)), int(math.Round(lonDeg*1e4)))
	for i, l := range nyHeights(levels, 100) {
		kind := "20"
		switch {
		case i == 0:
			kind = "21"
		case strings.Contains(" 1000 925 850 700 500 400 300 250 200 150 100 ", " "+strconv.Itoa(int(l.pHPa))+" "):
			kind = "10"
		}
		fmt.Fprintf(&b, "%s -9999 %6d %5d %5d -9999 %5d %5d %5d\n", kind, int(l.pHPa*100), int(l.zM),
			int(math.Round(l.tC*10)), 50, 270, 50)
	}
	return b.String()
}

// The two invented stations: one west of Greenwich (77.5° W, Sterling's
// longitude: local mean solar time is UTC − 5 h 10 min) and one east
// (150° E: UTC + 10 h).
const (
	nyWest = "ZZXNYW00001"
	nyEast = "ZZXNYE00001"
)

func utc(y int, m time.Month, d, h int) time.Time { return time.Date(y, m, d, h, 0, 0, 0, time.UTC) }

// nyFiles writes the 2020 and 2021 files of both stations. West: the
// morning of 31 December 2020 is launched at 12 UTC (06:50 local), its
// evening at 00 UTC on 1 January 2021 (18:50 local on 31 December). East:
// the morning of 1 January 2021 (local) is launched at 20 UTC on 31
// December 2020 (06:00 local), its afternoon at 06 UTC on 1 January 2021
// (16:00 local). Each year also holds a day paired inside it.
func nyFiles(t *testing.T, dir string) (y2020, y2021 string) {
	t.Helper()
	var a, b strings.Builder
	a.WriteString(nySounding(nyWest, utc(2020, 12, 30, 12), 39, -77.5, nyMorning))
	a.WriteString(nySounding(nyWest, utc(2020, 12, 31, 0), 39, -77.5, nyAfternoon))
	a.WriteString(nySounding(nyWest, utc(2020, 12, 31, 12), 39, -77.5, nyMorning))
	a.WriteString(nySounding(nyEast, utc(2020, 12, 30, 20), -33, 150, nyMorning))
	a.WriteString(nySounding(nyEast, utc(2020, 12, 31, 6), -33, 150, nyAfternoon))
	a.WriteString(nySounding(nyEast, utc(2020, 12, 31, 20), -33, 150, nyMorning))
	b.WriteString(nySounding(nyWest, utc(2021, 1, 1, 0), 39, -77.5, nyAfternoon))
	b.WriteString(nySounding(nyWest, utc(2021, 1, 1, 12), 39, -77.5, nyMorning))
	b.WriteString(nySounding(nyWest, utc(2021, 1, 2, 0), 39, -77.5, nyAfternoon))
	b.WriteString(nySounding(nyEast, utc(2021, 1, 1, 6), -33, 150, nyAfternoon))
	y2020, y2021 = filepath.Join(dir, "ny-2020.txt"), filepath.Join(dir, "ny-2021.txt")
	writeFile(t, y2020, a.String())
	writeFile(t, y2021, b.String())
	return y2020, y2021
}

// holzworthByHand is the afternoon mixing height of Holzworth (1964, Mon.
// Wea. Rev. 92, 235–242; 1967, J. Appl. Meteor. 6, 1039–1044): the dry
// adiabat through the day's maximum surface temperature, followed upward
// until it meets the morning temperature profile. On a dry adiabat θ is
// constant, θ = T (1000 hPa / p)^κ with κ = R_d/c_p = 0.2857 (from
// memory; Wallace & Hobbs 2006 give 0.286), so the meeting point is where
// the morning θ, taken linear in height between the reported levels,
// reaches θ0 = Tmax (1000 hPa / p_sfc)^κ. Returned in m above the
// surface level.
func holzworthByHand(morning []nyLevel, tmaxC float64) float64 {
	const kappa = 0.2857
	lv := nyHeights(morning, 100)
	theta := func(l nyLevel) float64 { return (l.tC + 273.15) * math.Pow(1000/l.pHPa, kappa) }
	th0 := (tmaxC + 273.15) * math.Pow(1000/lv[0].pHPa, kappa)
	for i := 1; i < len(lv); i++ {
		if a, b := theta(lv[i-1]), theta(lv[i]); b >= th0 && a < th0 {
			return lv[i-1].zM + (th0-a)/(b-a)*(lv[i].zM-lv[i-1].zM) - lv[0].zM
		}
	}
	return math.NaN()
}

// nyRows returns the afternoon_mixing rows of a store as CSV lines
// "station,year,local_date,morning_launch,tmax_c,source,height_m,status,note".
func nyRows(t *testing.T, store string) string {
	t.Helper()
	code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", "--exact",
		"select station_id, year, strftime(local_date, '%Y-%m-%d') as d, strftime(morning_launch_time, '%Y-%m-%d %H') as m, "+
			"tmax_c, tmax_source, round(height_agl_m, 2) as h, status, note from afternoon_mixing order by all")
	if code != exitOK {
		t.Fatalf("query: exit %d\n%s", code, errs)
	}
	return out
}

// nyRow returns the fields of the row of station on local date d.
func nyRow(t *testing.T, rows, station, d string) []string {
	t.Helper()
	for _, line := range strings.Split(rows, "\n") {
		f := strings.Split(line, ",")
		if len(f) == 9 && f[0] == station && f[2] == d {
			return f
		}
	}
	t.Fatalf("no afternoon row of %s on %s in\n%s", station, d, rows)
	return nil
}

// nyHashes hashes every table of a store, row by row in a fixed order.
func nyHashes(t *testing.T, store string) string {
	t.Helper()
	docs, err := schema.Tables()
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, d := range docs {
		code, out, errs := runCmd(t, "query", "--store", store, "--format", "csv", "--exact", "select * from "+d.Name+" order by all")
		if code != exitOK {
			t.Fatalf("table %s: exit %d\n%s", d.Name, code, errs)
		}
		sum := sha256.Sum256([]byte(out))
		fmt.Fprintf(&b, "%s %d %s\n", d.Name, strings.Count(out, "\n")-1, hex.EncodeToString(sum[:]))
	}
	return b.String()
}

// committedPartition returns the manifest's content hash and
// afternoon_mixing file of a store's station-year.
func committedPartition(t *testing.T, dir, station string, year int) string {
	t.Helper()
	m, err := store.ReadManifest(dir, store.Shard{})
	if err != nil || m == nil {
		t.Fatalf("manifest: %v", err)
	}
	p := m.Partitions[store.PartitionKey(station, year)]
	if p == nil {
		t.Fatalf("no partition %s %d", station, year)
	}
	return p.ContentHash + " " + p.Files[schema.TableAfternoon]
}

// TestPairingAcrossNewYear: the Holzworth height of the last local day of
// 2020 at the western station (morning in the 2020 partition, evening
// launch at 00 UTC in 2021) and of the first local day of 2021 at the
// eastern one (morning launched on 31 December UTC, afternoon on 1
// January) equal the construction by hand, stored once each, in the
// partition of the morning sounding; the same rows come out of a store
// built from 2020 alone and then 2021 (incremental), of one built from
// both at once, with one worker or two, and of the in-memory analysis.
func TestPairingAcrossNewYear(t *testing.T) {
	dir := t.TempDir()
	y2020, y2021 := nyFiles(t, dir)
	want := holzworthByHand(nyMorning, 4)
	if !(want > 250 && want < 400) { // between 975 and 950 hPa by construction
		t.Fatalf("hand construction gives %.1f m, not inside the surface inversion", want)
	}
	check := func(what, rows, station, day, year, morning string) {
		t.Helper()
		f := nyRow(t, rows, station, day)
		h, _ := strconv.ParseFloat(f[6], 64)
		if f[1] != year || f[3] != morning || f[4] != "4" || f[5] != "later_sounding" || f[7] != "ok" || math.Abs(h-want) > 0.5 {
			t.Errorf("%s: row of %s on %s = %v, want year %s, morning %s, tmax 4 degC from the later sounding, ok, %.1f m (Holzworth by hand)",
				what, station, day, f, year, morning, want)
		}
	}

	// One store from both years at once, with one worker and with two
	// (inputs reversed): the same tables.
	both := filepath.Join(dir, "both")
	mustIngest(t, "--store", both, "--workers", "1", y2020, y2021)
	rows := nyRows(t, both)
	check("both at once", rows, nyWest, "2020-12-31", "2020", "2020-12-31 12")
	check("both at once", rows, nyEast, "2021-01-01", "2020", "2020-12-31 20")
	check("inside 2020", rows, nyWest, "2020-12-30", "2020", "2020-12-30 12")
	check("inside 2021", rows, nyWest, "2021-01-01", "2021", "2021-01-01 12")
	if n := strings.Count(rows, "\n") - 1; n != 5 {
		t.Errorf("%d afternoon rows, want 5 (one per morning sounding: 3 west, 2 east)\n%s", n, rows)
	}
	two := filepath.Join(dir, "two")
	mustIngest(t, "--store", two, "--workers", "2", y2021, y2020)
	if a, b := nyHashes(t, both), nyHashes(t, two); a != b {
		t.Errorf("tables differ between --workers 1 and --workers 2 with the inputs reversed:\n%s\n%s", a, b)
	}

	// The in-memory analysis (engine.Analyse, behind `profile FILE`)
	// pairs the same way.
	rs, _, err := engine.Analyse(context.Background(), []string{y2020, y2021}, engine.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, a := range rs.Afternoon {
		if a.StationID == nyWest && a.LocalDate.Equal(utc(2020, 12, 31, 0)) {
			found = a.Status == "ok" && math.Abs(a.HeightAGLM-want) < 0.5
		}
	}
	if !found || len(rs.Afternoon) != 5 {
		t.Errorf("Analyse: %d afternoon rows, 31 December west paired: %v", len(rs.Afternoon), found)
	}

	// Incremental: 2020 alone leaves the last local day without its
	// evening sounding; adding 2021 in a second run pairs it, and the
	// store equals the one built at once.
	inc := filepath.Join(dir, "inc")
	mustIngest(t, "--store", inc, y2020)
	if f := nyRow(t, nyRows(t, inc), nyWest, "2020-12-31"); f[7] != "undefined" || f[8] != "no_tmax" {
		t.Errorf("2020 alone: row of 31 December = %v, want undefined, no_tmax", f)
	}
	mustIngest(t, "--store", inc, y2020, y2021)
	check("incremental", nyRows(t, inc), nyWest, "2020-12-31", "2020", "2020-12-31 12")
	if a, b := nyHashes(t, both), nyHashes(t, inc); a != b {
		t.Errorf("tables differ between the store built at once and the one built year by year:\n%s\n%s", a, b)
	}

	// A later sounding of 2021, outside the head of the year, leaves 2020
	// as it is (nightly ingestion must not rebuild the previous year); a
	// corrected 1 January evening launch (inside the head of 2021, 2 K
	// warmer at the surface) rebuilds it.
	before := committedPartition(t, inc, nyWest, 2020)
	june := filepath.Join(dir, "ny-2021-06.txt")
	writeFile(t, june, nySounding(nyWest, utc(2021, 6, 1, 12), 39, -77.5, nyMorning))
	_, sum, _, _ := ingestSumInto(t, inc, y2020, y2021, june)
	if after := committedPartition(t, inc, nyWest, 2020); after != before || sum.PartitionsWritten != 1 {
		t.Errorf("a June sounding of 2021: 2020 files %v → %v, %d partitions written (want 2020 untouched, 1 written)", before, after, sum.PartitionsWritten)
	}
	text, err := os.ReadFile(y2021)
	if err != nil {
		t.Fatal(err)
	}
	warmer := append([]nyLevel{lv(1000, 6)}, nyAfternoon[1:]...)
	old, corrected := nySounding(nyWest, utc(2021, 1, 1, 0), 39, -77.5, nyAfternoon), nySounding(nyWest, utc(2021, 1, 1, 0), 39, -77.5, warmer)
	if !strings.HasPrefix(string(text), old) {
		t.Fatal("the 2021 file does not start with the 1 January 00 UTC launch")
	}
	writeFile(t, y2021, corrected+strings.TrimPrefix(string(text), old))
	bumpMtime(t, y2021)
	mustIngest(t, "--store", inc, y2020, y2021, june)
	f := nyRow(t, nyRows(t, inc), nyWest, "2020-12-31")
	h, _ := strconv.ParseFloat(f[6], 64)
	if w := holzworthByHand(nyMorning, 6); f[4] != "6" || math.Abs(h-w) > 0.5 {
		t.Errorf("after a warmer copy of the 1 January 00 UTC launch: row %v, want tmax 6 degC, %.1f m (by hand)", f, w)
	}

}

// ingestSumInto runs ingest into store and returns the exit code, the
// summary, the store and stderr.
func ingestSumInto(t *testing.T, store string, args ...string) (int, engine.Summary, string, string) {
	t.Helper()
	sum := filepath.Join(t.TempDir(), "sum.json")
	code, _, errs := runCmd(t, append([]string{"ingest", "--quiet", "--summary-json", sum, "--store", store}, args...)...)
	if code != exitOK {
		t.Fatalf("ingest %v: exit %d\n%s", args, code, errs)
	}
	return code, readSummary(t, sum), store, errs
}
