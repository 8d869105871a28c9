package formats

import (
	"bytes"
	"math"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// TestBuiltinStations: the built-in list parses whole (2,879 stations, as
// PROVENANCE.md counts the archive's list) with the values the list's
// layout gives for Sterling, VA (USM00072403: 38.9767 N, 77.4858 W,
// 88.4 m, read off the list line), and completing a list keeps the given
// entries. Where ../shared is present, the embedded copy must equal the
// validation copy of the publisher's file byte for byte.
func TestBuiltinStations(t *testing.T) {
	m := BuiltinStations()
	if len(m) != 2879 {
		t.Errorf("built-in list: %d stations, want 2879", len(m))
	}
	st := m["USM00072403"]
	if math.Abs(st.LatitudeDeg-38.9767) > 1e-9 || math.Abs(st.LongitudeDeg+77.4858) > 1e-9 || math.Abs(st.ElevationM-88.4) > 1e-9 {
		t.Errorf("Sterling = %+v", st)
	}
	mine := map[string]ingest.Station{"USM00072403": {Name: "mine", LatitudeDeg: 1, LongitudeDeg: 2, ElevationM: 3}}
	all := WithBuiltin(mine)
	if all["USM00072403"].Name != "mine" || len(all) != 2879 || m["USM00072403"].Name == "mine" {
		t.Errorf("given entries must win and the built-in list stay unchanged: %+v", all["USM00072403"])
	}
	if got := WithBuiltin(nil); len(got) != 2879 {
		t.Errorf("WithBuiltin(nil): %d", len(got))
	}
	if !bytes.Equal(builtinList, realdata.Text(t, "archive-v2", "igra2-station-list.txt")) {
		t.Error("builtin/archive-v2-stations.txt differs from ../shared/validation/archive-v2/igra2-station-list.txt")
	}
}
