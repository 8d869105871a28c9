package schema

import (
	"testing"
	"time"
)

// TestSeason checks the meteorological seasons of METHODS §8 (common
// convention): DJF, MAM, JJA, SON, with December counted in the following
// year's DJF.
func TestSeason(t *testing.T) {
	for _, c := range []struct {
		month time.Month
		code  string
		dy    int
	}{
		{time.January, "DJF", 0}, {time.February, "DJF", 0}, {time.March, "MAM", 0}, {time.May, "MAM", 0},
		{time.June, "JJA", 0}, {time.August, "JJA", 0}, {time.September, "SON", 0}, {time.November, "SON", 0},
		{time.December, "DJF", 1},
	} {
		code, y := Season(time.Date(2001, c.month, 15, 12, 0, 0, 0, time.UTC))
		if code != c.code || y != 2001+c.dy {
			t.Errorf("%v: %s %d, want %s %d", c.month, code, y, c.code, 2001+c.dy)
		}
	}
}
