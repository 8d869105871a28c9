package temp_test

import (
	"fmt"
	"io"
	"strings"

	"github.com/sondeclim/sondeclim/ingest/temp"
)

// Decoding a TEMP Part A received in a bulletin; the date comes from the
// file name. Station 99901 is invented.
func ExampleReader() {
	msg := "\x01\r\r\n123 \r\r\nUSXX01 ZZZZ 130000\r\r\n" +
		"TTAA 63001 99901 99950 20056 18010 00/// ///// ///// 92712 18258 20020=\r\r\n\x03"
	rd := temp.NewReader(strings.NewReader(msg), "bulletins-2022-07-13-00Z.wmo", temp.Options{})
	for {
		s, err := rd.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Println(s.StationID, s.NominalTime.Format("2006-01-02 15Z"))
		for _, l := range s.Levels {
			fmt.Printf("%-8v %6.0f Pa %5.0f m %6.2f K %3.0f° %4.1f m/s\n",
				l.Kind, l.PressurePa, l.HeightM, l.TemperatureK, l.WindDirectionDeg, l.WindSpeedMS)
		}
	}
	// Output:
	// 99901 2022-07-13 00Z
	// surface   95000 Pa   NaN m 293.15 K 180°  5.1 m/s
	// standard  92500 Pa   712 m 291.35 K 200° 10.3 m/s
}
