package schema

import (
	"bufio"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Partitioning of the store (the tables are in tables.go).
const (
	StationColumn  = "station_id" // column that selects the station partition
	YearColumn     = "year"       // column that selects the year partition
	StationKey     = "station"    // Hive key of the station directory level
	YearKey        = "year"       // Hive key of the year directory level
	PartFile       = "part-0.parquet"
	rowGroupRows   = 128 * 1024 // rows per Parquet row group
	tempFilePrefix = ".part.parquet.tmp-"
)

// statsColumns are the columns whose min/max statistics are written (the
// keys queries select on).
var statsColumns = map[string]bool{
	StationColumn: true, YearColumn: true, "launch_time": true, "nominal_time": true,
	"local_date": true, "month": true, "season": true, "nominal_hour": true,
}

var (
	tableName = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)
	// stationID is what a station identifier may contain to be used as a
	// directory name unchanged: no separators, no "=" or "%" (which Hive
	// readers treat specially), no leading dot.
	stationID = regexp.MustCompile(`^[A-Za-z0-9_-][A-Za-z0-9_.-]*$`)
)

// partition is one station-year directory and the indices of its rows.
type partition struct {
	station string
	year    int64
	rows    []int
}

// WriteTable writes rows as the table named table under storeDir, one
// Parquet file per station and year:
//
//	storeDir/table/station=ID/year=YYYY/part-0.parquet
//
// The partition of a row is given by its station_id (string) and year
// (int32 or int64) columns, which T must have (see Columns). Rows of one
// partition keep their given order; sorting is the caller's job. Each file
// is compressed (zstd for the levels table, Snappy for the others: see
// Table.Compact), in row groups of up to 131 072 rows, written under a temporary name in its
// directory, synced, and renamed into place, so a reader never sees a
// partial file. An existing file of the same partition is replaced;
// partitions absent from rows are left alone. The partition columns are also
// stored inside each file (see the package documentation).
//
// It returns the paths written, sorted. No rows write no file. The table
// name must be a lower-case SQL identifier, a station identifier must be
// usable as a directory name (letters, digits, '-', '_', '.', not starting
// with '.'), and years must lie in 1..9999; anything else is an error.
func WriteTable[T any](storeDir, table string, rows []T) (files []string, err error) {
	cols, err := Columns[T]()
	if err != nil {
		return nil, err
	}
	if !tableName.MatchString(table) {
		return nil, fmt.Errorf("schema: table name %q is not a lower-case identifier", table)
	}
	parts, err := partitions(cols, rows)
	if err != nil {
		return nil, fmt.Errorf("schema: table %s: %w", table, err)
	}
	sc := arrowSchema(table, cols)
	for _, p := range parts {
		dir := filepath.Join(storeDir, table,
			StationKey+"="+p.station, YearKey+"="+strconv.FormatInt(p.year, 10))
		path, err := writePartition(dir, PartFile, sliceEncoder(table, sc, cols, rows, p.rows), true)
		if err != nil {
			return files, fmt.Errorf("schema: table %s: %w", table, err)
		}
		files = append(files, path)
	}
	sort.Strings(files)
	return files, nil
}

// partitions groups the indices of rows by station and year, in order of
// first appearance, and validates the partition values.
func partitions[T any](cols []Column, rows []T) ([]*partition, error) {
	var st, yr *Column
	for i := range cols {
		switch c := &cols[i]; {
		case c.Name == StationColumn && c.kind == kindKey:
			st = c
		case c.Name == YearColumn && (c.kind == kindInt32 || c.kind == kindInt64):
			yr = c
		}
	}
	if st == nil || yr == nil {
		return nil, fmt.Errorf("row type %v needs a string %s column and an int32 or int64 %s column to be partitioned",
			reflect.TypeFor[T](), StationColumn, YearColumn)
	}
	type key struct {
		station string
		year    int64
	}
	index := make(map[key]*partition)
	var parts []*partition
	for i := range rows {
		v := reflect.ValueOf(&rows[i]).Elem()
		k := key{v.Field(st.field).String(), v.Field(yr.field).Int()}
		p, ok := index[k]
		if !ok {
			if !stationID.MatchString(k.station) {
				return nil, fmt.Errorf("row %d: %s %q cannot be used as a directory name", i, StationColumn, k.station)
			}
			if k.year < 1 || k.year > 9999 {
				return nil, fmt.Errorf("row %d: %s %d outside 1..9999", i, YearColumn, k.year)
			}
			p = &partition{station: k.station, year: k.year}
			index[k] = p
			parts = append(parts, p)
		}
		p.rows = append(p.rows, i)
	}
	return parts, nil
}

// WriteFile writes rows as one Parquet file of table at path (for example
// store/table/station=ID/year=YYYY/part-<hash>.parquet), with the same
// encoding, metadata and crash safety as WriteTable: the file is written
// under a temporary name in its directory, synced and renamed into place.
// The caller chooses the partition and is responsible for the rows
// belonging to it. Zero rows write a valid empty file.
//
// With sync false the file and its directory are not synced: a writer of
// many files makes them durable at once before it commits (see
// store.Sync), which is much cheaper than one sync per file.
func WriteFile[T any](path, table string, rows []T, sync bool) error {
	cols, err := Columns[T]()
	if err != nil {
		return err
	}
	if !tableName.MatchString(table) {
		return fmt.Errorf("schema: table name %q is not a lower-case identifier", table)
	}
	if err := checkRowType(table, reflect.TypeFor[T]()); err != nil {
		return err
	}
	idx := make([]int, len(rows))
	for i := range idx {
		idx[i] = i
	}
	if _, err := writePartition(filepath.Dir(path), filepath.Base(path), sliceEncoder(table, arrowSchema(table, cols), cols, rows, idx), sync); err != nil {
		return fmt.Errorf("schema: table %s: %w", table, err)
	}
	return nil
}

// WriteRows is WriteFile for rows collected in a Rows. It writes through
// the store's own Parquet writer (parquet.go) when that handles every
// column, which gives the file the general writer gives at a fraction of
// its cost.
func WriteRows[T any](path, table string, rows *Rows[T], sync bool) error {
	if !tableName.MatchString(table) {
		return fmt.Errorf("schema: table name %q is not a lower-case identifier", table)
	}
	if err := checkRowType(table, reflect.TypeFor[T]()); err != nil {
		return err
	}
	enc := encoderOf[T](table, arrowSchema(table, rows.cols), rows.cols, rows.arrays, func() ([]*colBuf, int, error) {
		rows.flush()
		return rows.bufs, rows.n, rows.err
	})
	if _, err := writePartition(filepath.Dir(path), filepath.Base(path), enc, sync); err != nil {
		return fmt.Errorf("schema: table %s: %w", table, err)
	}
	return nil
}

// compactTable reports whether the table's files are compressed with zstd
// (Table.Compact), else Snappy.
func compactTable(table string) bool {
	t, ok := LookupTable(table)
	return ok && t.Compact
}

// sliceEncoder returns the encoding of rows[idx...] of table, as
// writePartition takes it (encoderOf).
func sliceEncoder[T any](table string, sc *arrow.Schema, cols []Column, rows []T, idx []int) func(*bufio.Writer) error {
	return encoderOf[T](table, sc, cols, func() ([]arrow.Array, int, error) {
		a, err := columnArrays(cols, rows, idx)
		return a, len(idx), err
	}, func() ([]*colBuf, int, error) {
		bufs, err := columnBufs(cols, rows, idx)
		return bufs, len(idx), err
	})
}

// encoderOf returns the encoding of a file of table with columns cols, as
// writePartition takes it: through the store's own Parquet writer from the
// filled buffers bufs returns (and their row count) when that writer
// handles every column, else through the general writer from arrays.
func encoderOf[T any](table string, sc *arrow.Schema, cols []Column, arrays func() ([]arrow.Array, int, error), bufs func() ([]*colBuf, int, error)) func(*bufio.Writer) error {
	if !ownWriterSupports(cols) {
		return arrowEncoder(sc, cols, arrays)
	}
	return func(w *bufio.Writer) error {
		b, n, err := bufs()
		if err != nil {
			return err
		}
		return writeParquet(w, table, reflect.TypeFor[T](), cols, b, n, compactTable(table))
	}
}

// arrowEncoder returns the general writer's encoding of the columns that
// arrays returns, as writePartition takes it (extra: see encode).
func arrowEncoder(sc *arrow.Schema, cols []Column, arrays func() ([]arrow.Array, int, error), extra ...parquet.WriterProperty) func(*bufio.Writer) error {
	return func(w *bufio.Writer) error { return encode(w, sc, cols, arrays, extra...) }
}

// writePartition writes a file to dir/name with enc through a temporary
// file and returns the final path.
func writePartition(dir, name string, enc func(*bufio.Writer) error, sync bool) (path string, err error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	tmp, err := CreateTemp(dir, tempFilePrefix)
	if err != nil {
		return "", err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			if rerr := os.Remove(tmp.Name()); rerr != nil && !errors.Is(rerr, fs.ErrNotExist) {
				err = errors.Join(err, rerr)
			}
		}
	}()
	bw := getFileWriter(tmp)
	defer putFileWriter(bw)
	if err := enc(bw); err != nil {
		return "", fmt.Errorf("write %s: %w", tmp.Name(), err)
	}
	if err := bw.Flush(); err != nil {
		return "", fmt.Errorf("write %s: %w", tmp.Name(), err)
	}
	if !sync {
		// durability is the caller's (store.Sync before its commit)
		startWriteback(tmp)
	} else if err := tmp.Sync(); err != nil {
		return "", fmt.Errorf("sync %s: %w", tmp.Name(), err)
	}
	if err := tmp.Close(); err != nil {
		return "", fmt.Errorf("close %s: %w", tmp.Name(), err)
	}
	path = filepath.Join(dir, name)
	if err := os.Rename(tmp.Name(), path); err != nil {
		return "", err
	}
	if !sync {
		return path, nil
	}
	return path, syncDir(dir)
}

// syncDir makes a rename in dir durable.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("sync directory %s: %w", dir, err)
	}
	return nil
}

// encode writes the columns arrays returns as one Parquet file to w, with
// the writer properties extra last (tests give the choices of the store's
// own writer, floatDicts, that way).
func encode(w *bufio.Writer, sc *arrow.Schema, cols []Column, arrays func() ([]arrow.Array, int, error), extra ...parquet.WriterProperty) (err error) {
	// Dictionary encoding pays for repetitive text (ids, statuses, classes)
	// but costs a hash lookup per value for measurements, which rarely
	// repeat: it is on for string columns only.
	opts := []parquet.WriterProperty{
		parquet.WithCompression(codecOf(sc)),
		parquet.WithCompressionLevel(1),
		parquet.WithMaxRowGroupLength(rowGroupRows),
		parquet.WithDictionaryDefault(false),
	}
	for _, c := range cols {
		if c.kind == kindString || c.kind == kindPtrString || c.kind == kindEnum || c.kind == kindKey {
			opts = append(opts, parquet.WithDictionaryFor(c.Name, true))
		}
	}
	// Min/max statistics let readers skip row groups, which pays for the
	// columns queries select on (the keys), not for every measurement:
	// computing them for all columns cost about 15 % of the writing time.
	opts = append(opts, parquet.WithStats(false))
	for _, c := range cols {
		if statsColumns[c.Name] {
			opts = append(opts, parquet.WithStatsFor(c.Name, true))
		}
	}
	// Measurements are stored byte-stream split: the k-th bytes of all
	// values of a page are stored together, so that the exponents and
	// leading mantissa bytes, which vary little along a profile, compress,
	// and the compressor spends little time on the noisy low bytes. On the
	// demo generator's archive this made the levels table 11 % smaller and
	// the ingest about 8 % faster (three alternating runs).
	for _, c := range cols {
		if c.kind == kindFloat64 {
			opts = append(opts, parquet.WithEncodingFor(c.Name, parquet.Encodings.ByteStreamSplit))
		}
	}
	// Integers and times are stored as deltas (DELTA_BINARY_PACKED): along
	// a station-year they are constant (year), step by one (level_index,
	// source_line) or repeat for every level of a sounding (launch_time),
	// so the deltas pack into a few bits each and the compressor gets a
	// quarter fewer bytes. On 20 copies of the real Sterling file
	// (13,240 soundings) the levels table shrank from 48 to 46 MB and the
	// ingest used about 4 % less CPU (three alternating runs; 1 % fewer
	// instructions counted on two of the files).
	for _, c := range cols {
		if c.kind == kindInt32 || c.kind == kindInt64 || c.kind == kindTime {
			opts = append(opts, parquet.WithEncodingFor(c.Name, parquet.Encodings.DeltaBinaryPacked))
		}
	}
	props := parquet.NewWriterProperties(append(opts, extra...)...)
	// w is a *bufio.Writer, which has no Close, so fw.Close leaves the file
	// open for the caller to flush and sync. WithStoreSchema embeds the Arrow schema (with each field's doc) in
	// the file, since Parquet's own schema has no place for descriptions.
	fw, err := pqarrow.NewFileWriter(sc, w, props,
		pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema()))
	if err != nil {
		return err
	}
	defer func() {
		if cerr := fw.Close(); err == nil {
			err = cerr
		}
	}()
	arrs, n, err := arrays()
	if err != nil {
		return err
	}
	rec := array.NewRecordBatch(sc, arrs, int64(n))
	for _, a := range arrs {
		a.Release()
	}
	defer rec.Release()
	if n == 0 {
		return nil // a valid file without rows
	}
	// One batch: the writer cuts it into row groups of rowGroupRows.
	return fw.WriteBuffered(rec)
}

// codecOf returns the compression of the table whose schema is sc (the
// table name is in its metadata, see arrowSchema).
func codecOf(sc *arrow.Schema) compress.Compression {
	md := sc.Metadata()
	if i := md.FindKey(TableKey); i >= 0 {
		if t, ok := LookupTable(md.Values()[i]); ok && t.Compact {
			return compress.Codecs.Zstd
		}
	}
	return compress.Codecs.Snappy
}

// ReadVersion returns the schema version recorded in the key-value metadata
// of the Parquet file at path. A file without the key, or with a value that
// is not an integer, is an error, so that a caller can refuse stores not
// written by this package.
func ReadVersion(path string) (int, error) {
	r, err := file.OpenParquetFile(path, false)
	if err != nil {
		return 0, fmt.Errorf("schema: read version: %w", err)
	}
	defer r.Close()
	s := r.MetaData().KeyValueMetadata().FindValue(VersionKey)
	if s == nil {
		return 0, fmt.Errorf("schema: %s: no %s in the file metadata (not written by this package)", path, VersionKey)
	}
	v, err := strconv.Atoi(*s)
	if err != nil {
		return 0, fmt.Errorf("schema: %s: %s %q is not an integer", path, VersionKey, *s)
	}
	return v, nil
}

// CreateTemp creates a new file named dir/prefix+random for writing, like
// os.CreateTemp, but with mode 0666 before the umask (os.CreateTemp uses
// 0600): a store's files are renamed into place from such files, and must
// be readable by other users and engines as the umask allows (0644 under
// the usual 022).
func CreateTemp(dir, prefix string) (*os.File, error) {
	for try := 0; ; try++ {
		var b [8]byte
		rand.Read(b[:])
		name := filepath.Join(dir, prefix+hex.EncodeToString(b[:]))
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o666)
		if os.IsExist(err) && try < 100 {
			continue
		}
		return f, err
	}
}
