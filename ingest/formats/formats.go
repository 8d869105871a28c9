// Package formats is the registry of the input formats: one table of
// (name, sniff, open) that the ingestion engine and the --format option
// read, and the station lists that supply metadata some formats lack.
//
// To add a format: write its reader in ingest/<format>/ (a NewReader whose
// Next returns one *sounding.Sounding at a time, io.EOF at the end and an
// *ingest.ParseError for a rejected item, after which it carries on; a
// Sniff(prefix []byte) bool; a Format name constant), then add one entry
// to the registry table below. Order matters: detection takes the first
// entry whose sniffer accepts the content, so a format whose sniffer is
// loose goes after the strict ones.
package formats

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/bufr"
	"github.com/sondeclim/sondeclim/ingest/netcdf"
	"github.com/sondeclim/sondeclim/ingest/temp"
	"github.com/sondeclim/sondeclim/ingest/tidycsv"
	"github.com/sondeclim/sondeclim/sounding"
)

// Reader is what every format's reader offers: the next sounding, io.EOF
// at the end, or an *ingest.ParseError for one rejected item (the next call
// carries on after it).
type Reader interface {
	Next() (*sounding.Sounding, error)
}

// Note is a remark about input that was read but is worth knowing about (a
// flight that ends early); it is not a skip.
type Note struct {
	Where  string // file[!member]
	Reason string // short snake_case reason, used for counting
	Detail string // the full message
}

// Options is what a reader may need from the caller.
type Options struct {
	// Stations supplies station metadata by station id (the archive's
	// 11-character ids), for formats that do not carry it. May be nil.
	Stations map[string]ingest.Station
	// Note receives remarks about input that was read. May be nil.
	Note func(Note)
}

func (o Options) note(n Note) {
	if o.Note != nil {
		o.Note(n)
	}
}

// Format is one entry of the registry.
type Format struct {
	// Name is the format's name, as --format and sounding.Source.Format
	// give it.
	Name string
	// Sniff reports whether a content prefix (up to 4096 bytes) is this
	// format.
	Sniff func(prefix []byte) bool
	// Open returns a reader of r; file and member name the input in
	// messages and in the soundings' Source.
	Open func(r io.Reader, file, member string, opt Options) Reader
}

// registry lists the formats in detection order.
var registry = []Format{
	{archivev2.Format, archivev2.Sniff, func(r io.Reader, f, m string, _ Options) Reader {
		return archivev2.NewReader(r, f, m)
	}},
	{netcdf.Format, netcdf.Sniff, func(r io.Reader, f, m string, opt Options) Reader {
		return &netcdfReader{r: r, file: f, member: m, opt: opt}
	}},
	{tidycsv.Format, tidycsv.Sniff, func(r io.Reader, f, m string, _ Options) Reader {
		return tidycsv.NewReader(r, ingest.Where(f, m))
	}},
	// BUFR before TEMP: a GTS bulletin of BUFR messages has heading
	// lines too, and its content is binary.
	{bufr.Format, bufr.Sniff, func(r io.Reader, f, m string, opt Options) Reader {
		return bufr.NewReader(r, f, m)
	}},
	{temp.Format, temp.Sniff, func(r io.Reader, f, m string, opt Options) Reader {
		return temp.NewReader(r, ingest.Where(f, m), temp.Options{Station: WMOLookup(opt.Stations)})
	}},
}

// All returns the registered formats in detection order.
func All() []Format {
	out := make([]Format, len(registry))
	copy(out, registry)
	return out
}

// Names lists the registered format names, sorted.
func Names() []string {
	var n []string
	for _, f := range registry {
		n = append(n, f.Name)
	}
	sort.Strings(n)
	return n
}

// Lookup returns the format called name.
func Lookup(name string) (Format, bool) {
	for _, f := range registry {
		if f.Name == name {
			return f, true
		}
	}
	return Format{}, false
}

// Detect returns the first format in detection order whose sniffer accepts
// the content prefix.
func Detect(prefix []byte) (Format, bool) {
	for _, f := range registry {
		if f.Sniff(prefix) {
			return f, true
		}
	}
	return Format{}, false
}

// Open returns a reader of r by the format called force, or, when force is
// empty, by the format Detect finds in prefix (the first bytes of r, which
// must still be readable from r). An unknown name or content is an error
// wrapping ingest.ErrUnknownInput.
func Open(force string, prefix []byte, r io.Reader, file, member string, opt Options) (Reader, error) {
	var f Format
	var ok bool
	if force != "" {
		if f, ok = Lookup(force); !ok {
			return nil, fmt.Errorf("unknown format %q (known: %s): %w", force, strings.Join(Names(), ", "), ingest.ErrUnknownInput)
		}
	} else if f, ok = Detect(prefix); !ok {
		return nil, fmt.Errorf("content matches no known format (known: %s): %w", strings.Join(Names(), ", "), ingest.ErrUnknownInput)
	}
	return f.Open(r, file, member, opt), nil
}

// netcdfReader adapts the one-flight-per-file netCDF reader to Next. The
// classic format needs random access, so the (size-limited) member is read
// into memory; sonde files are a few MB at most.
type netcdfReader struct {
	r            io.Reader
	file, member string
	opt          Options
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
		n.opt.note(Note{Where: ingest.Where(n.file, n.member), Reason: netcdfNoteReason(f), Detail: f.Error()})
	}
	s.Source.Member = n.member
	return s, nil
}

func netcdfNoteReason(f *netcdf.Finding) string {
	switch {
	case errors.Is(f, netcdf.ErrNoTemperature):
		return "no_temperature"
	case errors.Is(f, netcdf.ErrEndsEarly):
		return "ends_early"
	}
	return "note"
}
