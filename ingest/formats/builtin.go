package formats

import (
	"bytes"
	_ "embed"
	"sync"

	"github.com/sondeclim/sondeclim/ingest"
)

// builtinList is the archive's public station list (builtin/SOURCE.md).
//
//go:embed builtin/archive-v2-stations.txt
var builtinList []byte

var builtin = sync.OnceValue(func() map[string]ingest.Station {
	m, _ := ReadStationList(bytes.NewReader(builtinList))
	return m
})

// BuiltinStations returns the built-in station list (names, positions and
// elevations of the archive's 2,879 stations; builtin/SOURCE.md), keyed by
// station id. The map is shared: do not modify it.
func BuiltinStations() map[string]ingest.Station { return builtin() }

// WithBuiltin returns known completed by the built-in station list: every
// station id not in known gets the built-in entry; entries of known win.
// known itself is not modified.
func WithBuiltin(known map[string]ingest.Station) map[string]ingest.Station {
	b := builtin()
	out := make(map[string]ingest.Station, len(b)+len(known))
	for id, s := range b {
		out[id] = s
	}
	for id, s := range known {
		out[id] = s
	}
	return out
}
