package synth_test

import (
	"bufio"
	"bytes"
	"fmt"

	"github.com/sondeclim/sondeclim/ingest/synth"
)

func ExampleStation() {
	s := synth.Station()
	fmt.Printf("%s %s %.2f %.2f %.0f m\n", s.ID, s.Name, s.LatitudeDeg, s.LongitudeDeg, s.ElevationM)
	// Output:
	// ZZXSYN00001 MARROW VALE 42.37 -101.85 560 m
}

// Write produces the archive's version-2 text: a header per sounding, then
// one fixed-column record per level (surface first).
func ExampleWrite() {
	var buf bytes.Buffer
	cfg := synth.Config{Seed: 1, StartYear: 2001, Years: 1}
	n, err := synth.Write(&buf, cfg)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(n, "soundings")
	sc := bufio.NewScanner(&buf)
	for i := 0; i < 5 && sc.Scan(); i++ {
		fmt.Printf("%s|\n", sc.Text()) // | marks the end of the line
	}
	// Output:
	// 730 soundings
	// #ZZXSYN00001 2001 01 01 00 2336   73 synth-v1 synth-v1  423700 -1018500|
	// 21     0  94442B  560  -100B-9999    27   161    50 |
	// 20    15  93489 -9999   -63B-9999    73   163    45 |
	// 10    32  92500   722B  -71B-9999    60   167    46 |
	// 20    41  91947 -9999   -76B-9999    53   166    45 |
}
