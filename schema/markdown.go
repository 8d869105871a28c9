package schema

import (
	"bufio"
	"fmt"
	"io"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
)

// TableDoc documents one table of the store for Markdown.
type TableDoc struct {
	Name        string   // table name, e.g. "soundings"
	Description string   // one paragraph: what one row is
	Columns     []Column // as returned by Columns
}

// Markdown writes a Markdown document describing tables: a title with the
// schema version and the file layout, then per table a section with its
// description and a table of columns (name, SQL type as read by DuckDB,
// whether it can be null, and the doc text). A '|' in any text is escaped
// and line breaks become spaces, so the tables stay well formed.
func Markdown(w io.Writer, tables ...TableDoc) error {
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "# Store schema, version %d\n\n", Version)
	fmt.Fprintf(bw, "Each table is a directory of Parquet files (zstd-compressed for levels, Snappy for the other tables), one per station and year:\n")
	fmt.Fprintf(bw, "`TABLE/%s=ID/%s=YYYY/part-HASH.parquet` (the files a store's manifest lists). Missing values are null.\n", StationKey, YearKey)
	fmt.Fprintf(bw, "In the directory name, ID is the station identifier with every byte other than an ASCII letter, digit, `-` or `_` "+
		"written as `%%XX` (percent-encoding, RFC 3986 §2.1), so `A.B/1` is stored under `%s=A%%2EB%%2F1`; "+
		"every file also holds the identifier itself in `station_id`, which queries should use.\n", StationKey)
	fmt.Fprintf(bw, "\n%s\n", PrecisionText())
	for _, t := range tables {
		fmt.Fprintf(bw, "\n## %s\n\n", mdText(t.Name))
		if t.Description != "" {
			fmt.Fprintf(bw, "%s\n\n", mdText(t.Description))
		}
		fmt.Fprintf(bw, "| column | type | null | description |\n|---|---|---|---|\n")
		for _, c := range t.Columns {
			null := "no"
			if c.Nullable {
				null = "yes"
			}
			fmt.Fprintf(bw, "| `%s` | %s | %s | %s |\n", c.Name, sqlType(c.Type), null, mdText(c.Doc))
		}
	}
	return bw.Flush()
}

// mdText makes s safe inside a Markdown table cell.
func mdText(s string) string {
	s = strings.Join(strings.Fields(s), " ")
	return strings.ReplaceAll(s, "|", `\|`)
}

// sqlType names the DuckDB type an Arrow column of type t is read as.
func sqlType(t arrow.DataType) string {
	switch t.ID() {
	case arrow.STRING:
		return "VARCHAR"
	case arrow.BOOL:
		return "BOOLEAN"
	case arrow.INT32:
		return "INTEGER"
	case arrow.INT64:
		return "BIGINT"
	case arrow.FLOAT64:
		return "DOUBLE"
	case arrow.TIMESTAMP:
		return "TIMESTAMP WITH TIME ZONE"
	}
	return t.String()
}
