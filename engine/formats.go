package engine

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/netcdf"
	"github.com/sondeclim/sondeclim/ingest/temp"
	"github.com/sondeclim/sondeclim/ingest/tidycsv"
	"github.com/sondeclim/sondeclim/sounding"
)

// format is one reader the pipeline knows: its name, a content test and a
// constructor. note receives remarks about input that was read but is
// worth knowing about (a flight that ends early); they are not skips.
type format struct {
	name  string
	sniff func(prefix []byte) bool
	open  func(r io.Reader, file, member string, note func(Skip), opt *Options) soundingReader
}

var formats = []format{
	{archivev2.Format, archivev2.Sniff, func(r io.Reader, f, m string, _ func(Skip), _ *Options) soundingReader {
		return archivev2.NewReader(r, f, m)
	}},
	{netcdf.Format, netcdf.Sniff, func(r io.Reader, f, m string, note func(Skip), _ *Options) soundingReader {
		return &netcdfReader{r: r, file: f, member: m, note: note}
	}},
	{tidycsv.Format, tidycsv.Sniff, func(r io.Reader, f, m string, _ func(Skip), _ *Options) soundingReader {
		return tidycsv.NewReader(r, name(f, m))
	}},
	{temp.Format, temp.Sniff, func(r io.Reader, f, m string, _ func(Skip), opt *Options) soundingReader {
		return temp.NewReader(r, name(f, m), temp.Options{Station: wmoLookup(opt.Stations)})
	}},
}

// wmoLookup finds TEMP stations (5-digit WMO block and station numbers) in
// a station list keyed by the archive's 11-character ids, whose last five
// characters are the WMO number for ids of the "M" network (METHODS §7.2,
// from memory there).
func wmoLookup(list map[string]StationInfo) func(string) (temp.Station, bool) {
	if len(list) == 0 {
		return nil
	}
	byWMO := make(map[string]StationInfo)
	for id, s := range list {
		if len(id) == 11 && id[2] == 'M' {
			byWMO[id[6:]] = s
		}
	}
	return func(wmo string) (temp.Station, bool) {
		s, ok := byWMO[wmo]
		return temp.Station{Name: s.Name, LatitudeDeg: s.LatitudeDeg, LongitudeDeg: s.LongitudeDeg, ElevationM: s.ElevationM}, ok
	}
}

func name(file, member string) string {
	if member != "" {
		return file + "!" + member
	}
	return file
}

// FormatNames lists the formats --format accepts.
func FormatNames() []string {
	var n []string
	for _, f := range formats {
		n = append(n, f.name)
	}
	sort.Strings(n)
	return n
}

// openReader picks the reader named by force, or the first whose sniffer
// accepts the content prefix.
func openReader(force string, prefix []byte, r io.Reader, file, member string, note func(Skip), opt *Options) (soundingReader, error) {
	for _, f := range formats {
		if (force != "" && f.name == force) || (force == "" && f.sniff(prefix)) {
			return f.open(r, file, member, note, opt), nil
		}
	}
	if force != "" {
		return nil, fmt.Errorf("unknown format %q (known: %s): %w", force, strings.Join(FormatNames(), ", "), ingest.ErrUnknownInput)
	}
	return nil, fmt.Errorf("content matches no known format (known: %s): %w", strings.Join(FormatNames(), ", "), ingest.ErrUnknownInput)
}

// netcdfReader adapts the one-flight-per-file netCDF reader to Next. The
// classic format needs random access, so the (size-limited) member is read
// into memory; sonde files are a few MB at most.
type netcdfReader struct {
	r            io.Reader
	file, member string
	note         func(Skip)
	done         bool
}

func (n *netcdfReader) Next() (*sounding.Sounding, error) {
	if n.done {
		return nil, io.EOF
	}
	n.done = true
	b, err := io.ReadAll(n.r)
	if err != nil {
		return nil, err
	}
	s, findings, err := netcdf.Read(bytes.NewReader(b), int64(len(b)), n.file, netcdf.DefaultMapping())
	if err != nil {
		var pe *ingest.ParseError
		if errors.As(err, &pe) {
			return nil, err
		}
		return nil, &ingest.ParseError{File: n.file, Member: n.member, Offset: 0, Err: err}
	}
	for _, f := range findings {
		n.note(Skip{Where: name(n.file, n.member), Reason: noteReason(f), Detail: f.Error()})
	}
	s.Source.Member = n.member
	return s, nil
}

func noteReason(f *netcdf.Finding) string {
	switch {
	case errors.Is(f, netcdf.ErrNoTemperature):
		return "no_temperature"
	case errors.Is(f, netcdf.ErrEndsEarly):
		return "ends_early"
	}
	return "note"
}
