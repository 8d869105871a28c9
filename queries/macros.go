package queries

import (
	"fmt"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
)

// macros returns the CREATE MACRO statements Open runs on every store: the
// SQL fragments that several queries share, defined once here. Their
// values come from the Go definitions they mirror.
//
//	method_rank(m)   sort key of a mixing-height method: 0 for 'consensus',
//	                 then the analyze method registry's order; unknown
//	                 names after every known one
func macros() []string {
	var b strings.Builder
	b.WriteString("CREATE MACRO method_rank(m) AS CASE m WHEN 'consensus' THEN 0")
	names := analyze.MethodNames()
	for i, name := range names {
		fmt.Fprintf(&b, " WHEN %s THEN %d", sqlString(name), i+1)
	}
	fmt.Fprintf(&b, " ELSE %d END", len(names)+1)
	return []string{b.String()}
}

// sqlString quotes s as a SQL string literal.
func sqlString(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }
