package engine

import (
	"bufio"
	"bytes"
	"errors"
	"io"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/input"
)

// isStationList reports whether prefix looks like the archive's station
// list: no sounding reader claims it and its first two lines parse as
// station entries.
func isStationList(prefix []byte) bool {
	for _, f := range formats {
		if f.sniff(prefix) {
			return false
		}
	}
	lines := bytes.SplitN(prefix, []byte("\n"), 3)
	if len(lines) < 3 {
		return false
	}
	m, err := archivev2.ReadStations(bytes.NewReader(bytes.Join(lines[:2], []byte("\n"))))
	return err == nil && len(m) == 2
}

// takeStationLists removes station-list files from files, reads them, and
// adds their entries to known (entries already known win, so --stations
// takes precedence). Lines of a list that cannot be read are reported.
func takeStationLists(files []string, limit int64, known map[string]StationInfo, skip func(Skip)) ([]string, map[string]StationInfo) {
	var rest []string
	for _, path := range files {
		taken := false
		err := input.Each(path, limit, func(member string, r io.Reader) error {
			br := bufio.NewReaderSize(r, 1<<16)
			prefix, _ := br.Peek(4096)
			if member != "" || !isStationList(prefix) {
				return errNotList
			}
			list, err := archivev2.ReadStations(br)
			if known == nil {
				known = map[string]StationInfo{}
			}
			for id, s := range list {
				if _, ok := known[id]; !ok {
					known[id] = StationInfo{Name: s.Name, LatitudeDeg: s.LatitudeDeg, LongitudeDeg: s.LongitudeDeg, ElevationM: s.ElevationM}
				}
			}
			taken = true
			if err != nil {
				skip(Skip{Where: path, Reason: "station_list_lines", Detail: err.Error()})
			}
			return nil
		})
		if !taken || (err != nil && !errors.Is(err, errNotList)) {
			rest = append(rest, path)
		}
	}
	return rest, known
}

var errNotList = errors.New("not a station list")
