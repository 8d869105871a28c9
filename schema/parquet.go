package schema

import (
	"bufio"
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"math"
	"math/bits"
	"reflect"
	"sync"

	"github.com/apache/arrow-go/v18/arrow/flight"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/klauspost/compress/snappy"
	"github.com/klauspost/compress/zstd"
)

// The store's own Parquet writer: it writes the filled column buffers of a
// Rows straight to the file, without Arrow arrays or the general Parquet
// writer in between, which cost about a quarter of an ingest's processor
// time for the levels table alone. The file holds what the general writer
// (encode, write.go) wrote: the same schema (physical, converted and
// logical types, repetition), key-value metadata (the schema version, the
// table name and the Arrow schema under ARROW:schema), row groups of
// rowGroupRows rows, statistics (min, max, null count) for statsColumns,
// dictionary pages for the text columns, and the same encodings
// (BYTE_STREAM_SPLIT floats, DELTA_BINARY_PACKED integers and times, PLAIN
// booleans and optional integers, RLE_DICTIONARY text) and compression,
// but for the float columns of zstd-compressed files that take few
// distinct values: those are written RLE_DICTIONARY and uncompressed
// (floatDicts). Each column chunk is one data page (version 1) after its
// dictionary page, if any.
//
// The structures follow apache/parquet-format's src/main/thrift/parquet.thrift
// (FileMetaData, SchemaElement, RowGroup, ColumnChunk, ColumnMetaData,
// Statistics, PageHeader, DataPageHeader, DictionaryPageHeader, KeyValue,
// ColumnOrder) and its Encodings.md; the field ids below are that file's.

// Parquet enum values (parquet.thrift).
const (
	ptBoolean   = 0 // Type
	ptInt32     = 1
	ptInt64     = 2
	ptDouble    = 5
	ptByteArray = 6

	ctUTF8            = 0 // ConvertedType
	ctTimestampMicros = 10
	ctInt32Converted  = 17
	ctInt64Converted  = 18

	repRequired = 0 // FieldRepetitionType
	repOptional = 1

	encPlain         = 0 // Encoding
	encRLE           = 3
	encDeltaBinary   = 5
	encRLEDictionary = 8
	encByteStream    = 9

	codecUncompressed = 0 // CompressionCodec
	codecSnappy       = 1
	codecZstd         = 6

	pageData       = 0 // PageType
	pageDictionary = 2
)

// createdBy names the writer in the footer, in the "application version
// x.y.z" form readers parse.
const createdBy = "sondeclim version 1.0.0"

// dictionaryLimit is the size of a text column's dictionary page beyond
// which the column chunk is written PLAIN instead (the general writer's
// default dictionary page limit, 1 MiB).
const dictionaryLimit = 1 << 20

// ownWriterKinds are the column kinds the writer handles; statistics are
// written for integers, times and text.
func ownWriterSupports(cols []Column) bool {
	for i := range cols {
		c := &cols[i]
		switch c.kind {
		case kindFloat64, kindBool, kindPtrBool:
			if statsColumns[c.Name] {
				return false
			}
		case kindInt32, kindPtrInt32, kindInt64, kindTime, kindEnum, kindKey, kindString, kindPtrString:
		default:
			return false
		}
	}
	return true
}

// chunkMeta is what the footer records of one column chunk.
type chunkMeta struct {
	phys                     int32
	enc                      int32 // encoding of the data page
	codec                    int32
	dict                     bool  // a dictionary page comes first
	start, dataOff           int64 // file offsets of the chunk and of its data page
	uncompressed, compressed int64 // sizes of its pages with their headers
	stats                    []byte
}

// pqWriter is the working memory of writing files, reused from one file to
// the next through pqWriters.
type pqWriter struct {
	w        *bufio.Writer
	pos      int64
	codec    int32
	zstd     *zstd.Encoder // made at the first zstd-compressed page
	raw      []byte        // a page before compression
	comp     []byte        // a page compressed
	dictRaw  []byte
	idx      []uint32
	i32      []int32
	i64      []int64
	f64      []float64
	i16      []int16
	hdr      compact
	stats    compact
	footer   compact
	groups   [][]chunkMeta
	groupRow []int
	strIdx   map[string]int32
	strList  []string
	fdicts   []floatDict // by column: the float dictionaries of the file
}

var pqWriters = keeper[*pqWriter]{fresh: func() *pqWriter { return &pqWriter{strIdx: map[string]int32{}} }}

// newZstdEncoder returns an encoder at the level the general writer used
// (compression level 1, klauspost's fastest), with its options but for
// two. The frame checksum is optional (RFC 8878, section 3.1.1.1.1,
// Content_Checksum_flag): the store's file sums already cover the files,
// and its xxhash was 2 % of the instructions of writing a levels file.
// Literals of a block without matches are stored raw, not Huffman-coded
// (WithAllLitEntropyCompression off, klauspost's default at this level):
// the low bytes of split floats are such blocks, and trying to code them
// cost 6 % of those instructions for 0.2 % of the file.
// Each pqWriter keeps its own, with the encoder's history buffers.
func newZstdEncoder() *zstd.Encoder {
	e, err := zstd.NewWriter(nil, zstd.WithZeroFrames(true), zstd.WithEncoderLevel(zstd.EncoderLevelFromZstd(1)),
		zstd.WithEncoderConcurrency(1), zstd.WithAllLitEntropyCompression(false), zstd.WithEncoderCRC(false))
	if err != nil {
		panic(err) // only for invalid options, which these are not
	}
	return e
}

// fileMetaKey identifies the key-value metadata of a table's files.
type fileMetaKey struct {
	table string
	row   reflect.Type
}

// kvCache holds the key-value metadata of each table's files (the Arrow
// schema's serialization costs more than a small file's data).
var kvCache sync.Map // fileMetaKey → [][2]string

// keyValues returns the key-value metadata the general writer stores: the
// Arrow schema's metadata (version, table) and the Arrow schema itself,
// IPC-serialized and base64-encoded under ARROW:schema, as pqarrow's
// WithStoreSchema writes it.
func keyValues(table string, row reflect.Type, cols []Column) [][2]string {
	k := fileMetaKey{table, row}
	if v, ok := kvCache.Load(k); ok {
		return v.([][2]string)
	}
	sc := arrowSchema(table, cols)
	md := sc.Metadata()
	var kv [][2]string
	for i, key := range md.Keys() {
		kv = append(kv, [2]string{key, md.Values()[i]})
	}
	ser := flight.SerializeSchema(sc, memory.DefaultAllocator)
	kv = append(kv, [2]string{"ARROW:schema", base64.StdEncoding.EncodeToString(ser)})
	kvCache.Store(k, kv)
	return kv
}

// writeParquet writes the n rows held in bufs (one per column of cols) as
// a Parquet file of table to w. compact selects zstd (else Snappy).
func writeParquet(w *bufio.Writer, table string, row reflect.Type, cols []Column, bufs []*colBuf, n int, zstdCodec bool) error {
	pw := pqWriters.get()
	defer func() {
		pw.w = nil
		pqWriters.put(pw)
	}()
	pw.w, pw.pos, pw.codec = w, 0, codecSnappy
	if zstdCodec {
		pw.codec = codecZstd
	}
	pw.groups, pw.groupRow = pw.groups[:0], pw.groupRow[:0]
	pw.floatDicts(cols, bufs, n)
	pw.write([]byte("PAR1"))
	for lo := 0; lo < n; lo += rowGroupRows {
		hi := min(lo+rowGroupRows, n)
		g := make([]chunkMeta, len(cols))
		for i := range cols {
			if err := pw.column(&g[i], &cols[i], bufs[i], &pw.fdicts[i], lo, hi); err != nil {
				return err
			}
		}
		pw.groups = append(pw.groups, g)
		pw.groupRow = append(pw.groupRow, hi-lo)
	}
	f := &pw.footer
	f.reset()
	pw.fileMetaData(f, cols, n, keyValues(table, row, cols))
	pw.write(f.b)
	var tail [8]byte
	binary.LittleEndian.PutUint32(tail[:], uint32(len(f.b)))
	copy(tail[4:], "PAR1")
	pw.write(tail[:])
	return nil
}

func (pw *pqWriter) write(b []byte) {
	pw.w.Write(b) // a bufio.Writer keeps its first error for Flush
	pw.pos += int64(len(b))
}

// compress returns raw compressed with codec.
func (pw *pqWriter) compress(raw []byte, codec int32) []byte {
	if codec == codecUncompressed {
		return raw
	}
	if codec == codecZstd {
		if pw.zstd == nil {
			pw.zstd = newZstdEncoder()
		}
		pw.comp = pw.zstd.EncodeAll(raw, pw.comp[:0])
	} else {
		pw.comp = snappy.Encode(pw.comp[:cap(pw.comp)], raw)
	}
	return pw.comp
}

// page writes one page: its header (from header, given the sizes) and raw
// compressed, and counts both in m.
func (pw *pqWriter) page(m *chunkMeta, raw []byte, header func(h *compact, uncompressed, compressed int32)) {
	comp := pw.compress(raw, m.codec)
	h := &pw.hdr
	h.reset()
	header(h, int32(len(raw)), int32(len(comp)))
	h.b = append(h.b, 0) // the PageHeader's stop field
	pw.write(h.b)
	pw.write(comp)
	m.uncompressed += int64(len(h.b) + len(raw))
	m.compressed += int64(len(h.b) + len(comp))
}

// column writes the chunk of rows lo..hi of column c (values in b; fd its
// dictionary if it is a float column).
func (pw *pqWriter) column(m *chunkMeta, c *Column, b *colBuf, fd *floatDict, lo, hi int) error {
	n := hi - lo
	m.start, m.codec = pw.pos, pw.codec
	nulls := 0
	var valid []byte // the validity bitmap, when some row is null
	if c.Nullable && b.valid.nulls > 0 {
		nulls = n - onesIn(b.valid.bits, lo, hi)
		if nulls > 0 {
			valid = b.valid.bits
		}
	}
	raw := pw.raw[:0]
	if c.Nullable {
		if valid == nil {
			raw = binary.LittleEndian.AppendUint32(raw, 0)
			at := len(raw)
			raw = binary.AppendUvarint(raw, uint64(n)<<1)
			raw = append(raw, 1)
			binary.LittleEndian.PutUint32(raw[at-4:], uint32(len(raw)-at))
		} else {
			raw = appendDefLevels(raw, valid, lo, hi)
		}
	}
	st := statsColumns[c.Name]
	pw.stats.reset()
	var dict []string // dictionary of a text column
	dictLen := 0      // and its length, or a float column's
	switch c.kind {
	case kindFloat64:
		m.phys, m.enc = ptDouble, encByteStream
		if fd.use {
			// floatDicts indexed the whole column; a row group of
			// several gets a dictionary of its own values.
			m.enc, m.dict, m.codec = encRLEDictionary, true, codecUncompressed
			vals, idx := fd.vals, fd.idx
			if hi-lo < fd.rows {
				// The first row group's dictionary is the file's first
				// values, in the same order: the indices are the file's.
				k := n - nulls
				if fd.at == 0 {
					vals, idx = fd.vals[:fd.first], fd.idx[:k]
				} else {
					vals, idx = fd.chunk(fd.idx[fd.at : fd.at+k])
				}
				fd.at += k
			}
			raw = appendIndices(raw, idx, len(vals))
			d := pw.dictRaw[:0]
			for _, u := range vals {
				d = binary.LittleEndian.AppendUint64(d, u)
			}
			pw.dictRaw, dictLen = d, len(vals)
		} else {
			raw = appendSplitFloats(raw, b.f64[lo:hi], valid, lo, &pw.f64)
		}
	case kindBool, kindPtrBool:
		m.phys, m.enc = ptBoolean, encPlain
		raw = appendPlainBools(raw, b.bits, valid, lo, hi)
	case kindInt32, kindPtrInt32:
		// The general writer stored optional integers (*int32 fields)
		// PLAIN, the others as deltas (encode, write.go).
		m.phys, m.enc = ptInt32, encDeltaBinary
		v := gather(&pw.i32, b.i32[lo:hi], valid, lo)
		if c.kind == kindPtrInt32 {
			m.enc = encPlain
			for _, x := range v {
				raw = binary.LittleEndian.AppendUint32(raw, uint32(x))
			}
		} else {
			raw = appendDelta(raw, v)
		}
		if st {
			pw.intStats(v, nulls, 4)
		}
	case kindInt64, kindTime:
		m.phys, m.enc = ptInt64, encDeltaBinary
		v := gather(&pw.i64, b.i64[lo:hi], valid, lo)
		raw = appendDelta(raw, v)
		if st {
			pw.intStats(v, nulls, 8)
		}
	case kindEnum, kindKey:
		m.phys, m.enc, m.dict = ptByteArray, encRLEDictionary, true
		idx := pw.idx[:0]
		if c.kind == kindKey {
			dict = b.keys
			v := gather(&pw.i32, b.i32[lo:hi], valid, lo)
			raw = appendIndices(raw, v, len(dict))
			if st {
				for _, x := range v {
					idx = append(idx, uint32(x))
				}
			}
		} else {
			dict = c.enumList()
			v := b.i16[lo:hi]
			if valid != nil {
				v = gatherValid(&pw.i16, v, valid, lo)
			}
			raw = appendIndices(raw, v, len(dict))
			if st {
				for _, x := range v {
					idx = append(idx, uint32(x))
				}
			}
		}
		pw.idx = idx
		if st {
			pw.textStats(dict, idx, nulls)
		}
	case kindString, kindPtrString:
		m.phys = ptByteArray
		var ok bool
		raw, dict, ok = pw.strings(raw, b, valid, lo, hi)
		if ok {
			m.enc, m.dict = encRLEDictionary, true
		} else {
			m.enc = encPlain
		}
		if st {
			pw.textStats(dict, pw.idx, nulls)
		}
	default:
		return fmt.Errorf("column %s: kind %d not written by the store's Parquet writer", c.Name, c.kind)
	}
	if st {
		m.stats = append(m.stats[:0], pw.stats.b...)
	} else {
		m.stats = m.stats[:0]
	}
	if m.dict {
		if m.phys == ptByteArray {
			d := pw.dictRaw[:0]
			for _, s := range dict {
				d = binary.LittleEndian.AppendUint32(d, uint32(len(s)))
				d = append(d, s...)
			}
			pw.dictRaw, dictLen = d, len(dict)
		}
		pw.page(m, pw.dictRaw, func(h *compact, u, cz int32) {
			h.i32(1, pageDictionary)
			h.i32(2, u)
			h.i32(3, cz)
			h.begin(7) // DictionaryPageHeader
			h.i32(1, int32(dictLen))
			h.i32(2, encPlain)
			h.boolean(3, false)
			h.end()
		})
	}
	if len(raw) > math.MaxInt32 {
		return fmt.Errorf("column %s: a page of %d bytes, more than a Parquet page header can give", c.Name, len(raw))
	}
	m.dataOff = pw.pos
	pw.raw = raw
	pw.page(m, raw, func(h *compact, u, cz int32) {
		h.i32(1, pageData)
		h.i32(2, u)
		h.i32(3, cz)
		h.begin(5) // DataPageHeader
		h.i32(1, int32(n))
		h.i32(2, m.enc)
		h.i32(3, encRLE)
		h.i32(4, encRLE)
		if st {
			h.field(5, ctStruct)
			h.b = append(h.b, m.stats...)
		}
		h.end()
	})
	return nil
}

// gather returns the values of x whose validity bit is set (x itself when
// valid is nil), x[0] being row lo, in *scratch.
func gather[E int32 | int64](scratch *[]E, x []E, valid []byte, lo int) []E {
	if valid == nil {
		return x
	}
	return gatherValid(scratch, x, valid, lo)
}

// appendIndices appends dictionary indices as an RLE_DICTIONARY data page
// holds them: the bit width in one byte, then the hybrid encoding.
func appendIndices[E uint32 | int32 | int16](b []byte, idx []E, dictLen int) []byte {
	width := uint(max(1, bits.Len(uint(max(dictLen-1, 0)))))
	b = append(b, byte(width))
	return appendHybrid(b, idx, width)
}

// strings appends the values of rows lo..hi of a text column: the
// dictionary indices, with the dictionary returned, or PLAIN values when
// the dictionary would exceed dictionaryLimit (ok false). pw.idx holds the
// indices (also in the PLAIN case, for the statistics).
func (pw *pqWriter) strings(raw []byte, b *colBuf, valid []byte, lo, hi int) (_ []byte, dict []string, ok bool) {
	clear(pw.strIdx)
	list, idx := pw.strList[:0], pw.idx[:0]
	size := 0
	for i := lo; i < hi; i++ {
		if valid != nil && !isSet(valid, i) {
			continue
		}
		v := b.data[b.i32[i]:b.i32[i+1]]
		k, found := pw.strIdx[string(v)]
		if !found {
			s := string(v)
			k = int32(len(list))
			pw.strIdx[s] = k
			list = append(list, s)
			size += 4 + len(s)
		}
		idx = append(idx, uint32(k))
	}
	pw.strList, pw.idx = list, idx
	if size <= dictionaryLimit {
		return appendIndices(raw, idx, len(list)), list, true
	}
	for _, k := range idx {
		raw = binary.LittleEndian.AppendUint32(raw, uint32(len(list[k])))
		raw = append(raw, list[k]...)
	}
	return raw, list, false
}

// intStats writes the Statistics of integer (or time) values v with the
// given null count: max and min both in the deprecated fields and in
// max_value/min_value (signed order), as the general writer did, PLAIN
// little-endian in size bytes.
func (pw *pqWriter) intStats(v any, nulls, size int) {
	s := &pw.stats
	var lo, hi int64
	var have bool
	switch x := v.(type) {
	case []int32:
		if have = len(x) > 0; have {
			lo, hi = int64(x[0]), int64(x[0])
			for _, y := range x {
				lo, hi = min(lo, int64(y)), max(hi, int64(y))
			}
		}
	case []int64:
		if have = len(x) > 0; have {
			lo, hi = x[0], x[0]
			for _, y := range x {
				lo, hi = min(lo, y), max(hi, y)
			}
		}
	}
	var mx, mn [8]byte
	binary.LittleEndian.PutUint64(mx[:], uint64(hi))
	binary.LittleEndian.PutUint64(mn[:], uint64(lo))
	if have {
		s.binary(1, mx[:size])
		s.binary(2, mn[:size])
	}
	s.i64(3, int64(nulls))
	if have {
		s.binary(5, mx[:size])
		s.binary(6, mn[:size])
	}
	s.b = append(s.b, 0)
}

// textStats writes the Statistics of the text values dict[idx...]: the
// null count and max_value/min_value in byte order (the deprecated fields
// are for signed order only and are left out, as the general writer did).
func (pw *pqWriter) textStats(dict []string, idx []uint32, nulls int) {
	s := &pw.stats
	var lo, hi string
	var seen uint32 = 1<<32 - 1
	for k, i := range idx {
		if i == seen {
			continue
		}
		seen = i
		if v := dict[i]; k == 0 {
			lo, hi = v, v
		} else {
			lo, hi = min(lo, v), max(hi, v)
		}
	}
	s.i64(3, int64(nulls))
	if len(idx) > 0 {
		s.str(5, hi)
		s.str(6, lo)
	}
	s.b = append(s.b, 0)
}

// enumList returns the allowed values of an enum column, its dictionary.
func (c *Column) enumList() []string {
	if c.dictList == nil {
		c.dictList = make([]string, c.dict.Len())
		for i := range c.dictList {
			c.dictList[i] = c.dict.Value(i)
		}
	}
	return c.dictList
}

// schemaElement writes the SchemaElement of column c.
func schemaElement(f *compact, c *Column) {
	f.open()
	rep := int32(repRequired)
	if c.Nullable {
		rep = repOptional
	}
	logical := func(id int16, inner func()) {
		f.begin(10)
		f.begin(id)
		inner()
		f.end()
		f.end()
	}
	intType := func(width int8) func() {
		return func() {
			f.i8(1, width)
			f.boolean(2, true)
		}
	}
	switch c.kind {
	case kindKey, kindString, kindPtrString, kindEnum:
		f.i32(1, ptByteArray)
		f.i32(3, rep)
		f.str(4, c.Name)
		f.i32(6, ctUTF8)
		logical(1, func() {})
	case kindTime:
		f.i32(1, ptInt64)
		f.i32(3, rep)
		f.str(4, c.Name)
		f.i32(6, ctTimestampMicros)
		logical(8, func() {
			f.boolean(1, true)
			f.begin(2)
			f.empty(2) // MICROS
			f.end()
		})
	case kindInt32, kindPtrInt32:
		f.i32(1, ptInt32)
		f.i32(3, rep)
		f.str(4, c.Name)
		f.i32(6, ctInt32Converted)
		logical(10, intType(32))
	case kindInt64:
		f.i32(1, ptInt64)
		f.i32(3, rep)
		f.str(4, c.Name)
		f.i32(6, ctInt64Converted)
		logical(10, intType(64))
	case kindFloat64:
		f.i32(1, ptDouble)
		f.i32(3, rep)
		f.str(4, c.Name)
	case kindBool, kindPtrBool:
		f.i32(1, ptBoolean)
		f.i32(3, rep)
		f.str(4, c.Name)
	}
	f.end()
}

// fileMetaData writes the footer's FileMetaData.
func (pw *pqWriter) fileMetaData(f *compact, cols []Column, n int, kv [][2]string) {
	f.open()
	f.i32(1, 2) // version
	f.list(2, ctStruct, len(cols)+1)
	f.open()
	f.str(4, "schema")
	f.i32(5, int32(len(cols)))
	f.end()
	for i := range cols {
		schemaElement(f, &cols[i])
	}
	f.i64(3, int64(n))
	f.list(4, ctStruct, len(pw.groups))
	for g, chunks := range pw.groups {
		f.open() // RowGroup
		var total, totalComp int64
		f.list(1, ctStruct, len(chunks))
		for i := range chunks {
			m := &chunks[i]
			total += m.uncompressed
			totalComp += m.compressed
			f.open() // ColumnChunk
			f.i64(2, m.start)
			f.begin(3) // ColumnMetaData
			f.i32(1, m.phys)
			if m.dict {
				f.list(2, ctI32, 3)
				f.elemI32(encRLEDictionary)
				f.elemI32(encPlain)
				f.elemI32(encRLE)
			} else {
				f.list(2, ctI32, 2)
				f.elemI32(m.enc)
				f.elemI32(encRLE)
			}
			f.list(3, ctBinary, 1)
			f.elemString(cols[i].Name)
			f.i32(4, m.codec)
			f.i64(5, int64(pw.groupRow[g]))
			f.i64(6, m.uncompressed)
			f.i64(7, m.compressed)
			f.i64(9, m.dataOff)
			if m.dict {
				f.i64(11, m.start)
			}
			if len(m.stats) > 0 {
				f.field(12, ctStruct)
				f.b = append(f.b, m.stats...)
			}
			if m.dict {
				f.list(13, ctStruct, 2)
				pageStats(f, pageDictionary, encPlain)
				pageStats(f, pageData, m.enc)
			} else {
				f.list(13, ctStruct, 1)
				pageStats(f, pageData, m.enc)
			}
			f.end()
			f.end()
		}
		f.i64(2, total)
		f.i64(3, int64(pw.groupRow[g]))
		f.i64(5, chunks[0].start)
		f.i64(6, totalComp)
		f.i16(7, int16(g))
		f.end()
	}
	f.list(5, ctStruct, len(kv))
	for _, p := range kv {
		f.open()
		f.str(1, p[0])
		f.str(2, p[1])
		f.end()
	}
	f.str(6, createdBy)
	f.list(7, ctStruct, len(cols))
	for range cols {
		f.open()
		f.empty(1) // TYPE_ORDER
		f.end()
	}
	f.end()
}

// pageStats writes one PageEncodingStats: one page of the type and encoding.
func pageStats(f *compact, typ, enc int32) {
	f.open()
	f.i32(1, typ)
	f.i32(2, enc)
	f.i32(3, 1)
	f.end()
}

// Float dictionaries. A measurement reported at a fixed resolution takes
// few distinct values in a station-year (Sterling 2016, 131,306 levels:
// 361 wind directions, 790 wind speeds, 999 relative humidities, 1,100
// temperatures, 2,444 dewpoints), and such a column written RLE_DICTIONARY
// (Encodings.md: the distinct values PLAIN in a dictionary page, the data
// page their indices in the RLE/bit-packing hybrid) and left uncompressed
// is smaller than byte-stream split and zstd (those five columns 784 →
// 640 KB; wind direction alone 132 → 150 KB) and costs a hash lookup per
// value instead of the compressor's work. zstd on top of the dictionary
// saved another 1.6 % of the file for 9 % more instructions: not done.
// Columns of many values keep byte-stream split: elapsed time's 7,140
// values would take 13-bit indices, 2.6 times its compressed size.

// floatDictLimit is the most distinct values a float column of a file is
// written with a dictionary for: 12-bit indices at most.
const floatDictLimit = 1 << 12

// floatDict is the dictionary of one float column of a file: the distinct
// values (their bits) in order of first appearance, the index of each
// non-null value in row order, and whether the column is written with it.
type floatDict struct {
	use   bool
	rows  int // the file's
	at    int // indices of the row groups already written
	first int // values of vals that appear in the first row group
	vals  []uint64
	idx   []uint32
	slots *[1 << floatDictSlotBits]uint16 // open addressing: 1 + index in vals, 0 free
	table *[floatDictLimit]uint64         // vals' memory, sized once
	remap []uint32                        // working memory of chunk
	cvals []uint64
	cidx  []uint32
}

// floatDictSlotBits gives the slot table twice floatDictLimit entries, so
// that it is never more than half full.
const floatDictSlotBits = 13

// floatDictBlock is the rows floatDicts gathers at a time, a multiple of 8.
const floatDictBlock = 4096

// floatDicts decides, for each float column of a zstd-compressed file,
// whether it is written with a dictionary: when its n rows hold at most
// floatDictLimit distinct values and the dictionary page and the indices
// take at most a quarter of the values' 8 bytes each. The one dictionary
// of a column serves all its row groups.
func (pw *pqWriter) floatDicts(cols []Column, bufs []*colBuf, n int) {
	if cap(pw.fdicts) < len(cols) {
		// The buffers of the dictionaries kept go on: a wider table
		// between two levels files does not drop the levels' ones.
		fds := make([]floatDict, len(cols))
		copy(fds, pw.fdicts[:cap(pw.fdicts)])
		pw.fdicts = fds
	}
	pw.fdicts = pw.fdicts[:len(cols)]
	for i := range cols {
		fd := &pw.fdicts[i]
		fd.use, fd.rows, fd.at = false, n, 0
		if cols[i].kind != kindFloat64 || pw.codec != codecZstd {
			continue
		}
		b := bufs[i]
		var valid []byte
		if cols[i].Nullable && b.valid.nulls > 0 {
			valid = b.valid.bits
		}
		// A block of rows at a time, so that a column of many values is
		// given up after its first few thousand rows.
		fd.reset()
		ok := true
		for lo := 0; lo < n && ok; lo += floatDictBlock {
			x := b.f64[lo:min(lo+floatDictBlock, n)]
			if valid != nil {
				x = gatherValid(&pw.f64, x, valid, lo)
			}
			ok = fd.add(x)
			if lo+floatDictBlock == rowGroupRows {
				fd.first = len(fd.vals)
			}
		}
		if fd.first < 0 {
			fd.first = len(fd.vals)
		}
		if k := len(fd.idx); ok && k > 0 {
			width := max(1, bits.Len(uint(len(fd.vals)-1)))
			fd.use = 8*len(fd.vals)+k*width/8 <= 2*k
		}
	}
}

// chunk returns the dictionary of one row group whose values have the
// file-wide indices global: the values in order of first appearance and
// their indices in it.
func (fd *floatDict) chunk(global []uint32) (vals []uint64, idx []uint32) {
	remap := extend(fd.remap[:0], len(fd.vals)) // 1 + index in the chunk's dictionary, 0 not yet seen
	clear(remap)
	vals, idx = fd.cvals[:0], extend(fd.cidx[:0], len(global))
	for i, g := range global {
		l := remap[g]
		if l == 0 {
			vals = append(vals, fd.vals[g])
			l = uint32(len(vals))
			remap[g] = l
		}
		idx[i] = l - 1
	}
	fd.remap, fd.cvals, fd.cidx = remap, vals, idx
	return vals, idx
}

// reset empties the dictionary.
func (fd *floatDict) reset() {
	if fd.slots == nil {
		fd.slots = new([1 << floatDictSlotBits]uint16)
		fd.table = new([floatDictLimit]uint64)
	} else {
		clear(fd.slots[:])
	}
	fd.vals, fd.idx, fd.first = fd.table[:0], fd.idx[:0], -1
}

// add appends the indices of x to fd.idx, adding its new values to
// fd.vals, and reports false, with fd.idx left incomplete, as soon as the
// dictionary would exceed floatDictLimit values. The values live in
// fd.table and the loop appends to neither slice nor returns from within:
// with no call in it, the compiler keeps its state in registers. (A test
// for a repeat of the value before saved a lookup for one value in 12 of
// the Sterling 2016 levels and cost a register.)
func (fd *floatDict) add(x []float64) bool {
	const mask = 1<<floatDictSlotBits - 1
	slots, table := fd.slots[:], fd.table[:] // slices: no nil test of the arrays per value
	nv := len(fd.vals)
	at := len(fd.idx)
	all := extend(fd.idx, at+len(x))
	idx := all[at:]
	idx = idx[:len(x)]
	full := false
values:
	for i, v := range x {
		u := math.Float64bits(v)
		// Fibonacci hashing: the top bits of the product depend on all
		// of u's bits.
		h := uint(u*0x9E3779B97F4A7C15) >> (64 - floatDictSlotBits)
		for {
			s := uint(slots[h&mask])
			if s == 0 {
				if nv == floatDictLimit {
					full = true
					break values
				}
				table[nv] = u
				nv++
				slots[h&mask] = uint16(nv)
				idx[i] = uint32(nv - 1)
				break
			}
			if table[(s-1)%floatDictLimit] == u {
				idx[i] = uint32(s - 1)
				break
			}
			h++
		}
	}
	fd.vals = table[:nv]
	if full {
		fd.idx = all[:at]
		return false
	}
	fd.idx = all
	return true
}
