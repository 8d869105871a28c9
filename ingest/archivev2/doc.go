// Package archivev2 reads the station files of the global integrated
// radiosonde archive in its version-2 text format (format name
// "archive-v2"): one file per station, each sounding a header record
// beginning with '#' followed by the number of fixed-column data records the
// header declares.
//
// The layout is the one in the archive's own format description
// (igra2-data-format.txt, "Format Description of IGRA 2 Sounding Data
// Files", NOAA NCEI), summarised in the project's METHODS.md §7.2. Every
// field is taken from its fixed columns, never by splitting on white space,
// because adjacent fields touch (for example "B-9999").
//
// Reader hands out one sounding per call to Next and never holds more than
// one sounding in memory, so station files of any size stream through. A
// rejected sounding is reported as an *ingest.ParseError and the following
// call carries on with the rest of the file, in the manner of encoding/csv.
//
// ReadStations reads the archive's station list (igra2-list-format.txt), and
// Sniff tells whether a file's first bytes look like a station data file.
package archivev2
