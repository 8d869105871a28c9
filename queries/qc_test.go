package queries

import (
	"bytes"
	"context"
	"math"
	"slices"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

// qcSoundingRow is a soundings row carrying the quality-control columns the
// qc summaries expect (qc_status, qc_findings_bad, qc_findings_suspect);
// the store's own SoundingRow gains them when quality control is wired into
// ingestion. Unit scaffolding.
type qcSoundingRow struct {
	StationID  string    `col:"station_id" doc:"station"`
	LaunchTime time.Time `col:"launch_time" doc:"UTC"`
	Year       int32     `col:"year" doc:"year"`
	Month      int32     `col:"month" doc:"month"`
	QCStatus   string    `col:"qc_status" doc:"status"`
	QCBad      int32     `col:"qc_findings_bad" doc:"count"`
	QCSuspect  int32     `col:"qc_findings_suspect" doc:"count"`
}

// finding builds an invented qc_findings row.
func finding(station string, launch time.Time, level int32, variable, check, severity string, value float64) schema.QCFindingRow {
	p := math.NaN()
	if level >= 0 {
		p = 1000 - 10*float64(level)
	}
	return schema.QCFindingRow{StationID: station, LaunchTime: launch, Year: int32(launch.Year()), Index: level,
		PressureHPa: p, Variable: variable, Check: check, Severity: severity, Value: value, Corrected: math.NaN(),
		Message: check + " on " + variable}
}

// qcStore writes an invented store: station XA001 with four soundings in
// January 2016 and two in February 2016, station XB002 with one in January.
func qcStore(t testing.TB) string {
	t.Helper()
	day := func(m time.Month, d int) time.Time { return time.Date(2016, m, d, 23, 0, 0, 0, time.UTC) }
	s := func(station string, launch time.Time, status string) qcSoundingRow {
		month := launch.Add(time.Hour).Month() // nominal time is the next hour
		return qcSoundingRow{StationID: station, LaunchTime: launch, Year: 2016, Month: int32(month), QCStatus: status}
	}
	soundings := []qcSoundingRow{
		s("XA001", day(1, 1), "ok"),
		s("XA001", day(1, 2), "suspect"),
		s("XA001", day(1, 3), "insufficient:shallow"),
		s("XA001", day(1, 4), "suspect"),
		s("XA001", day(1, 31), "rejected:level_count"), // nominal 1 February
		s("XA001", day(2, 5), "ok"),
		s("XB002", day(1, 7), "suspect"),
	}
	findings := []schema.QCFindingRow{
		finding("XA001", day(1, 1), 40, "dewpoint_depression", "cold_humidity", "suspect", 12),
		finding("XA001", day(1, 1), 7, "temperature", "upstream_removed", "bad", nan),
		finding("XA001", day(1, 2), 12, "height", "hydrostatic", "bad", 5765),
		finding("XA001", day(1, 2), 20, "temperature", "superadiabatic", "suspect", -30),
		finding("XA001", day(1, 2), 40, "dewpoint_depression", "cold_humidity", "suspect", 10),
		finding("XA001", day(1, 3), -1, "sounding", "coverage", "suspect", nan),
		finding("XA001", day(1, 4), 9, "temperature", "hydrostatic", "corrected", 38.8),
		finding("XA001", day(1, 31), -1, "sounding", "structure", "bad", nan),
		finding("XA001", day(2, 5), 30, "dewpoint_depression", "cold_humidity", "suspect", 9),
		finding("XB002", day(1, 7), 3, "pressure", "pressure_order", "bad", 925),
		finding("XB002", day(1, 7), 5, "height", "hydrostatic", "suspect", 1500),
		finding("XB002", day(1, 7), 6, "temperature", "temperature_spike", "suspect", 2),
	}
	findings[6].Corrected = -38.8
	dir := t.TempDir()
	if _, err := schema.WriteTable(dir, schema.TableSoundings, soundings); err != nil {
		t.Fatal(err)
	}
	if _, err := schema.WriteTable(dir, schema.TableQCFindings, findings); err != nil {
		t.Fatal(err)
	}
	return dir
}

// checkTable compares a result with expected rows (NaN = NULL; floats to
// 1e-12).
func checkTable(t *testing.T, tab *Table, cols []string, want [][]any) {
	t.Helper()
	if !slices.Equal(tab.Columns, cols) {
		t.Fatalf("columns %q, want %q", tab.Columns, cols)
	}
	if len(tab.Rows) != len(want) {
		t.Fatalf("%d rows, want %d: %v", len(tab.Rows), len(want), tab.Rows)
	}
	for i, w := range want {
		for j, x := range w {
			g := tab.Rows[i][j]
			switch x := x.(type) {
			case float64:
				f, ok := g.(float64)
				if !(ok && math.Abs(f-x) < 1e-12) && !(math.IsNaN(x) && g == nil) {
					t.Errorf("row %d %s = %v, want %v", i, cols[j], g, x)
				}
			default:
				if g != x {
					t.Errorf("row %d %s = %v (%T), want %v (%T)", i, cols[j], g, g, x, x)
				}
			}
		}
	}
}

func TestQCByCheck(t *testing.T) {
	db := openStore(t, qcStore(t))
	tab, err := QCByCheck(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	// Counted by hand from qcStore: XA001 has 6 soundings, XB002 1.
	// Ties in n_findings order by check, then severity.
	checkTable(t, tab, []string{"station_id", "qc_check", "severity", "n_findings", "n_soundings", "sounding_fraction", "n_levels", "routine"},
		[][]any{
			{"XA001", "cold_humidity", "suspect", int64(3), int64(3), 0.5, int64(3), true},
			{"XA001", "coverage", "suspect", int64(1), int64(1), 1.0 / 6, int64(0), false},
			{"XA001", "hydrostatic", "bad", int64(1), int64(1), 1.0 / 6, int64(1), false},
			{"XA001", "hydrostatic", "corrected", int64(1), int64(1), 1.0 / 6, int64(1), false},
			{"XA001", "structure", "bad", int64(1), int64(1), 1.0 / 6, int64(0), false},
			{"XA001", "superadiabatic", "suspect", int64(1), int64(1), 1.0 / 6, int64(1), false},
			{"XA001", "upstream_removed", "bad", int64(1), int64(1), 1.0 / 6, int64(1), true},
			{"XB002", "hydrostatic", "suspect", int64(1), int64(1), 1.0, int64(1), false},
			{"XB002", "pressure_order", "bad", int64(1), int64(1), 1.0, int64(1), false},
			{"XB002", "temperature_spike", "suspect", int64(1), int64(1), 1.0, int64(1), false},
		})
}

func TestQCMonthly(t *testing.T) {
	db := openStore(t, qcStore(t))
	tab, err := QCMonthly(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	// XA001 January (nominal): 1 ok, 2 suspect, 1 insufficient → 1/4
	// excluded; findings without the routine checks: bad 1 (hydrostatic),
	// suspect 2 (superadiabatic, coverage), corrected 1.
	// XA001 February: the 31 January 23 UTC launch (nominal 1 February,
	// rejected) and one ok → 1/2 excluded; bad 1 (structure).
	// XB002 January: 1 suspect; bad 1, suspect 2.
	checkTable(t, tab, []string{"station_id", "year", "month", "n_soundings", "n_ok", "n_suspect", "n_insufficient", "n_rejected",
		"excluded_fraction", "n_findings_bad", "n_findings_suspect", "n_findings_corrected"},
		[][]any{
			{"XA001", int64(2016), int64(1), int64(4), int64(1), int64(2), int64(1), int64(0), 0.25, int64(1), int64(2), int64(1)},
			{"XA001", int64(2016), int64(2), int64(2), int64(1), int64(0), int64(0), int64(1), 0.5, int64(1), int64(0), int64(0)},
			{"XB002", int64(2016), int64(1), int64(1), int64(0), int64(1), int64(0), int64(0), 0.0, int64(1), int64(2), int64(0)},
		})
}

func TestQCWorst(t *testing.T) {
	db := openStore(t, qcStore(t))
	ctx := context.Background()
	tab, err := QCWorst(ctx, db, 2)
	if err != nil {
		t.Fatal(err)
	}
	// Rank by hand: XB002 1/7 (bad 1, suspect 2) before XA001 1/2 (bad 1,
	// suspect 1); XA001 1/31 (bad 1, suspect 0) is third and not listed.
	jan := func(d int) time.Time { return time.Date(2016, 1, d, 23, 0, 0, 0, time.UTC) }
	cols := []string{"rank", "station_id", "launch_time", "qc_status", "n_bad", "n_suspect", "level_index", "pressure_hpa",
		"variable", "qc_check", "severity", "value", "corrected_value", "message"}
	checkTable(t, tab, cols, [][]any{
		{int64(1), "XB002", jan(7), "suspect", int64(1), int64(2), int64(3), 970.0, "pressure", "pressure_order", "bad", 925.0, nan, "pressure_order on pressure"},
		{int64(1), "XB002", jan(7), "suspect", int64(1), int64(2), int64(5), 950.0, "height", "hydrostatic", "suspect", 1500.0, nan, "hydrostatic on height"},
		{int64(1), "XB002", jan(7), "suspect", int64(1), int64(2), int64(6), 940.0, "temperature", "temperature_spike", "suspect", 2.0, nan, "temperature_spike on temperature"},
		{int64(2), "XA001", jan(2), "suspect", int64(1), int64(1), int64(12), 880.0, "height", "hydrostatic", "bad", 5765.0, nan, "hydrostatic on height"},
		{int64(2), "XA001", jan(2), "suspect", int64(1), int64(1), int64(20), 800.0, "temperature", "superadiabatic", "suspect", -30.0, nan, "superadiabatic on temperature"},
	})
	// Asking for more soundings than have findings lists every one with a
	// non-routine finding: 5 (XA001 1/1 and 2/5 have only routine ones).
	all, err := QCWorst(ctx, db, 100)
	if err != nil {
		t.Fatal(err)
	}
	seen := map[any]bool{}
	for _, r := range all.Rows {
		seen[r[0]] = true
	}
	if len(seen) != 5 {
		t.Errorf("%d soundings listed, want 5 (XB002 1/7, XA001 1/2, 1/3, 1/4, 1/31)", len(seen))
	}
	if _, err := QCWorst(ctx, db, 0); err == nil {
		t.Error("n = 0: no error")
	}
}

// TestQCGolden renders the monthly summary in each format.
func TestQCGolden(t *testing.T) {
	db := openStore(t, qcStore(t))
	tab, err := QCMonthly(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range writers {
		var b bytes.Buffer
		if err := w.write(&b, tab); err != nil {
			t.Fatal(err)
		}
		golden(t, "qc_monthly."+w.ext, b.Bytes())
	}
}
