package figures_test

import (
	"fmt"
	"time"

	"github.com/sondeclim/sondeclim/queries/figures"
)

// Strengths of surface-based inversions in K are counted in 1 K bins;
// missing values (NaN) are left out.
func ExampleHistogram() {
	nan := 0.0
	nan = nan / nan
	for _, b := range figures.Histogram([]float64{0.4, 1.2, 1.9, 3.5, nan}, 1) {
		fmt.Printf("%g-%g K: %d\n", b.Lo, b.Hi, b.Count)
	}
	// Output:
	// 0-1 K: 1
	// 1-2 K: 2
	// 2-3 K: 0
	// 3-4 K: 1
}

// A station's label names it and its period of record, as in figure titles.
func ExampleStation_Label() {
	st := figures.Station{ID: "XVALLEY1", Name: "INVENTED VALLEY",
		First: time.Date(2001, 1, 1, 0, 0, 0, 0, time.UTC), Last: time.Date(2005, 12, 31, 12, 0, 0, 0, time.UTC)}
	fmt.Println(st.Label())
	// Output: XVALLEY1 INVENTED VALLEY, 2001-01-01 to 2005-12-31
}
