package queries

import (
	"bufio"
	"context"
	"database/sql"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"
	"unicode"

	"github.com/sondeclim/sondeclim/schema"
)

// Table is the result of a query: column names and rows of values. A value
// is nil for SQL NULL, or one of string, bool, int64, float64, time.Time,
// []byte, or another type the driver returns for less common SQL types
// (DECIMAL and smaller integers are converted to float64 and int64).
type Table struct {
	Columns []string
	Rows    [][]any
	// Exact makes the writers give floats in full precision (the shortest
	// form that reads back to the same float64) instead of rounding them
	// to the precision of the column's unit.
	Exact bool
}

// Without returns t without the named columns.
func (t *Table) Without(names ...string) *Table {
	var keep []string
	for _, c := range t.Columns {
		if !slices.Contains(names, c) {
			keep = append(keep, c)
		}
	}
	out := selectColumns(t, keep)
	out.Exact = t.Exact
	return out
}

// Query runs query on db with bound args and reads the whole result into a
// Table.
func Query(ctx context.Context, db *sql.DB, query string, args ...any) (*Table, error) {
	return queryOn(ctx, db, query, args...)
}

// queryer is what Query needs: a *sql.DB or a *sql.Conn (for statements
// that share a connection's temporary tables).
type queryer interface {
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
}

func queryOn(ctx context.Context, db queryer, query string, args ...any) (*Table, error) {
	rows, err := db.QueryContext(ctx, query, args...)
	if err != nil {
		return nil, fmt.Errorf("%w", err)
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		return nil, fmt.Errorf("%w", err)
	}
	t := &Table{Columns: cols}
	for rows.Next() {
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			return nil, fmt.Errorf("row %d: %w", len(t.Rows)+1, err)
		}
		for i, v := range vals {
			vals[i] = normalize(v)
		}
		t.Rows = append(t.Rows, vals)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("%w", err)
	}
	return t, nil
}

// float64er is satisfied by the driver's DECIMAL type.
type float64er interface{ Float64() float64 }

// normalize maps the driver's value types onto the few Table documents.
func normalize(v any) any {
	switch x := v.(type) {
	case int8:
		return int64(x)
	case int16:
		return int64(x)
	case int32:
		return int64(x)
	case uint8:
		return int64(x)
	case uint16:
		return int64(x)
	case uint32:
		return int64(x)
	case float32:
		return float64(x)
	case float64er:
		return x.Float64()
	case time.Time:
		return x.UTC()
	}
	return v
}

// precision gives, per column, the decimals its floats are written with
// (schema.OutputDecimals), or -1 where the name carries no known unit.
func precision(t *Table) []int {
	p := make([]int, len(t.Columns))
	for i, c := range t.Columns {
		p[i] = -1
		if t.Exact {
			p[i] = exact
		} else if d, ok := schema.OutputDecimals(c); ok {
			p[i] = d
		}
	}
	return p
}

// exact is the precision of Table.Exact.
const exact = -2

// roundedFloat writes x with d decimals (d ≥ 0), with six significant
// digits (d = −1), or exactly (d = exact); trim drops trailing zeros (for CSV and JSON; a table for
// people keeps them, so columns align on the decimal point). Negative zero
// is written as 0. NaN and ±Inf come out as strconv writes them.
func roundedFloat(x float64, d int, trim bool) string {
	var s string
	if d == exact {
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	if d >= 0 {
		// Halves round away from zero (1.25 K → 1.3 K), as people round.
		if p := math.Pow10(d); math.Abs(x*p) < 1e15 {
			x = math.Round(x*p) / p
		}
		s = strconv.FormatFloat(x, 'f', d, 64)
	} else {
		s = strconv.FormatFloat(x, 'g', 6, 64)
		if strings.ContainsAny(s, "e") {
			// Keep the exponent form for very large or small values.
			return s
		}
		trim = true
	}
	if trim && strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// formatText renders v for people: NULL as "-", control characters in text
// as spaces, floats at the column's precision d (roundedFloat), times in
// RFC 3339 UTC.
func formatText(v any, d int) string {
	switch x := v.(type) {
	case nil:
		return "-"
	case float64:
		return roundedFloat(x, d, false)
	case time.Time:
		return x.UTC().Format(time.RFC3339Nano)
	case []byte:
		return fmt.Sprintf("%x", x)
	case string:
		return oneLine(x)
	}
	return oneLine(fmt.Sprint(v))
}

// oneLine replaces tabs, line breaks and other control characters by
// spaces, so a cell cannot break the column alignment.
func oneLine(s string) string {
	return strings.Map(func(r rune) rune {
		if unicode.IsControl(r) {
			return ' '
		}
		return r
	}, s)
}

// formatCSV renders v for programs: NULL as empty, floats at the column's
// precision d without trailing zeros (roundedFloat), times in RFC 3339 UTC.
func formatCSV(v any, d int) string {
	switch x := v.(type) {
	case nil:
		return ""
	case float64:
		return roundedFloat(x, d, true)
	case time.Time:
		return x.UTC().Format(time.RFC3339Nano)
	case []byte:
		return fmt.Sprintf("%x", x)
	}
	return fmt.Sprint(v)
}

// WriteText writes t as a table for people, columns aligned with
// text/tabwriter: a header line, then one line per row. NULL is shown as
// "-", floats at the precision of the column's unit (schema.OutputDecimals).
func WriteText(w io.Writer, t *Table) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, strings.Join(t.Columns, "\t"))
	cells := make([]string, len(t.Columns))
	prec := precision(t)
	for _, r := range t.Rows {
		for i, v := range r {
			cells[i] = formatText(v, prec[i])
		}
		fmt.Fprintln(tw, strings.Join(cells, "\t"))
	}
	return tw.Flush()
}

// WriteCSV writes t as CSV (RFC 4180) with a header record. NULL is an empty
// field; floats are written at the precision of the column's unit
// (schema.OutputDecimals; six significant digits without a known unit).
func WriteCSV(w io.Writer, t *Table) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(t.Columns); err != nil {
		return err
	}
	rec := make([]string, len(t.Columns))
	prec := precision(t)
	for _, r := range t.Rows {
		for i, v := range r {
			rec[i] = formatCSV(v, prec[i])
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteJSON writes t as a JSON array with one object per row, keys in
// column order, one object per line. NULL, NaN and ±Inf are written as
// null (JSON has no NaN); other floats are written at the precision of the
// column's unit, as in WriteCSV.
func WriteJSON(w io.Writer, t *Table) error {
	prec := precision(t)
	bw := bufio.NewWriter(w)
	keys := make([][]byte, len(t.Columns))
	for i, c := range t.Columns {
		k, err := json.Marshal(c)
		if err != nil {
			return err
		}
		keys[i] = k
	}
	bw.WriteString("[")
	for n, r := range t.Rows {
		if n > 0 {
			bw.WriteString(",")
		}
		bw.WriteString("\n  {")
		for i, v := range r {
			if i > 0 {
				bw.WriteString(",")
			}
			if f, ok := v.(float64); ok {
				bw.Write(keys[i])
				bw.WriteString(":")
				if math.IsNaN(f) || math.IsInf(f, 0) {
					bw.WriteString("null")
				} else {
					bw.WriteString(roundedFloat(f, prec[i], true))
				}
				continue
			}
			b, err := json.Marshal(v)
			if err != nil {
				return fmt.Errorf("column %s: %w", t.Columns[i], err)
			}
			bw.Write(keys[i])
			bw.WriteString(":")
			bw.Write(b)
		}
		bw.WriteString("}")
	}
	if len(t.Rows) > 0 {
		bw.WriteString("\n")
	}
	bw.WriteString("]\n")
	return bw.Flush()
}
