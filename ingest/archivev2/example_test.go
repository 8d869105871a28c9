package archivev2_test

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
)

// An invented station file: a 00 UTC sounding released the evening before,
// then a sounding whose header promises more records than follow.
const demo = `#QQM00000042 2020 03 06 00 2340    2 ncdc-gts ncdc-gts  450000 -1200000
21     0 101000B  150   123A  800    35   270    51 
10   130 100000B  230A  100B-8888 -9999   275    60 
#QQM00000042 2020 03 06 12 1120    3 ncdc-gts ncdc-gts  450000 -1200000
21     0 100800B  150    95A  700    40   250    30 
`

func ExampleReader() {
	rd := archivev2.NewReader(strings.NewReader(demo), "demo.txt", "")
	for {
		s, err := rd.Next()
		if err == io.EOF {
			break
		}
		if errors.Is(err, ingest.ErrLevelCount) {
			fmt.Println("skipped:", err)
			continue
		}
		if err != nil {
			fmt.Println("error:", err)
			return
		}
		sfc := s.Levels[0]
		fmt.Printf("%s nominal %s launch %s, %d levels, surface %.0f Pa %.2f K at %.0f m\n",
			s.StationID, s.NominalTime.Format("2006-01-02 15Z"), s.LaunchTime.Format("2006-01-02 15:04"),
			len(s.Levels), sfc.PressurePa, sfc.TemperatureK, s.ElevationM)
	}
	// Output:
	// QQM00000042 nominal 2020-03-06 00Z launch 2020-03-05 23:40, 2 levels, surface 101000 Pa 285.45 K at 150 m
	// skipped: demo.txt:4: level count in header does not match the levels present: header declares 3, 1 present
}

func ExampleSniff() {
	fmt.Println(archivev2.Sniff([]byte("#QQM00000042 2020 03 06 00 2340    2 ncdc-gts")))
	fmt.Println(archivev2.Sniff([]byte("TTAA 56121 72208")))
	// Output:
	// true
	// false
}
