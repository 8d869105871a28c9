package queries

import (
	"database/sql"
	"testing"

	_ "github.com/duckdb/duckdb-go/v2"

	"github.com/sondeclim/sondeclim/analyze"
)

// TestMethodRank checks that the method_rank macro sorts 'consensus'
// first, then the registered methods in the registry's order, then any
// other name: the order the method registry documents (analyze.Method).
func TestMethodRank(t *testing.T) {
	db, err := sql.Open("duckdb", "")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	for _, m := range macros() {
		if _, err := db.Exec(m); err != nil {
			t.Fatalf("%s: %v", m, err)
		}
	}
	names := append([]string{"consensus"}, analyze.MethodNames()...)
	names = append(names, "zz_unknown", "aa_unknown")
	prev := -1
	for i, name := range names {
		var rank int
		if err := db.QueryRow(`SELECT method_rank(?)`, name).Scan(&rank); err != nil {
			t.Fatal(err)
		}
		switch {
		case i < len(names)-1 && rank <= prev:
			t.Errorf("method_rank(%q) = %d, not after %d", name, rank, prev)
		case i == len(names)-1 && rank != prev:
			t.Errorf("unknown names rank %d and %d, want equal", prev, rank)
		}
		prev = rank
	}
}
