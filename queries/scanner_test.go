package queries

import (
	"context"
	"database/sql"
	"math"
	"strings"
	"testing"

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
	conn, err := duckdb.NewConnector("", nil)
	if err != nil {
		t.Fatal(err)
	}
	db := sql.OpenDB(conn)
	defer db.Close()
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
