package formats

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/input"
)

// WMOLookup finds stations by their 5-digit WMO block and station number
// (TEMP reports) in a station list keyed by the archive's 11-character ids,
// whose last five characters are the WMO number for ids of the "M" network
// (METHODS §7.2, from memory there). Nil for an empty list.
func WMOLookup(list map[string]ingest.Station) func(wmo string) (ingest.Station, bool) {
	if len(list) == 0 {
		return nil
	}
	byWMO := make(map[string]ingest.Station)
	for id, s := range list {
		if len(id) == 11 && id[2] == 'M' {
			byWMO[id[6:]] = s
		}
	}
	return func(wmo string) (ingest.Station, bool) {
		s, ok := byWMO[wmo]
		return s, ok
	}
}

// ReadStationList reads the archive's station list. Lines it cannot parse
// are returned in the error (wrapping *ingest.ParseError values) together
// with every good line.
func ReadStationList(r io.Reader) (map[string]ingest.Station, error) {
	list, err := archivev2.ReadStations(r)
	m := make(map[string]ingest.Station, len(list))
	for id, s := range list {
		m[id] = ingest.Station{Name: s.Name, LatitudeDeg: s.LatitudeDeg, LongitudeDeg: s.LongitudeDeg, ElevationM: s.ElevationM}
	}
	return m, err
}

// LoadStationList reads the station list file at path. A file with no
// readable line is an error; otherwise lines that could not be read are
// returned in bad (nil when there are none) beside the good ones.
func LoadStationList(path string) (list map[string]ingest.Station, bad error, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("station list: %w", err)
	}
	defer f.Close()
	list, bad = ReadStationList(f)
	if bad != nil && len(list) == 0 {
		return nil, nil, fmt.Errorf("station list %s: %w", path, bad)
	}
	return list, bad, nil
}

// IsStationList reports whether prefix looks like the archive's station
// list: no sounding format claims it and its first two lines parse as
// station entries.
func IsStationList(prefix []byte) bool {
	if _, ok := Detect(prefix); ok {
		return false
	}
	lines := bytes.SplitN(prefix, []byte("\n"), 3)
	if len(lines) < 3 {
		return false
	}
	m, err := archivev2.ReadStations(bytes.NewReader(bytes.Join(lines[:2], []byte("\n"))))
	return err == nil && len(m) == 2
}

// TakeStationLists removes the station-list files (IsStationList; plain
// or compressed files, not archive members) from files, reads them and
// adds their entries to known (entries already known win, so a list given
// explicitly takes precedence). bad is called with the path of a list some
// of whose lines could not be read. It returns the other files and the
// merged list (known itself when it was not nil).
func TakeStationLists(files []string, limit int64, known map[string]ingest.Station, bad func(path string, err error)) ([]string, map[string]ingest.Station) {
	var rest []string
	for _, path := range files {
		taken := false
		err := input.Each(path, limit, func(member string, r io.Reader) error {
			br := bufio.NewReaderSize(r, 1<<16)
			prefix, _ := br.Peek(4096)
			if member != "" || !IsStationList(prefix) {
				return errNotList
			}
			list, err := ReadStationList(br)
			if known == nil {
				known = map[string]ingest.Station{}
			}
			for id, s := range list {
				if _, ok := known[id]; !ok {
					known[id] = s
				}
			}
			taken = true
			if err != nil {
				bad(path, err)
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
