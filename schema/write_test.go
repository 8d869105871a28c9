package schema

import (
	"database/sql"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	_ "github.com/duckdb/duckdb-go/v2"
	"github.com/sondeclim/sondeclim/internal/benchcpu"
)

func ptr[T any](v T) *T { return &v }

// sampleRows returns invented rows (unit scaffolding) over three partitions:
// station 01234 in 2015 and 2016, station ZZ9 in 2016. The leading zero of
// 01234 checks that a numeric-looking station id stays a string.
func sampleRows() []allKinds {
	t0 := time.Date(2016, 1, 2, 12, 0, 0, 0, time.UTC)
	return []allKinds{
		{StationID: "01234", Year: 2016, Label: "b", Flag: true, CountN: 2, Big: 20, ValueK: 271.25,
			When: t0.Add(123456 * time.Microsecond), OptFlag: ptr(false), OptN: ptr(int32(-7)), OptS: ptr("x")},
		{StationID: "01234", Year: 2016, Label: "a", Big: 10, ValueK: math.NaN(), When: t0},
		{StationID: "01234", Year: 2015, Label: "c", Big: 30, ValueK: -1.5,
			When: time.Date(2015, 12, 31, 23, 59, 59, 999999000, time.UTC), OptS: ptr("")},
		{StationID: "ZZ9", Year: 2016, Label: "d|e", Big: 40, ValueK: math.Inf(1)}, // zero time
	}
}

func openDuck(t *testing.T) *sql.DB {
	t.Helper()
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

// listFiles returns every regular file under dir, relative, with '/'.
func listFiles(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		out = append(out, filepath.ToSlash(rel))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(out)
	return out
}

func TestWriteTableLayout(t *testing.T) {
	store := t.TempDir()
	files, err := WriteTable(store, "things", sampleRows())
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		"things/station=01234/year=2015/part-0.parquet",
		"things/station=01234/year=2016/part-0.parquet",
		"things/station=ZZ9/year=2016/part-0.parquet",
	}
	// No temporary files may be left behind.
	if got := listFiles(t, store); !slices.Equal(got, want) {
		t.Errorf("files on disk = %q, want %q", got, want)
	}
	for i := range want {
		want[i] = filepath.Join(store, filepath.FromSlash(want[i]))
	}
	if !slices.Equal(files, want) {
		t.Errorf("returned %q, want %q", files, want)
	}
}

func TestWriteTableDuckDBRoundTrip(t *testing.T) {
	store := t.TempDir()
	rows := sampleRows()
	if _, err := WriteTable(store, "things", rows); err != nil {
		t.Fatal(err)
	}
	db := openDuck(t)
	glob := filepath.Join(store, "things", "**", "*.parquet")
	q := `SELECT station_id, year, station, label, flag, count_n, big, value_k, when_utc,
	        opt_flag, opt_n, opt_s, file_row_number
	      FROM read_parquet(?, hive_partitioning = true, file_row_number = true)
	      ORDER BY big`
	res, err := db.Query(q, glob)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Close()
	// Expected order by big: rows[1], rows[0], rows[2], rows[3]; within
	// the partition 01234/2016 rows[0] was given first, so its file row
	// number is 0 and rows[1]'s is 1.
	order := []int{1, 0, 2, 3}
	fileRow := []int64{1, 0, 0, 0}
	n := 0
	for res.Next() {
		var (
			st, station, label string
			year               int64
			flag               bool
			countN             int32
			big, frn           int64
			value              sql.NullFloat64
			when               sql.NullTime
			optFlag            sql.NullBool
			optN               sql.NullInt32
			optS               sql.NullString
		)
		if err := res.Scan(&st, &year, &station, &label, &flag, &countN, &big, &value, &when,
			&optFlag, &optN, &optS, &frn); err != nil {
			t.Fatal(err)
		}
		if n >= len(order) {
			t.Fatalf("more rows than written")
		}
		w := rows[order[n]]
		if st != w.StationID || station != w.StationID || year != int64(w.Year) || label != w.Label ||
			flag != w.Flag || countN != w.CountN || big != w.Big {
			t.Errorf("row %d: got %s/%s/%d %q %v %d %d, want %+v", n, st, station, year, label, flag, countN, big, w)
		}
		if frn != fileRow[n] {
			t.Errorf("row %d: file_row_number %d, want %d (given order kept)", n, frn, fileRow[n])
		}
		// NaN is written as NULL; +Inf survives as a value.
		if math.IsNaN(w.ValueK) != !value.Valid || (value.Valid && value.Float64 != w.ValueK) {
			t.Errorf("row %d: value_k = %v, want %v", n, value, w.ValueK)
		}
		// Timestamps are exact to the microsecond; the zero time is NULL.
		if w.When.IsZero() != !when.Valid || (when.Valid && !when.Time.Equal(w.When)) {
			t.Errorf("row %d: when_utc = %v, want %v", n, when, w.When)
		}
		if (w.OptFlag == nil) == optFlag.Valid || (w.OptFlag != nil && *w.OptFlag != optFlag.Bool) {
			t.Errorf("row %d: opt_flag = %v, want %v", n, optFlag, w.OptFlag)
		}
		if (w.OptN == nil) == optN.Valid || (w.OptN != nil && *w.OptN != optN.Int32) {
			t.Errorf("row %d: opt_n = %v, want %v", n, optN, w.OptN)
		}
		if (w.OptS == nil) == optS.Valid || (w.OptS != nil && *w.OptS != optS.String) {
			t.Errorf("row %d: opt_s = %v, want %v", n, optS, w.OptS)
		}
		n++
	}
	if err := res.Err(); err != nil {
		t.Fatal(err)
	}
	if n != len(rows) {
		t.Errorf("read %d rows, want %d", n, len(rows))
	}

	// Column types as stored in the files (DuckDB would otherwise detect
	// the key=value directories and take year from the path as BIGINT).
	var stType, yearType, whenType string
	err = db.QueryRow(`SELECT typeof(station_id), typeof(year), typeof(when_utc)
		FROM read_parquet(?, hive_partitioning = false) LIMIT 1`, glob).Scan(&stType, &yearType, &whenType)
	if err != nil {
		t.Fatal(err)
	}
	if stType != "VARCHAR" || yearType != "INTEGER" || whenType != "TIMESTAMP WITH TIME ZONE" {
		t.Errorf("types without partitioning = %s, %s, %s", stType, yearType, whenType)
	}
}

func TestWriteTableMetadata(t *testing.T) {
	store := t.TempDir()
	files, err := WriteTable(store, "things", sampleRows())
	if err != nil {
		t.Fatal(err)
	}
	r, err := file.OpenParquetFile(files[0], false)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	kv := r.MetaData().KeyValueMetadata()
	if v := kv.FindValue(VersionKey); v == nil || *v != strconv.Itoa(Version) {
		t.Errorf("%s = %v, want %d", VersionKey, v, Version)
	}
	if v := kv.FindValue(TableKey); v == nil || *v != "things" {
		t.Errorf("%s = %v, want things", TableKey, v)
	}
	for i := range r.MetaData().NumRowGroups() {
		rg := r.MetaData().RowGroup(i)
		for c := range rg.NumColumns() {
			cc, err := rg.ColumnChunk(c)
			if err != nil {
				t.Fatal(err)
			}
			// A table other than levels is Snappy-compressed (compactTables).
			if got := cc.Compression().String(); got != "SNAPPY" {
				t.Errorf("column %d compression %s, want SNAPPY", c, got)
			}
		}
	}
	fr, err := pqarrow.NewFileReader(r, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	sc, err := fr.Schema()
	if err != nil {
		t.Fatal(err)
	}
	cols, _ := Columns[allKinds]()
	for _, c := range cols {
		fs, ok := sc.FieldsByName(c.Name)
		if !ok {
			t.Errorf("field %s missing", c.Name)
			continue
		}
		md := fs[0].Metadata
		if i := md.FindKey(DocKey); i < 0 || md.Values()[i] != c.Doc {
			t.Errorf("field %s: description = %v, want %q", c.Name, md, c.Doc)
		}
	}
	v, err := ReadVersion(files[0])
	if err != nil || v != Version {
		t.Errorf("ReadVersion = %d, %v; want %d", v, err, Version)
	}
}

func TestReadVersionErrors(t *testing.T) {
	dir := t.TempDir()
	foreign := filepath.Join(dir, "foreign.parquet")
	db := openDuck(t)
	// A Parquet file written by someone else carries no version key. COPY
	// cannot take a bound file name, and dir comes from t.TempDir.
	if _, err := db.Exec(`COPY (SELECT 1 AS a) TO '` + strings.ReplaceAll(foreign, "'", "''") + `' (FORMAT parquet)`); err != nil {
		t.Fatal(err)
	}
	notParquet := filepath.Join(dir, "x.parquet")
	if err := os.WriteFile(notParquet, []byte("not parquet"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, p := range []string{foreign, notParquet, filepath.Join(dir, "absent.parquet")} {
		if v, err := ReadVersion(p); err == nil {
			t.Errorf("ReadVersion(%s) = %d, want an error", filepath.Base(p), v)
		}
	}
}

func TestWriteTableRowGroups(t *testing.T) {
	const n = 200_000 // two row groups: 131 072 + 68 928 rows
	rows := make([]allKinds, n)
	for i := range rows {
		rows[i] = allKinds{StationID: "ZZ1", Year: 2001, Big: int64(n - i), ValueK: float64(i)}
	}
	files, err := WriteTable(t.TempDir(), "things", rows)
	if err != nil {
		t.Fatal(err)
	}
	r, err := file.OpenParquetFile(files[0], false)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if got := r.NumRowGroups(); got != 2 {
		t.Fatalf("row groups = %d, want 2", got)
	}
	if a, b := r.MetaData().RowGroup(0).NumRows(), r.MetaData().RowGroup(1).NumRows(); a != rowGroupRows || b != n-rowGroupRows {
		t.Errorf("row group sizes %d, %d; want %d, %d", a, b, rowGroupRows, n-rowGroupRows)
	}
	// Order is kept across batches and row groups.
	var bad int64
	err = openDuck(t).QueryRow(`SELECT count(*) FILTER (WHERE big <> ? - file_row_number OR value_k <> file_row_number)
		FROM read_parquet(?, file_row_number = true)`, n, files[0]).Scan(&bad)
	if err != nil || bad != 0 {
		t.Errorf("rows out of order: %d (%v)", bad, err)
	}
}

func TestWriteTableReplaces(t *testing.T) {
	store := t.TempDir()
	rows := sampleRows()[:1]
	if _, err := WriteTable(store, "things", rows); err != nil {
		t.Fatal(err)
	}
	rows[0].Label = "second"
	files, err := WriteTable(store, "things", rows)
	if err != nil {
		t.Fatal(err)
	}
	var label string
	var count int
	if err := openDuck(t).QueryRow(`SELECT any_value(label), count(*) FROM read_parquet(?)`, files[0]).Scan(&label, &count); err != nil {
		t.Fatal(err)
	}
	if label != "second" || count != 1 {
		t.Errorf("after rewrite: %q, %d rows; want second, 1", label, count)
	}
}

func TestWriteTableErrors(t *testing.T) {
	ok := sampleRows()[0]
	tests := []struct {
		name  string
		table string
		row   func(r *allKinds)
		want  string
	}{
		{"table name", "Things", func(*allKinds) {}, "not a lower-case identifier"},
		{"empty station", "things", func(r *allKinds) { r.StationID = "" }, "cannot be used as a directory name"},
		{"slash", "things", func(r *allKinds) { r.StationID = "a/b" }, "cannot be used as a directory name"},
		{"dot dot", "things", func(r *allKinds) { r.StationID = ".." }, "cannot be used as a directory name"},
		{"equals", "things", func(r *allKinds) { r.StationID = "a=b" }, "cannot be used as a directory name"},
		{"year zero", "things", func(r *allKinds) { r.Year = 0 }, "outside 1..9999"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			store := t.TempDir()
			r := ok
			tt.row(&r)
			_, err := WriteTable(store, tt.table, []allKinds{r})
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %v, want one containing %q", err, tt.want)
			}
			if got := listFiles(t, store); len(got) != 0 {
				t.Errorf("files written despite the error: %q", got)
			}
		})
	}
	// A row type without partition columns cannot be written.
	type unpartitioned struct {
		A int32 `col:"a"`
	}
	if _, err := WriteTable(t.TempDir(), "things", []unpartitioned{{1}}); err == nil ||
		!strings.Contains(err.Error(), "station_id") {
		t.Errorf("unpartitioned: error %v", err)
	}
	// An unsupported field type is reported before anything is written.
	if _, err := WriteTable(t.TempDir(), "things", []badMap{{}}); err == nil ||
		!strings.Contains(err.Error(), "unsupported Go type") {
		t.Errorf("unsupported: error %v", err)
	}
	// No rows, no files, no error.
	if files, err := WriteTable(t.TempDir(), "things", []allKinds(nil)); err != nil || files != nil {
		t.Errorf("empty: %v, %v", files, err)
	}
}

func BenchmarkWriteTable(b *testing.B) {
	rows := make([]SoundingRow, 10_000)
	for i := range rows {
		rows[i] = SoundingRow{StationID: "ZZ1", Year: int32(2000 + i%10), SBIPresent: ptr(i%2 == 0),
			LaunchTime: time.Unix(int64(i)*43200, 0).UTC(), ParcelMHM: float64(i)}
	}
	store := b.TempDir()
	b.ResetTimer()
	for range b.N {
		if _, err := WriteTable(store, TableSoundings, rows); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkWriteLevels writes one station-year of levels (73,000 rows:
// 730 soundings of 100 levels, invented values) as one file, without
// sync, as the ingest pipeline does.
func BenchmarkWriteLevels(b *testing.B) {
	rows := make([]LevelRow, 73000)
	t0 := time.Date(2001, 1, 1, 0, 0, 0, 0, time.UTC)
	kinds := []string{"surface", "standard", "significant", "wind_only"}
	for i := range rows {
		rows[i] = LevelRow{StationID: "XQ001", LaunchTime: t0.Add(time.Duration(i/100) * 12 * time.Hour), Year: 2001,
			Index: int32(i % 100), Kind: kinds[i%4], PressureHPa: 1000 - float64(i%100)*9, HeightM: float64(i%100) * 100,
			TemperatureC: 15 - float64(i%100)*0.6, DewpointC: 10 - float64(i%100)*0.7, ThetaK: 288 + float64(i%100)*0.4,
			TemperatureStatus: "reported", HeightStatus: "derived", HumidityStatus: "reported",
			PressureQC: "good", HeightQC: "good", TemperatureQC: "good", HumidityQC: "suspect", WindQC: "missing",
			// Most formats give no per-level position: all-null columns.
			LatDispDeg: math.NaN(), LonDispDeg: math.NaN()}
	}
	path := filepath.Join(b.TempDir(), "levels", "part.parquet")
	cpu := benchcpu.Used()
	for b.Loop() {
		if err := WriteFile(path, TableLevels, rows, false); err != nil {
			b.Fatal(err)
		}
	}
	benchcpu.PerOp(b, cpu)
	b.ReportMetric(float64(len(rows)*b.N)/b.Elapsed().Seconds(), "rows/s")
}

type flagged struct {
	StationID string `col:"station_id" doc:"id"`
	Year      int32  `col:"year" doc:"year"`
	Flag      string `col:"flag" enum:"good,bad" doc:"a flag"`
}

// TestEnumColumns: a string field with an enum tag is written as a
// dictionary column that DuckDB reads back as text, "" as null, and a value
// outside the list is an error, not a panic or a silent null. The rows are
// invented (unit scaffolding).
func TestEnumColumns(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "t", "station=X1", "year=2001", "part.parquet")
	rows := []flagged{{"X1", 2001, "good"}, {"X1", 2001, ""}, {"X1", 2001, "bad"}, {"X1", 2001, "good"}}
	if err := WriteFile(path, "t", rows, false); err != nil {
		t.Fatal(err)
	}
	db := openDuck(t)
	var got []string
	r, err := db.Query(`select coalesce(flag, 'NULL') from read_parquet('` + path + `')`)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	for r.Next() {
		var s string
		r.Scan(&s)
		got = append(got, s)
	}
	if strings.Join(got, ",") != "good,NULL,bad,good" {
		t.Errorf("read back %v", got)
	}
	bad := []flagged{{"X1", 2001, "good"}, {"X1", 2001, "ugly"}}
	if err := WriteFile(path, "t", bad, false); err == nil || !strings.Contains(err.Error(), `"ugly"`) {
		t.Errorf("a value outside the enum: error %v", err)
	}
}

// TestWriteRowsEqualsWriteFile: rows collected in a Rows (block by block,
// written by the store's own writer) give a Parquet file holding what the
// same rows written from a slice (by arrow-go's general writer) hold, across block boundaries, nulls and enum values; a value outside
// an enum list is reported when writing. Invented rows (unit scaffolding).
func TestWriteRowsEqualsWriteFile(t *testing.T) {
	kinds := []string{"surface", "standard", "significant", "wind_only", ""}
	t0 := time.Date(2003, 7, 1, 12, 0, 0, 0, time.UTC)
	rows := make([]LevelRow, 1000) // several blocks of fillBlock rows and a partial one
	for i := range rows {
		p := 1000 - float64(i%90)*10
		if i%7 == 0 {
			p = math.NaN()
		}
		rows[i] = LevelRow{StationID: fmt.Sprintf("ZQ%03d", i/300), LaunchTime: t0.Add(time.Duration(i/90) * 12 * time.Hour),
			Year: 2003, Index: int32(i % 90), Kind: kinds[i%5], SourceLine: int64(i + 1), PressureHPa: p,
			HeightM: float64(i) * 31.5, ThetaK: 290 + float64(i%90)*0.37, TemperatureStatus: "reported", WindQC: "good"}
	}
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.parquet"), filepath.Join(dir, "b.parquet")
	if err := WriteFile(a, TableLevels, rows, false); err != nil {
		t.Fatal(err)
	}
	r, err := NewRows[LevelRow](10)
	if err != nil {
		t.Fatal(err)
	}
	for _, row := range rows {
		r.Append(row)
	}
	if r.Len() != len(rows) {
		t.Fatalf("Len %d, want %d", r.Len(), len(rows))
	}
	if err := WriteRows(b, TableLevels, r, false); err != nil {
		t.Fatal(err)
	}
	sameContent(t, a, b)
	// The levels table is the zstd-compressed one (compactTables).
	pf, err := file.OpenParquetFile(a, false)
	if err != nil {
		t.Fatal(err)
	}
	cc, err := pf.MetaData().RowGroup(0).ColumnChunk(0)
	if err != nil {
		t.Fatal(err)
	}
	if got := cc.Compression().String(); got != "ZSTD" {
		t.Errorf("levels compression %s, want ZSTD", got)
	}
	// Measurements of many values are byte-stream split, those of few
	// (90 pressures) dictionary-encoded (DuckDB reads them back in the
	// store tests of cmd/sondeclim).
	for col, want := range map[string]string{"height_m": "BYTE_STREAM_SPLIT", "pressure_hpa": "RLE_DICTIONARY"} {
		pc, err := pf.MetaData().RowGroup(0).ColumnChunk(pf.MetaData().Schema.ColumnIndexByName(col))
		if err != nil {
			t.Fatal(err)
		}
		if got := fmt.Sprint(pc.Encodings()); !strings.Contains(got, want) {
			t.Errorf("%s encodings %s, want %s", col, got, want)
		}
	}
	pf.Close()

	bad, _ := NewRows[LevelRow](0)
	bad.Append(LevelRow{StationID: "ZQ1", Year: 2003, Kind: "no such kind"})
	if err := WriteRows(filepath.Join(dir, "c.parquet"), TableLevels, bad, false); err == nil || !strings.Contains(err.Error(), "no such kind") {
		t.Errorf("enum value outside the list: got %v", err)
	}
}
