package dailymax

import (
	"math"
	"strings"
	"testing"
	"time"
)

// TestRead: the documented format and its errors.
func TestRead(t *testing.T) {
	m, err := Read(strings.NewReader("\ufeffstation_id,date,tmax_c\r\nXQ1,2016-07-01,31.5\r\n\r\nXQ2,2016-07-01, -3\r\n"))
	if err != nil || len(m) != 2 {
		t.Fatalf("%v %v", m, err)
	}
	// 31.5 °C and −3 °C in K (0 °C = 273.15 K, the Celsius scale's definition).
	day := time.Date(2016, 7, 1, 0, 0, 0, 0, time.UTC)
	for i, w := range []Record{{"XQ1", day, 304.65}, {"XQ2", day, 270.15}} {
		if g := m[i]; g.StationID != w.StationID || !g.Date.Equal(w.Date) || math.Abs(g.TmaxK-w.TmaxK) > 1e-9 {
			t.Errorf("record %d = %+v, want %+v", i, g, w)
		}
	}
	bad := []struct{ in, msg string }{
		{"", "empty input"},
		{"station,date,tmax\n", "line 1: header"},
		{"station_id,date,tmax_c\nXQ1,01/07/2016,30\n", "line 2: date"},
		{"station_id,date,tmax_c\nXQ1,2016-07-01,hot\n", "line 2: tmax_c"},
		{"station_id,date,tmax_c\nXQ1,2016-07-01,30\nXQ1,2016-07-01,31\n", "line 3: repeated"},
		{"station_id,date,tmax_c\nXQ1,2016-07-01\n", "wrong number of fields"},
	}
	for _, b := range bad {
		if _, err := Read(strings.NewReader(b.in)); err == nil || !strings.Contains(err.Error(), b.msg) {
			t.Errorf("%q: error %v, want %q", b.in, err, b.msg)
		}
	}
}
