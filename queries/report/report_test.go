package report

import (
	"bytes"
	"context"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/schema"
)

// TestBuild writes a report of an invented store (unit scaffolding;
// stations XR001 and XR002 do not exist) and checks the coverage counts,
// worked out by hand, and that the page is self-contained.
func TestBuild(t *testing.T) {
	dir := t.TempDir()
	var rows []schema.SoundingRow
	add := func(station string, year int, qc, analysis string, n int) {
		for i := 0; i < n; i++ {
			nominal := time.Date(year, 1, 1+i, 12, 0, 0, 0, time.UTC)
			rows = append(rows, schema.SoundingRow{StationID: station, StationName: "INVENTED", LaunchTime: nominal.Add(-time.Hour),
				NominalTime: nominal, NominalHour: 12, Year: int32(year), Month: 1, Season: "DJF", SeasonYear: int32(year),
				QCStatus: qc, AnalysisStatus: analysis, ConsensusStatus: "ok", ConsensusMHM: float64(100 * (i + 1))})
		}
	}
	add("XR001", 2015, "ok", "ok", 4)
	add("XR001", 2015, "suspect", "ok", 1)
	add("XR001", 2016, "rejected:pressure_order", "rejected", 2)
	add("XR001", 2016, "ok", "no_surface_level", 1)
	add("XR002", 2016, "ok", "ok", 3)
	if _, err := schema.WriteTable(dir, schema.TableSoundings, rows); err != nil {
		t.Fatal(err)
	}
	if _, err := schema.WriteTable(dir, schema.TableMixingHeights, []schema.MixingHeightRow{{StationID: "XR001", LaunchTime: rows[0].LaunchTime, Year: 2015, Method: "parcel", Status: "surface"}}); err != nil {
		t.Fatal(err)
	}
	// The climatology also reads the layer tables; one row each.
	if _, err := schema.WriteTable(dir, schema.TableInversions, []schema.InversionRow{{StationID: "XR001", LaunchTime: rows[0].LaunchTime, Year: 2015, SurfaceBased: true, TopAGLM: 100, StrengthK: 2, Class: "radiation"}}); err != nil {
		t.Fatal(err)
	}
	if _, err := schema.WriteTable(dir, schema.TableMixedLayers, []schema.MixedLayerRow{{StationID: "XR001", LaunchTime: rows[0].LaunchTime, Year: 2015, BaseAGLM: 100, TopAGLM: 600}}); err != nil {
		t.Fatal(err)
	}
	if _, err := schema.WriteTable(dir, schema.TableAfternoon, []schema.AfternoonRow{{StationID: "XR001", Year: 2015,
		LocalDate: time.Date(2015, 1, 1, 0, 0, 0, 0, time.UTC), MorningLaunch: rows[0].LaunchTime, TmaxC: 3, TmaxSource: "later_sounding",
		HeightAGLM: 450, Status: "ok"}}); err != nil {
		t.Fatal(err)
	}
	// Two findings of one check on one sounding of XR001.
	if _, err := schema.WriteTable(dir, schema.TableQCFindings, []schema.QCFindingRow{
		{StationID: "XR001", LaunchTime: rows[5].LaunchTime, Year: 2016, Index: 3, Variable: "pressure", Check: "pressure_order", Severity: "bad"},
		{StationID: "XR001", LaunchTime: rows[5].LaunchTime, Year: 2016, Index: 4, Variable: "pressure", Check: "pressure_order", Severity: "bad"},
	}); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	db, err := queries.Open(ctx, dir)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()

	// With the default minimum (45 valid soundings) both stations are
	// listed only: no sections, no figures.
	thin, err := Build(ctx, db, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(thin.Sections) != 0 || strings.Join(thin.Listed, ",") != "XR001,XR002" || len(thin.Stations.Rows) != 2 {
		t.Errorf("default minimum: %d sections, listed %v", len(thin.Sections), thin.Listed)
	}
	if got := thin.Stations.Rows[0][len(thin.Stations.Rows[0])-1]; !strings.Contains(got, "fewer than 45 valid soundings") {
		t.Errorf("thin station's row says %q", got)
	}

	r, err := Build(ctx, db, Options{MinSoundings: 4, Version: "TEST", StorePath: "STORE", Generated: time.Date(2020, 1, 2, 3, 4, 0, 0, time.UTC)})
	if err != nil {
		t.Fatal(err)
	}
	// station, year, attempted, valid, QC-excluded, not analysable, suspect.
	want := [][]string{
		{"XR001", "2015", "5", "5", "0", "0", "1"},
		{"XR001", "2016", "3", "0", "2", "1", "0"},
		{"XR002", "2016", "3", "3", "0", "0", "0"},
	}
	if got := r.Coverage.Rows; len(got) != len(want) || strings.Join(flat(got), ",") != strings.Join(flat(want), ",") {
		t.Errorf("coverage %v, want %v", got, want)
	}
	// XR001 has 5 valid soundings (>= 4), XR002 3.
	if len(r.Sections) != 1 || r.Sections[0].ID != "XR001" || len(r.Sections[0].Images) != 4 || strings.Join(r.Listed, ",") != "XR002" {
		t.Fatalf("%d sections, listed %v", len(r.Sections), r.Listed)
	}
	if r.Sections[0].Excluded != 2 {
		t.Errorf("XR001: %d soundings excluded by QC, want 2", r.Sections[0].Excluded)
	}
	// The QC table: check in words, severity, 2 findings, 1 sounding of
	// 8 (12.5 %, written 12: rounding half to even), 2 levels.
	if got := strings.Join(flat(r.Sections[0].QC.Rows), ","); got != "pressure not decreasing with height bad 2 1 12 2 level or sounding not used" {
		t.Errorf("QC rows %q", got)
	}
	r.Embed = true
	var buf bytes.Buffer
	if err := r.WriteHTML(&buf); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	if m := regexp.MustCompile(`(?i)(src|href)\s*=\s*"(https?:|//)`).FindString(page); m != "" {
		t.Errorf("page refers outside itself: %q", m)
	}
	if !strings.Contains(page, Caution) || strings.Count(page, `src="data:image/png;base64,`) != 4 {
		t.Errorf("page lacks the caution or the 4 figures")
	}
	for _, want := range []string{"2020-01-02 03:04 UTC", "sondeclim TEST", "STORE (schema version"} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}

	// Both stations drawn (side by side): each section holds its own
	// station's figures.
	both, err := Build(ctx, db, Options{MinSoundings: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, sec := range both.Sections {
		for _, im := range sec.Images {
			if !strings.HasPrefix(im.Name, sec.ID+"-") {
				t.Errorf("section %s holds figure %s", sec.ID, im.Name)
			}
		}
	}
	if len(both.Sections) != 2 || both.Figures() != 8 {
		t.Errorf("%d sections, %d figures, want 2 and 8", len(both.Sections), both.Figures())
	}

	// More sections than FullFigureStations: one figure per station, the
	// details folded, and the page says where the others are made.
	compact, err := Build(ctx, db, Options{MinSoundings: 1, FullFigureStations: 1, StorePath: "STORE"})
	if err != nil {
		t.Fatal(err)
	}
	if compact.Figures() != 2 || !compact.Compact {
		t.Errorf("compact report: %d figures, want 1 per station", compact.Figures())
	}
	for _, sec := range compact.Sections {
		if len(sec.Images) != 1 || !strings.Contains(sec.Images[0].Name, "mixing-height-monthly") {
			t.Errorf("compact section %s: figures %v", sec.ID, sec.Images)
		}
	}
	buf.Reset()
	if err := compact.WriteHTML(&buf); err != nil {
		t.Fatal(err)
	}
	if p := buf.String(); !strings.Contains(p, "sondeclim figures --store STORE --station XR002 --out DIR") || strings.Contains(p, "<details open>") {
		t.Errorf("compact page does not point to the other figures or keeps its details open")
	}

	one, err := Build(ctx, db, Options{Station: "XR002", MinSoundings: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(one.Coverage.Rows) != 1 || len(one.Sections) != 1 || !strings.Contains(one.Title, "XR002 INVENTED") {
		t.Errorf("station report: %d coverage rows, %d sections, title %q", len(one.Coverage.Rows), len(one.Sections), one.Title)
	}
	if _, err := Build(ctx, db, Options{Station: "NOPE"}); err == nil {
		t.Error("unknown station accepted")
	}
	if _, err := Build(ctx, db, Options{MinSoundings: -1}); err == nil {
		t.Error("negative minimum accepted")
	}
}

func flat(rows [][]string) []string {
	var out []string
	for _, r := range rows {
		out = append(out, strings.Join(r, " "))
	}
	return out
}
