package queries

import (
	"context"
	"database/sql"
	"embed"
	"fmt"
)

//go:embed *.sql
var sqlFiles embed.FS

// statement returns the text of the embedded SQL file name.
func statement(name string) (string, error) {
	b, err := sqlFiles.ReadFile(name)
	if err != nil {
		return "", fmt.Errorf("queries: embedded SQL %s: %w", name, err)
	}
	return string(b), nil
}

// Climatology returns the seasonal climatology of the soundings view of db
// (see Open): per station, season (DJF, MAM, JJA, SON) and nominal hour, the
// sounding counts, the 10th to 90th percentiles of the parcel mixing height
// (Hyndman & Fan type 7; surface counts as 0 m, undefined is counted but
// excluded), and the frequency, median strength and median top of
// surface-based inversions. The columns are documented in
// climatology_seasonal.sql.
func Climatology(ctx context.Context, db *sql.DB) (*Table, error) {
	q, err := statement("climatology_seasonal.sql")
	if err != nil {
		return nil, err
	}
	t, err := Query(ctx, db, q)
	if err != nil {
		return nil, fmt.Errorf("climatology: %w", err)
	}
	return t, nil
}
