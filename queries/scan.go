package queries

import (
	"database/sql"
	"fmt"
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
	row  []any  // destinations in the order of the result's columns
	dup  string // a column claimed twice
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
	cols, err := rows.Columns()
	if err != nil {
		return err
	}
	s.row = s.row[:0]
	for _, c := range cols {
		d, ok := s.dest[c]
		if !ok {
			return fmt.Errorf("column %s is selected but not read", c)
		}
		s.row = append(s.row, d)
	}
	if len(cols) != len(s.dest) {
		for name := range s.dest {
			if !slices.Contains(cols, name) {
				return fmt.Errorf("column %s is read but not selected", name)
			}
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
