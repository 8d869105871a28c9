package queries

import (
	"context"
	"database/sql"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

func ptr[T any](v T) *T { return &v }

// sounding builds an invented soundings row (unit scaffolding). status is
// the analysis status, ps the parcel status, mh the parcel mixing height
// (m), sbi nil when not analysable.
func sounding(station, season string, year, hour int32, status, ps string, mh float64,
	sbi *bool, strengthK, topM float64) schema.SoundingRow {
	month := map[string]time.Month{"DJF": 1, "MAM": 4, "JJA": 7, "SON": 10}[season]
	nominal := time.Date(int(year), month, 15, int(hour), 0, 0, 0, time.UTC)
	return schema.SoundingRow{
		StationID: station, StationName: "invented", Year: year, Month: int32(month),
		Season: season, SeasonYear: year, NominalTime: nominal, NominalHour: hour,
		LaunchTime: nominal.Add(-time.Hour), LaunchKnown: true,
		LatitudeDeg: 45, LongitudeDeg: 10, ElevationM: 100,
		AnalysisStatus: status, ConstantSet: "USSA76",
		ParcelMHM: mh, ParcelMHStatus: ps,
		// The consensus mirrors the parcel height in this scaffolding, so
		// the hand-worked statistics hold for both.
		ConsensusMHM: mh, ConsensusStatus: ps,
		SBIPresent: sbi, SBIStrengthK: strengthK, SBITopAGLM: topM,
		SurfacePressureHPa: math.NaN(), SurfaceTemperatureC: math.NaN(), SurfaceDewpointC: math.NaN(),
		SurfaceThetaK: math.NaN(), SurfaceWindSpeedMS: math.NaN(), SBITopPressHPa: math.NaN(),
		MixedBaseAGLM: math.NaN(), MixedTopAGLM: math.NaN(), MixedThetaK: math.NaN(), MixedMixingRatio: math.NaN(),
		TransportWindMS: math.NaN(), VentilationM2S: math.NaN(), VentilationKtFt: math.NaN(),
	}
}

var nan = math.NaN()

// handRows are invented soundings whose statistics are worked out by hand
// in TestClimatologyByHand. Stations XA001 and XB002 are invented.
func handRows() []schema.SoundingRow {
	yes, no := ptr(true), ptr(false)
	return []schema.SoundingRow{
		// XA001 DJF 00 UTC, split over two year partitions.
		sounding("XA001", "DJF", 2015, 0, "ok", "ok", 100, yes, 2.0, 150),
		sounding("XA001", "DJF", 2015, 0, "ok", "ok", 300, no, nan, nan),
		sounding("XA001", "DJF", 2016, 0, "ok", "ok", 200, yes, 5.0, 350),
		sounding("XA001", "DJF", 2016, 0, "ok", "surface", 0, no, nan, nan),
		sounding("XA001", "DJF", 2016, 0, "ok", "undefined", nan, no, nan, nan),
		// Not valid: its (deliberately inconsistent) values must not count.
		sounding("XA001", "DJF", 2016, 0, "insufficient_levels", "ok", 9999, yes, 99, 9999),
		// XA001 DJF 12 UTC: one valid sounding, parcel stable from the ground.
		sounding("XA001", "DJF", 2016, 12, "ok", "surface", 0, yes, 3.0, 40),
		// XA001 MAM 00 UTC: nothing valid.
		sounding("XA001", "MAM", 2016, 0, "insufficient_levels", "undefined", nan, nil, nan, nan),
		// XA001 JJA 12 UTC: five ok heights, no SBI.
		sounding("XA001", "JJA", 2016, 12, "ok", "ok", 1500, no, nan, nan),
		sounding("XA001", "JJA", 2016, 12, "ok", "ok", 900, no, nan, nan),
		sounding("XA001", "JJA", 2016, 12, "ok", "ok", 1200, no, nan, nan),
		sounding("XA001", "JJA", 2016, 12, "ok", "ok", 600, no, nan, nan),
		sounding("XA001", "JJA", 2016, 12, "ok", "ok", 2100, no, nan, nan),
		// XB002 SON 00 UTC: all parcel heights undefined, one SBI.
		sounding("XB002", "SON", 2016, 0, "ok", "undefined", nan, yes, 1.25, 80),
		sounding("XB002", "SON", 2016, 0, "ok", "undefined", nan, no, nan, nan),
		sounding("XB002", "SON", 2016, 0, "ok", "undefined", nan, no, nan, nan),
	}
}

// writeStore writes rows as the soundings table of a new store, plus a tiny
// levels table, a mixing_heights table holding each sounding's parcel
// height, and an inversions table with one elevated inversion of the
// first sounding (every view the climatology reads must exist), and
// returns the store directory.
func writeStore(t testing.TB, dir string, rows []schema.SoundingRow) string {
	t.Helper()
	// A sounding is identified by station and launch time (the pipeline
	// merges duplicates); the scaffolding gives many rows the same nominal
	// time, so each launch is moved by its index in seconds.
	rows = slices.Clone(rows)
	for i := range rows {
		rows[i].LaunchTime = rows[i].LaunchTime.Add(time.Duration(i) * time.Second)
	}
	if len(rows) > 0 {
		// The soundings row names the class of its lowest elevated
		// inversion, the one written to the inversions table below.
		rows[0].EIBaseAGLM, rows[0].EITopAGLM, rows[0].EIStrengthK, rows[0].EIClass = 900, 1100, 2, "subsidence"
	}
	if _, err := schema.WriteTable(dir, schema.TableSoundings, rows); err != nil {
		t.Fatal(err)
	}
	var mh []schema.MixingHeightRow
	for _, r := range rows {
		mh = append(mh, schema.MixingHeightRow{StationID: r.StationID, LaunchTime: r.LaunchTime, Year: r.Year,
			Method: "parcel", HeightAGLM: r.ParcelMHM, Status: r.ParcelMHStatus, LevelSpacingM: nan})
	}
	if _, err := schema.WriteTable(dir, schema.TableMixingHeights, mh); err != nil {
		t.Fatal(err)
	}
	if len(rows) > 0 {
		inv := []schema.InversionRow{{StationID: rows[0].StationID, LaunchTime: rows[0].LaunchTime, Year: rows[0].Year,
			BaseAGLM: 900, TopAGLM: 1100, DepthM: 200, StrengthK: 2, Class: "subsidence",
			BasePressHPa: nan, TopPressHPa: nan, GradientKPerKm: 10, ThetaDeltaK: nan, DPDDeltaK: nan,
			RHDeltaPct: nan, WDeltaGKg: nan, TurningDeg: nan, Levels: 2}}
		if _, err := schema.WriteTable(dir, schema.TableInversions, inv); err != nil {
			t.Fatal(err)
		}
	}
	levels := []schema.LevelRow{{StationID: "XA001", Year: 2016, Kind: "surface", PressureHPa: 1000,
		TemperatureC: 5, DewpointC: nan, LaunchTime: time.Date(2016, 1, 15, 23, 0, 0, 0, time.UTC)}}
	if _, err := schema.WriteTable(dir, schema.TableLevels, levels); err != nil {
		t.Fatal(err)
	}
	return dir
}

func openStore(t testing.TB, dir string) *sql.DB {
	t.Helper()
	db, err := Open(context.Background(), dir)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

func TestOpenViews(t *testing.T) {
	// An apostrophe in the store path exercises the literal quoting.
	dir := filepath.Join(t.TempDir(), "it's a store")
	writeStore(t, dir, handRows())
	// Any other subdirectory holding Parquet becomes a view too, even when
	// it is not partitioned; directories without Parquet, hidden ones and
	// names that are not identifiers are ignored.
	for _, d := range []string{"extras", "empty", ".hidden", "Not-A-Name"} {
		if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	copyTo := func(path string) {
		db, err := sql.Open("duckdb", "")
		if err != nil {
			t.Fatal(err)
		}
		defer db.Close()
		// COPY cannot take a bound file name; quote as Open does.
		lit := "'" + strings.ReplaceAll(path, "'", "''") + "'"
		if _, err := db.Exec(`COPY (SELECT 42 AS answer) TO ` + lit + ` (FORMAT parquet)`); err != nil {
			t.Fatal(err)
		}
	}
	copyTo(filepath.Join(dir, "extras", "x.parquet"))
	copyTo(filepath.Join(dir, "Not-A-Name", "x.parquet"))
	copyTo(filepath.Join(dir, ".hidden", "x.parquet"))

	db := openStore(t, dir)
	tab, err := Query(context.Background(), db,
		`SELECT view_name FROM duckdb_views() WHERE NOT internal ORDER BY view_name`)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, r := range tab.Rows {
		names = append(names, r[0].(string))
	}
	if got := strings.Join(names, ","); got != "extras,inversions,levels,mixing_heights,soundings" {
		t.Errorf("views = %s, want extras,inversions,levels,mixing_heights,soundings", got)
	}

	// Types of the partition columns are pinned, and the redundant path
	// column is dropped.
	tab, err = Query(context.Background(), db,
		`SELECT column_name, data_type FROM information_schema.columns
		 WHERE table_name = ? AND column_name IN ('station_id', 'year', 'station', 'launch_time')
		 ORDER BY column_name`, "soundings")
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, r := range tab.Rows {
		got = append(got, r[0].(string)+" "+r[1].(string))
	}
	want := "launch_time TIMESTAMP WITH TIME ZONE,station_id VARCHAR,year INTEGER"
	if strings.Join(got, ",") != want {
		t.Errorf("columns = %q, want %q", strings.Join(got, ","), want)
	}

	var n, answer int64
	if err := db.QueryRow(`SELECT (SELECT count(*) FROM soundings), (SELECT answer FROM extras)`).Scan(&n, &answer); err != nil {
		t.Fatal(err)
	}
	if n != int64(len(handRows())) || answer != 42 {
		t.Errorf("soundings has %d rows (want %d), extras.answer = %d (want 42)", n, len(handRows()), answer)
	}
}

func TestOpenUTC(t *testing.T) {
	db := openStore(t, writeStore(t, t.TempDir(), handRows()))
	ctx := context.Background()
	// Two connections held at once: the time zone is set on each.
	c1, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer c1.Close()
	c2, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer c2.Close()
	for i, c := range []*sql.Conn{c1, c2} {
		var tz string
		var h int64
		// The level's launch time is 23:00 UTC (see writeStore).
		if err := c.QueryRowContext(ctx, `SELECT current_setting('TimeZone'), hour(launch_time) FROM levels`).Scan(&tz, &h); err != nil {
			t.Fatal(err)
		}
		if tz != "UTC" || h != 23 {
			t.Errorf("connection %d: TimeZone %s, hour %d; want UTC, 23", i, tz, h)
		}
	}
}

func TestOpenErrors(t *testing.T) {
	ctx := context.Background()
	empty := t.TempDir()
	if err := os.Mkdir(filepath.Join(empty, "soundings"), 0o755); err != nil {
		t.Fatal(err)
	}
	globby := filepath.Join(t.TempDir(), "a[1]")
	writeStore(t, globby, handRows()[:1])
	tests := []struct {
		name, dir, want string
	}{
		{"missing", filepath.Join(empty, "absent"), "absent"},
		{"no tables", empty, empty + " has no tables"},
		{"glob characters", globby, "glob characters"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			db, err := Open(ctx, tt.dir)
			if err == nil {
				db.Close()
				t.Fatal("no error")
			}
			if !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q does not contain %q", err, tt.want)
			}
		})
	}
}
