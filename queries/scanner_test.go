package queries

import (
	"context"
	"database/sql"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/duckdb/duckdb-go/v2"
)

// TestScannerByName checks that Scanner reads columns by name:
// a SELECT list in another order reads the same values, and a column
// selected but not read, read but not selected, or read twice is an error
// rather than a silent shift of every later value. Scaffolding: the
// expected values are the literals of the query.
// methodHeight is a row read by the test.
type methodHeight struct {
	Method, Note string
	HeightAGLM   float64
}

func TestScannerByName(t *testing.T) {
	db := memoryDB(t)
	read := func(q string, claim func(*Scanner, *methodHeight)) (methodHeight, error) {
		var h methodHeight
		rows, err := db.QueryContext(context.Background(), q)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		if !rows.Next() {
			t.Fatal("no row")
		}
		var sc Scanner
		claim(&sc, &h)
		return h, sc.Scan(rows)
	}
	both := func(sc *Scanner, h *methodHeight) {
		sc.Str("method", &h.Method)
		sc.Float("height_agl_m", &h.HeightAGLM)
	}
	for _, q := range []string{
		"SELECT 'parcel' AS method, 812.5 AS height_agl_m",
		"SELECT 812.5 AS height_agl_m, 'parcel' AS method",
	} {
		h, err := read(q, both)
		if err != nil || h.Method != "parcel" || h.HeightAGLM != 812.5 {
			t.Errorf("%s: got %+v, %v", q, h, err)
		}
	}
	h, err := read("SELECT NULL::DOUBLE AS height_agl_m, 'x' AS method", both)
	if err != nil || !math.IsNaN(h.HeightAGLM) {
		t.Errorf("NULL height: got %v, %v; want NaN", h.HeightAGLM, err)
	}
	for _, c := range []struct {
		q, want string
		claim   func(*Scanner, *methodHeight)
	}{
		{"SELECT 'parcel' AS method, 812.5 AS height_agl_m, 'ok' AS status", "status is selected but not read", both},
		{"SELECT 'parcel' AS method", "height_agl_m is read but not selected", both},
		{"SELECT 'parcel' AS method, 1.0 AS height_agl_m", "method is read twice", func(sc *Scanner, h *methodHeight) {
			both(sc, h)
			sc.Str("method", &h.Note)
		}},
	} {
		if _, err := read(c.q, c.claim); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.q, err, c.want)
		}
	}
}

// TestScannerEachMatchesScan checks that Each, which takes the driver's
// values directly, stores what database/sql's own conversion (Scan)
// stores, for every claim type, NULLs, and column types other than the
// claim's (INTEGER and DECIMAL read as float, INTEGER as int, DATE as
// time), and that it reports the same column mismatches. The reference is
// the standard library's database/sql conversion.
func TestScannerEachMatchesScan(t *testing.T) {
	db := memoryDB(t)
	ctx := context.Background()
	type row struct {
		S       string
		F, I2F  float64
		D2F     float64
		B       bool
		N, N32  int
		T, Date time.Time
	}
	claim := func(sc *Scanner, r *row) {
		sc.Str("s", &r.S)
		sc.Float("f", &r.F)
		sc.Float("i2f", &r.I2F)
		sc.Float("d2f", &r.D2F)
		sc.Bool("b", &r.B)
		sc.Int("n", &r.N)
		sc.Int("n32", &r.N32)
		sc.Time("t", &r.T)
		sc.Time("date", &r.Date)
	}
	const q = `SELECT * FROM (VALUES
		('ZZXSYN00001', 812.5, 3::INTEGER, 1.25::DECIMAL(6,2), true, 7::BIGINT, 9::INTEGER, TIMESTAMP '2016-01-01 11:00:00', DATE '2016-01-01'),
		(NULL, NULL, NULL, NULL, NULL, NULL, NULL, NULL, NULL),
		('ZZXSYN00002', -0.5, -2::INTEGER, 0.10::DECIMAL(6,2), false, -1::BIGINT, 0::INTEGER, TIMESTAMP '2016-07-01 23:00:00', DATE '2016-07-02')
	) v(s, f, i2f, d2f, b, n, n32, t, date) ORDER BY s NULLS LAST`
	var want []row
	{
		var r row
		var sc Scanner
		claim(&sc, &r)
		rows, err := db.QueryContext(ctx, q)
		if err != nil {
			t.Fatal(err)
		}
		for rows.Next() {
			if err := sc.Scan(rows); err != nil {
				t.Fatal(err)
			}
			want = append(want, r)
		}
		rows.Close()
	}
	var got []row
	var r row
	var sc Scanner
	claim(&sc, &r)
	if err := sc.Each(ctx, db, q, func() error { got = append(got, r); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(got) != 3 || len(want) != 3 {
		t.Fatalf("rows: Each %d, Scan %d, want 3", len(got), len(want))
	}
	same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
	for i := range got {
		g, w := got[i], want[i]
		if g.S != w.S || !same(g.F, w.F) || !same(g.I2F, w.I2F) || !same(g.D2F, w.D2F) || g.B != w.B ||
			g.N != w.N || g.N32 != w.N32 || !g.T.Equal(w.T) || !g.Date.Equal(w.Date) {
			t.Errorf("row %d: Each %+v, Scan %+v", i, g, w)
		}
	}
	if got[0].S != "ZZXSYN00001" || got[0].F != 812.5 || got[0].D2F != 1.25 || !math.IsNaN(got[2].F) {
		t.Errorf("values: %+v", got)
	}
	var x row
	var bad Scanner
	claim(&bad, &x)
	if err := bad.Each(ctx, db, "SELECT 'a' AS s", func() error { return nil }); err == nil || !strings.Contains(err.Error(), "is read but not selected") {
		t.Errorf("missing columns: %v", err)
	}
	stop := errors.New("stop")
	n := 0
	if err := sc.Each(ctx, db, q, func() error { n++; return stop }); !errors.Is(err, stop) || n != 1 {
		t.Errorf("fn's error: %v after %d rows, want stop after 1", err, n)
	}
}

// memoryDB opens an empty in-memory DuckDB database, closed when t ends.
func memoryDB(t *testing.T) *sql.DB {
	t.Helper()
	conn, err := duckdb.NewConnector("", nil)
	if err != nil {
		t.Fatal(err)
	}
	db := sql.OpenDB(conn)
	t.Cleanup(func() { db.Close() })
	return db
}
