package schema_test

import (
	"fmt"
	"log"
	"math"
	"os"
	"path/filepath"
	"strings"

	"github.com/sondeclim/sondeclim/schema"
)

// ascent is an invented row type for the examples.
type ascent struct {
	StationID string  `col:"station_id" doc:"station identifier"`
	Year      int32   `col:"year" doc:"calendar year"`
	TopM      float64 `col:"top_agl_m" doc:"m above ground; top of the layer | if any"`
}

func ExampleWriteTable() {
	store, err := os.MkdirTemp("", "store")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(store)
	rows := []ascent{
		{StationID: "XQ001", Year: 1999, TopM: 420},
		{StationID: "XQ001", Year: 2000, TopM: math.NaN()}, // written as null
		{StationID: "XQ002", Year: 2000, TopM: 35},
	}
	files, err := schema.WriteTable(store, "ascents", rows)
	if err != nil {
		log.Fatal(err)
	}
	for _, f := range files {
		rel, _ := filepath.Rel(store, f)
		fmt.Println(filepath.ToSlash(rel))
	}
	v, err := schema.ReadVersion(files[0])
	fmt.Println("schema version", v, err)
	// Output:
	// ascents/station=XQ001/year=1999/part-0.parquet
	// ascents/station=XQ001/year=2000/part-0.parquet
	// ascents/station=XQ002/year=2000/part-0.parquet
	// schema version 2 <nil>
}

func ExampleMarkdown() {
	cols, err := schema.Columns[ascent]()
	if err != nil {
		log.Fatal(err)
	}
	var b strings.Builder
	err = schema.Markdown(&b, schema.TableDoc{Name: "ascents", Description: "One row per invented ascent.", Columns: cols})
	fmt.Print(b.String(), err)
	// Output:
	// # Store schema, version 2
	//
	// Each table is a directory of Parquet files (zstd-compressed for levels, Snappy for the other tables), one per station and year:
	// `TABLE/station=ID/year=YYYY/part-HASH.parquet` (the files a store's manifest lists). Missing values are null.
	// In the directory name, ID is the station identifier with every byte other than an ASCII letter, digit, `-` or `_` written as `%XX` (percent-encoding, RFC 3986 §2.1), so `A.B/1` is stored under `station=A%2EB%2F1`; every file also holds the identifier itself in `station_id`, which queries should use.
	//
	// ## ascents
	//
	// One row per invented ascent.
	//
	// | column | type | null | description |
	// |---|---|---|---|
	// | `station_id` | VARCHAR | no | station identifier |
	// | `year` | INTEGER | no | calendar year |
	// | `top_agl_m` | DOUBLE | yes | m above ground; top of the layer \| if any |
	// <nil>
}
