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
	// #ZZXSYN00001 2001 01 01 00 2317   75 synth-v1 synth-v1  423700 -1018500|
	// 21     0  94442B  560   -55B-9999    72   249    38 |
	// 20     6  94024 -9999   -58B-9999    70   248    39 |
	// 10    30  92500   722B  -72B-9999    56   247    44 |
	// 20    39  91955 -9999   -77B-9999    51   254    41 |
}
