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
	// Text, CSV and JSON output round each value to the precision of the data, chosen by the end of the column name: `…_k_per_km` (K/km) to 0.1, `…_m2s` (m²/s) to 1, `…_ktft` (kt·ft) to 1, `…_gkg` (g/kg) to 0.01, `…_hpa` (hPa) to 0.1, `…_pct` (%) to 1, `…_ms` (m/s) to 0.1, `…_km` (km) to 0.01, `…_m` (m) to 1, `…_k` (K) to 0.1, `…_c` (°C) to 0.1, `…_h` (hours) to 0.01, `…_s` (s) to 1, `…frequency` (frequencies (fractions of the valid soundings)) to 0.01, `…_frac` (fractions) to 0.01; `…latitude_deg` and `…longitude_deg` to 0.0001, `…_displacement_deg` to 0.00001, other `…_deg` to 0.1, `p_below_…` to 0.01; in the trends table `slope_pct_per_decade` to 0.1, `mk_z` to 0.01, `mk_p` to 0.001, and `median` and `slope_per_decade` at the precision of the metric's unit (the slope with one decimal more); other numbers to six significant digits. The Parquet files keep full precision; `sondeclim query --exact` writes numbers in full.
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
