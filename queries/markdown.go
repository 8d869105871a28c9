package queries

import (
	"bufio"
	"io"
	"strings"
)

// WriteMarkdown writes t as a GitHub-flavoured Markdown pipe table: a
// header row, a delimiter row, then one row per table row. Cells are
// rendered as by WriteText (NULL as "-", floats with at most three
// decimals); a "|" inside a cell is escaped as "\|". Numeric columns
// (every non-NULL value a number) are right-aligned.
func WriteMarkdown(w io.Writer, t *Table) error {
	bw := bufio.NewWriter(w)
	numeric := make([]bool, len(t.Columns))
	for i := range t.Columns {
		numeric[i] = true
		for _, r := range t.Rows {
			switch r[i].(type) {
			case nil, int64, float64:
			default:
				numeric[i] = false
			}
		}
	}
	cell := func(s string) string { return strings.ReplaceAll(s, "|", `\|`) }
	bw.WriteString("|")
	for _, c := range t.Columns {
		bw.WriteString(" " + cell(c) + " |")
	}
	bw.WriteString("\n|")
	for i := range t.Columns {
		if numeric[i] && len(t.Rows) > 0 {
			bw.WriteString("---:|")
		} else {
			bw.WriteString("---|")
		}
	}
	bw.WriteString("\n")
	prec := precision(t)
	for _, r := range t.Rows {
		bw.WriteString("|")
		for i, v := range r {
			bw.WriteString(" " + cell(formatText(v, prec[i])) + " |")
		}
		bw.WriteString("\n")
	}
	return bw.Flush()
}
