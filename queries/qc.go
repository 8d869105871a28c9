package queries

import (
	"context"
	"database/sql"
	"fmt"
)

// runStatement runs the embedded SQL file name with bound args.
func runStatement(ctx context.Context, db *sql.DB, name, what string, args ...any) (*Table, error) {
	q, err := statement(name)
	if err != nil {
		return nil, err
	}
	t, err := Query(ctx, db, q, args...)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	return t, nil
}

// QCByCheck returns the quality-control findings of the store per station,
// check and severity, with the number and fraction of soundings affected.
// It needs the soundings and qc_findings views (see Open). The columns are
// documented in qc_by_check.sql.
func QCByCheck(ctx context.Context, db *sql.DB) (*Table, error) {
	return runStatement(ctx, db, "qc_by_check.sql", "qc by check")
}

// QCMonthly returns, per station and month of the nominal time, the
// soundings by quality-control status, the fraction excluded from the
// statistics (insufficient or rejected) and the findings by severity. It
// needs the soundings view with a qc_status column and the qc_findings
// view. The columns are documented in qc_monthly.sql.
func QCMonthly(ctx context.Context, db *sql.DB) (*Table, error) {
	return runStatement(ctx, db, "qc_monthly.sql", "qc by month")
}

// QCWorst returns every finding of the n soundings with the most bad (then
// suspect, then corrected) findings, the routine checks aside. n < 1 is an
// error. The columns are documented in qc_worst.sql.
func QCWorst(ctx context.Context, db *sql.DB, n int) (*Table, error) {
	if n < 1 {
		return nil, fmt.Errorf("qc worst: the number of soundings must be at least 1, got %d", n)
	}
	return runStatement(ctx, db, "qc_worst.sql", "qc worst soundings", n)
}
