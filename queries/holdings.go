package queries

import (
	"context"
	"database/sql"
	"fmt"
	"strings"
)

// StationHolding is what a store holds of one station.
type StationHolding struct {
	ID                  string
	Name                string
	FirstYear, LastYear int
	Soundings           int
}

// Holdings lists the stations of a store with their years and sounding
// counts, by station id.
func Holdings(ctx context.Context, db *sql.DB) ([]StationHolding, error) {
	rows, err := db.QueryContext(ctx, `select station_id, coalesce(max(station_name), '') as station_name,
		min(year(launch_time)) as first_year, max(year(launch_time)) as last_year, count(*) as n_soundings
		from soundings group by station_id order by station_id`)
	if err != nil {
		return nil, fmt.Errorf("stations in the store: %w", err)
	}
	defer rows.Close()
	var out []StationHolding
	var h StationHolding
	var sc Scanner
	sc.Str("station_id", &h.ID)
	sc.Str("station_name", &h.Name)
	sc.Int("first_year", &h.FirstYear)
	sc.Int("last_year", &h.LastYear)
	sc.Int("n_soundings", &h.Soundings)
	for rows.Next() {
		if err := sc.Scan(rows); err != nil {
			return nil, fmt.Errorf("stations in the store: %w", err)
		}
		out = append(out, h)
	}
	return out, rows.Err()
}

// DescribeHoldings says what a store holds: a first line with the totals,
// then one indented line per station for at most limit stations (the rest
// are counted).
func DescribeHoldings(h []StationHolding, limit int) string {
	if len(h) == 0 {
		return "the store holds no soundings"
	}
	span := func(a, b int) string {
		if a == b {
			return fmt.Sprint(a)
		}
		return fmt.Sprintf("%d-%d", a, b)
	}
	plural := func(n int, what string) string {
		if n == 1 {
			return "1 " + what
		}
		return fmt.Sprintf("%d %ss", n, what)
	}
	first, last, n := h[0].FirstYear, h[0].LastYear, 0
	var lines []string
	for i, s := range h {
		first, last, n = min(first, s.FirstYear), max(last, s.LastYear), n+s.Soundings
		if i < limit {
			lines = append(lines, strings.TrimRight(fmt.Sprintf("  %-12s %-9s %-14s %s", s.ID, span(s.FirstYear, s.LastYear),
				plural(s.Soundings, "sounding"), s.Name), " "))
		}
	}
	if len(h) > limit {
		lines = append(lines, fmt.Sprintf("  … and %d more stations", len(h)-limit))
	}
	return fmt.Sprintf("the store holds %s of %s, %s:\n%s", plural(n, "sounding"), plural(len(h), "station"),
		span(first, last), strings.Join(lines, "\n"))
}
