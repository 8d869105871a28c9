package queries_test

import (
	"math"
	"os"

	"github.com/sondeclim/sondeclim/queries"
)

func ExampleWriteText() {
	t := &queries.Table{
		Columns: []string{"station_id", "season", "mixing_height_p50_m", "sbi_frequency"},
		Rows: [][]any{
			{"XQ001", "DJF", 150.0, 0.4},
			{"XQ001", "JJA", 1212.3456, nil},
			{"XQ002", "SON", math.NaN(), 1.0 / 3},
		},
	}
	queries.WriteText(os.Stdout, t)
	// Output:
	// station_id  season  mixing_height_p50_m  sbi_frequency
	// XQ001       DJF     150                  0.40
	// XQ001       JJA     1212                 -
	// XQ002       SON     NaN                  0.33
}

func ExampleWriteJSON() {
	t := &queries.Table{
		Columns: []string{"station_id", "n_valid", "sbi_frequency"},
		Rows:    [][]any{{"XQ001", int64(5), 0.4}, {"XQ002", int64(0), nil}},
	}
	queries.WriteJSON(os.Stdout, t)
	// Output:
	// [
	//   {"station_id":"XQ001","n_valid":5,"sbi_frequency":0.4},
	//   {"station_id":"XQ002","n_valid":0,"sbi_frequency":null}
	// ]
}

func ExampleWriteMarkdown() {
	t := &queries.Table{
		Columns: []string{"station_id", "season", "mixing_height_p50_m", "note"},
		Rows: [][]any{
			{"XQ001", "DJF", 150.0, ""},
			{"XQ001", "JJA", nil, "n_valid<45; p10/p90 n<25"},
		},
	}
	queries.WriteMarkdown(os.Stdout, t)
	// Output:
	// | station_id | season | mixing_height_p50_m | note |
	// |---|---|---:|---|
	// | XQ001 | DJF | 150 |  |
	// | XQ001 | JJA | - | n_valid<45; p10/p90 n<25 |
}
