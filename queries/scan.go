package queries

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"fmt"
	"io"
	"slices"
	"time"
)

// Scanner reads the rows of a query into Go variables by column name, so
// Go code is tied to its SQL's column names, not to the order of its
// SELECT list: every column the query selects must be claimed and every
// claimed column selected, or Scan fails. Claim the destinations once,
// then call Scan for each row; NULL reads as NaN, "", false, 0 or the zero
// time.
//
//	var h StationHolding
//	var sc Scanner
//	sc.Str("station_id", &h.ID)
//	sc.Int("n_soundings", &h.Soundings)
//	for rows.Next() {
//		if err := sc.Scan(rows); err != nil { ... }
//		out = append(out, h)
//	}
type Scanner struct {
	dest map[string]any
	post []func()
	row  []any     // destinations in the order of the result's columns
	of   *sql.Rows // the rows row was matched to (once per query, not per row)
	dup  string    // a column claimed twice
}

func (s *Scanner) add(name string, v any, post func()) {
	if s.dest == nil {
		s.dest = map[string]any{}
	}
	if _, ok := s.dest[name]; ok {
		s.dup = name
	}
	s.dest[name] = v
	s.post = append(s.post, post)
}

// Float claims column name for *p; NULL reads as NaN.
func (s *Scanner) Float(name string, p *float64) {
	var v sql.NullFloat64
	s.add(name, &v, func() { *p = nullNaN(v) })
}

// Str claims column name for *p; NULL reads as "".
func (s *Scanner) Str(name string, p *string) {
	var v sql.NullString
	s.add(name, &v, func() { *p = v.String })
}

// Bool claims column name for *p; NULL reads as false.
func (s *Scanner) Bool(name string, p *bool) {
	var v sql.NullBool
	s.add(name, &v, func() { *p = v.Bool })
}

// Int claims column name for *p; NULL reads as 0.
func (s *Scanner) Int(name string, p *int) {
	var v sql.NullInt64
	s.add(name, &v, func() { *p = int(v.Int64) })
}

// Time claims column name for *p, in UTC; NULL reads as the zero time.
func (s *Scanner) Time(name string, p *time.Time) {
	var v sql.NullTime
	s.add(name, &v, func() { *p = v.Time.UTC() })
}

// Scan reads the current row of rows into the claimed destinations. It
// fails when a column is claimed twice, selected but not claimed, or
// claimed but not selected.
func (s *Scanner) Scan(rows *sql.Rows) error {
	if s.dup != "" {
		return fmt.Errorf("column %s is read twice", s.dup)
	}
	if s.of != rows {
		if err := s.match(rows); err != nil {
			return err
		}
	}
	if err := rows.Scan(s.row...); err != nil {
		return err
	}
	for _, f := range s.post {
		f()
	}
	return nil
}

// match orders the claimed destinations as the columns of rows.
func (s *Scanner) match(rows *sql.Rows) error {
	cols, err := rows.Columns()
	if err != nil {
		return err
	}
	if s.row, err = s.order(cols, s.row[:0]); err != nil {
		return err
	}
	s.of = rows
	return nil
}

// order appends the claimed destinations in the order of cols to row.
func (s *Scanner) order(cols []string, row []any) ([]any, error) {
	for _, c := range cols {
		d, ok := s.dest[c]
		if !ok {
			return nil, fmt.Errorf("column %s is selected but not read", c)
		}
		row = append(row, d)
	}
	if len(cols) != len(s.dest) {
		for name := range s.dest {
			if !slices.Contains(cols, name) {
				return nil, fmt.Errorf("column %s is read but not selected", name)
			}
		}
	}
	return row, nil
}

// Each runs query (without parameters) on db and calls fn once per row,
// with the claimed destinations holding the row as Scan leaves them. It
// takes the driver's values as they come (float64, string, bool, int64,
// time.Time or nil) instead of through database/sql's conversion of each
// value, which goes through reflection for numbers: for queries of 10⁵ or
// more rows, such as the per-sounding inputs of the days table. The
// checks of Scan apply; an error of fn ends the query and is returned.
func (s *Scanner) Each(ctx context.Context, db *sql.DB, query string, fn func() error) error {
	if s.dup != "" {
		return fmt.Errorf("column %s is read twice", s.dup)
	}
	conn, err := db.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	return conn.Raw(func(dc any) error {
		q, ok := dc.(driver.QueryerContext)
		if !ok {
			return fmt.Errorf("the driver's connection (%T) cannot run a query itself", dc)
		}
		rows, err := q.QueryContext(ctx, query, nil)
		if err != nil {
			return err
		}
		defer rows.Close()
		cols := rows.Columns()
		dest, err := s.order(cols, nil)
		if err != nil {
			return err
		}
		vals := make([]driver.Value, len(cols))
		for {
			if err := ctx.Err(); err != nil {
				return err
			}
			if err := rows.Next(vals); err == io.EOF {
				return nil
			} else if err != nil {
				return err
			}
			for i, v := range vals {
				if err := assign(dest[i], v); err != nil {
					return fmt.Errorf("column %s: %w", cols[i], err)
				}
			}
			for _, f := range s.post {
				f()
			}
			if err := fn(); err != nil {
				return err
			}
		}
	})
}

// assign stores the driver value v in d, one of the sql.Null* values the
// claims hold: the common types directly, others through d's Scan.
func assign(d any, v driver.Value) error {
	done := false
	switch d := d.(type) {
	case *sql.NullFloat64:
		done = direct(v, &d.Float64, &d.Valid)
	case *sql.NullString:
		done = direct(v, &d.String, &d.Valid)
	case *sql.NullBool:
		done = direct(v, &d.Bool, &d.Valid)
	case *sql.NullInt64:
		done = direct(v, &d.Int64, &d.Valid)
	case *sql.NullTime:
		done = direct(v, &d.Time, &d.Valid)
	}
	if done {
		return nil
	}
	sc, ok := d.(sql.Scanner)
	if !ok {
		return fmt.Errorf("cannot store %T", v)
	}
	return sc.Scan(v)
}

// direct stores v in *val and *valid when v is a T or nil (NULL: the zero
// T, not valid) and reports whether it did.
func direct[T any](v driver.Value, val *T, valid *bool) bool {
	switch x := v.(type) {
	case T:
		*val, *valid = x, true
	case nil:
		var zero T
		*val, *valid = zero, false
	default:
		return false
	}
	return true
}
