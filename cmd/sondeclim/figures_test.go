package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
)

// checkImageFile fails unless path is non-empty and decodes as PNG or
// parses as SVG with root <svg>, by its extension.
func checkImageFile(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Error(err)
		return
	}
	if len(b) == 0 {
		t.Errorf("%s is empty", path)
		return
	}
	switch filepath.Ext(path) {
	case ".png":
		if _, err := png.Decode(bytes.NewReader(b)); err != nil {
			t.Errorf("%s: %v", path, err)
		}
	case ".svg":
		d := xml.NewDecoder(bytes.NewReader(b))
		root := ""
		for {
			tok, err := d.Token()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Errorf("%s: %v", path, err)
				return
			}
			if se, ok := tok.(xml.StartElement); ok && root == "" {
				root = se.Name.Local
			}
		}
		if root != "svg" {
			t.Errorf("%s: root element %q, want svg", path, root)
		}
	default:
		t.Errorf("%s: unexpected file type", path)
	}
}

// TestFiguresReal draws the figures of the real archive-v2 stations
// (../shared/validation, PROVENANCE.md: five stations; Sterling 662,
// Wien 321, Cape Kennedy 14, Göteborg 5 and Barrow 3 soundings).
func TestFiguresReal(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, filepath.Join(v, "archive-v2")); code != exitSkipped {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	out := filepath.Join(t.TempDir(), "figs")
	code, list, errs := runCmd(t, "figures", "--store", store, "--out", out, "--format", "both")
	if code != exitOK {
		t.Fatalf("figures: exit %d\n%s", code, errs)
	}
	files := strings.Fields(list)
	// Only Sterling and Wien reach 15 valid soundings: 2 stations × 4
	// figures × 2 formats; the three thin stations are named on stderr.
	if len(files) != 16 {
		t.Errorf("%d files listed, want 16:\n%s", len(files), list)
	}
	for _, f := range files {
		checkImageFile(t, f)
	}
	for _, want := range []string{"USM00072403-mixing-height-monthly-consensus.png", "USM00072403-sbi-frequency-monthly.svg", "AUM00011035-sbi-strength-seasonal.png",
		"USM00072403-episode-calendar.png"} {
		if !strings.Contains(list, want) {
			t.Errorf("no %s among\n%s", want, list)
		}
	}
	for _, want := range []string{"3 of 5 stations have fewer than 15 valid soundings", "USM00074794 (", "USM00070026 (", "SWM00002527 ("} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errs)
		}
	}
	if strings.Contains(list, "USM00074794") {
		t.Errorf("thin station drawn:\n%s", list)
	}
	// Asked for, the thin stations are drawn too, and the list is the same
	// whatever the number of workers.
	all := filepath.Join(t.TempDir(), "all")
	code, list1, errs := runCmd(t, "figures", "--store", store, "--out", all, "--min-soundings", "0", "--workers", "1")
	if code != exitOK || len(strings.Fields(list1)) != 20 || !strings.Contains(list1, "USM00074794-episode-calendar.png") {
		t.Errorf("--min-soundings 0: exit %d, files\n%s\n%s", code, list1, errs)
	}
	code, list3, _ := runCmd(t, "figures", "--store", store, "--out", all, "--min-soundings", "0", "--workers", "3")
	if code != exitOK || list3 != list1 {
		t.Errorf("--workers 3 lists\n%s\nwant\n%s", list3, list1)
	}
	// A thin station named with --station is drawn.
	code, one, errs := runCmd(t, "figures", "--store", store, "--out", all, "--station", "SWM00002527", "--format", "svg")
	if code != exitOK || len(strings.Fields(one)) != 4 {
		t.Errorf("--station of a thin station: exit %d, files\n%s\n%s", code, one, errs)
	}
}

// TestFiguresBatchEqualsStation checks that the store-wide loading (one
// query per kind of figure for all stations) gives each real station the
// numbers the one-station queries give (a cross-check of two query paths;
// the numbers themselves are checked against outside sources in
// queries/figures).
func TestFiguresBatchEqualsStation(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, filepath.Join(v, "archive-v2")); code != exitSkipped {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	ctx := context.Background()
	db, err := queries.Open(ctx, store)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	stations, err := figures.LoadStations(ctx, db)
	if err != nil || len(stations) != 5 {
		t.Fatalf("stations %v, %v", stations, err)
	}
	for _, method := range []string{figures.Consensus, "bulk_richardson_alt"} {
		batch, err := figures.LoadStationData(ctx, db, stations, method, true)
		if err != nil {
			t.Fatal(err)
		}
		for i, st := range stations {
			one, err := figures.LoadStationData(ctx, db, []figures.Station{st}, method, true)
			if err != nil {
				t.Fatal(err)
			}
			// %v prints NaN alike on both sides, where == would not.
			if a, b := fmt.Sprintf("%+v %+v %+v %+v", *batch[i].Heights, *batch[i].Frequency, *batch[i].Strength, *batch[i].Calendar),
				fmt.Sprintf("%+v %+v %+v %+v", *one[0].Heights, *one[0].Frequency, *one[0].Strength, *one[0].Calendar); a != b {
				t.Errorf("%s %s: store-wide data differ from the station's own:\n%s\n%s", st.ID, method, a, b)
			}
			if st.ID == "USM00072403" && (len(one[0].Heights.Boxes) == 0 || len(one[0].Calendar.Days) == 0) {
				t.Errorf("Sterling has no boxes or no episode days: %+v", one[0])
			}
		}
	}
}

// TestFiguresDemo draws one station of the demo store with one method.
func TestFiguresDemo(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "1", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	store, out := filepath.Join(dir, "store"), filepath.Join(dir, "figs")
	code, list, errs := runCmd(t, "figures", "--store", store, "--out", out, "--station", "ZZXSYN00001", "--method", "heffter", "--format", "svg")
	if code != exitOK {
		t.Fatalf("figures: exit %d\n%s", code, errs)
	}
	files := strings.Fields(list)
	if len(files) != 4 || !strings.HasSuffix(files[0], "ZZXSYN00001-mixing-height-monthly-heffter.svg") ||
		!strings.HasSuffix(files[3], "ZZXSYN00001-episode-calendar.svg") {
		t.Errorf("files %v", files)
	}
	for _, f := range files {
		checkImageFile(t, f)
	}
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"figures", "--store", store}, exitUsage, "--out are required"},
		{[]string{"figures", "--store", store, "--out", out, "--format", "gif"}, exitUsage, "unknown --format"},
		{[]string{"figures", "--store", store, "--out", out, "--station", "NOPE"}, exitNoMatch, "ZZXSYN00001"},
		{[]string{"figures", "--store", store, "--out", out, "--method", "guesswork"}, exitFailure, "bulk_richardson"},
	} {
		code, _, errs := runCmd(t, c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d with %q", c.args, code, errs, c.code, c.want)
		}
	}
}
