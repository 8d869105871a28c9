package schema

import (
	"context"
	"encoding/binary"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/sondeclim/sondeclim/internal/benchcpu"
)

// footerLines decodes the Thrift compact FileMetaData at the end of the
// Parquet file at path into one "path=value" line per field (path: field
// ids, list positions in brackets), independently of the writer's
// encoder: a test-side reading of apache/thrift's compact protocol
// specification and parquet-format's file layout (footer, 4-byte length,
// "PAR1").
func footerLines(t *testing.T, path string) []string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) < 12 || string(b[:4]) != "PAR1" || string(b[len(b)-4:]) != "PAR1" {
		t.Fatalf("%s: not a Parquet file", path)
	}
	n := int(binary.LittleEndian.Uint32(b[len(b)-8:]))
	d := thriftReader{b: b[len(b)-8-n : len(b)-8]}
	var out []string
	d.structure("", &out)
	if d.p != len(d.b) || d.err != nil {
		t.Fatalf("%s: footer of %d bytes, %d decoded (%v)", path, len(d.b), d.p, d.err)
	}
	return out
}

type thriftReader struct {
	b   []byte
	p   int
	err error
}

func (d *thriftReader) uvarint() uint64 {
	v, n := binary.Uvarint(d.b[d.p:])
	if n <= 0 {
		d.err = fmt.Errorf("bad varint at %d", d.p)
		d.p = len(d.b)
		return 0
	}
	d.p += n
	return v
}

func (d *thriftReader) zigzag() int64 { u := d.uvarint(); return int64(u>>1) ^ -int64(u&1) }

func (d *thriftReader) value(t byte, path string, out *[]string) {
	if d.err != nil || d.p >= len(d.b) && t != 1 && t != 2 {
		d.err = fmt.Errorf("truncated at %s", path)
		return
	}
	switch t {
	case 1, 2: // field booleans
		*out = append(*out, path+"="+strconv.FormatBool(t == 1))
	case 3:
		*out = append(*out, path+"="+strconv.Itoa(int(int8(d.b[d.p]))))
		d.p++
	case 4, 5, 6:
		*out = append(*out, path+"="+strconv.FormatInt(d.zigzag(), 10))
	case 8:
		n := int(d.uvarint())
		*out = append(*out, path+"="+strconv.Quote(string(d.b[d.p:d.p+n])))
		d.p += n
	case 9:
		h := d.b[d.p]
		d.p++
		n, et := int(h>>4), h&15
		if n == 15 {
			n = int(d.uvarint())
		}
		for i := range n {
			d.value(et, fmt.Sprintf("%s[%d]", path, i), out)
		}
	case 12:
		d.structure(path+".", out)
	default:
		d.err = fmt.Errorf("type %d at %s", t, path)
	}
}

func (d *thriftReader) structure(prefix string, out *[]string) {
	last := int64(0)
	for d.err == nil && d.p < len(d.b) {
		h := d.b[d.p]
		d.p++
		if h == 0 {
			*out = append(*out, prefix+"end")
			return
		}
		id := last + int64(h>>4)
		if h>>4 == 0 {
			id = d.zigzag()
		}
		last = id
		d.value(h&15, prefix+strconv.FormatInt(id, 10), out)
	}
}

// placement matches the footer fields that depend on where the writer put
// its pages and how large they came out (parquet.thrift field ids:
// RowGroup 2 total_byte_size, 5 file_offset, 6 total_compressed_size;
// ColumnChunk 2 file_offset; ColumnMetaData 6 and 7 the chunk's sizes,
// 9 and 11 its page offsets), and the writer's name (FileMetaData 6).
var placement = regexp.MustCompile(`^4\[\d+\]\.(2|5|6)=|^4\[\d+\]\.1\[\d+\]\.(2|3\.(6|7|9|11))=|^6=`)

// sameFooter checks that the footers of the Parquet files want (written by
// the general writer, arrow-go's) and got are equal field by field except
// for the placement fields: schema, row groups and their row counts,
// encodings, codecs, statistics, key-value metadata, column orders.
func sameFooter(t *testing.T, want, got string) {
	t.Helper()
	keep := func(lines []string) []string {
		return slices.DeleteFunc(lines, func(s string) bool { return placement.MatchString(s) })
	}
	w, g := keep(footerLines(t, want)), keep(footerLines(t, got))
	if len(w) < 10 {
		t.Fatalf("%s: footer of %d fields", want, len(w))
	}
	for i := 0; i < max(len(w), len(g)); i++ {
		var a, b string
		if i < len(w) {
			a = w[i]
		}
		if i < len(g) {
			b = g[i]
		}
		if a != b {
			t.Errorf("footer field %d: general writer %q, own writer %q; before it: %q", i, a, b, w[max(0, i-8):i])
			return
		}
	}
}

// cells returns every column of the Parquet file at path as read back by
// arrow-go's reader, one text per value ("∅" for null, floats in full,
// dictionary values looked up), by column name.
func cells(t *testing.T, path string) map[string][]string {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: 1 << 16}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	defer tbl.Release()
	out := map[string][]string{}
	for i := range int(tbl.NumCols()) {
		col := tbl.Column(i)
		var v []string
		for _, ch := range col.Data().Chunks() {
			v = append(v, arrayCells(ch)...)
		}
		out[col.Name()] = v
	}
	return out
}

// arrayCells is cells for one Arrow array.
func arrayCells(a arrow.Array) []string {
	out := make([]string, a.Len())
	for i := range out {
		if a.IsNull(i) {
			out[i] = "∅"
			continue
		}
		switch x := a.(type) {
		case *array.Dictionary:
			out[i] = x.Dictionary().(*array.String).Value(x.GetValueIndex(i))
		case *array.Float64:
			out[i] = strconv.FormatFloat(x.Value(i), 'g', -1, 64)
		default:
			out[i] = x.ValueStr(i)
		}
	}
	return out
}

// duckRows checks with DuckDB (an independent reader) that the files a and
// b hold the same rows with the same column types, returning the count.
func duckRows(t *testing.T, a, b string) int {
	t.Helper()
	db := openDuck(t)
	desc := func(p string) string {
		rows, err := db.Query(fmt.Sprintf("DESCRIBE SELECT * FROM read_parquet('%s')", p))
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		var s []string
		for rows.Next() {
			var name, typ string
			var x1, x2, x3, x4 any
			if err := rows.Scan(&name, &typ, &x1, &x2, &x3, &x4); err != nil {
				t.Fatal(err)
			}
			s = append(s, name+" "+typ)
		}
		return strings.Join(s, ", ")
	}
	if da, db := desc(a), desc(b); da != db {
		t.Errorf("DuckDB column types differ:\n%s\n%s", da, db)
	}
	var n, diff1, diff2 int
	q := "SELECT count(*) FROM (SELECT * FROM read_parquet('%s') EXCEPT ALL SELECT * FROM read_parquet('%s'))"
	if err := db.QueryRow(fmt.Sprintf(q, a, b)).Scan(&diff1); err != nil {
		t.Fatal(err)
	}
	if err := db.QueryRow(fmt.Sprintf(q, b, a)).Scan(&diff2); err != nil {
		t.Fatal(err)
	}
	if err := db.QueryRow(fmt.Sprintf("SELECT count(*) FROM read_parquet('%s')", b)).Scan(&n); err != nil {
		t.Fatal(err)
	}
	if diff1 != 0 || diff2 != 0 {
		t.Errorf("DuckDB: %d rows only in the general writer's file, %d only in the own writer's", diff1, diff2)
	}
	return n
}

// checkOwnFile checks the levels file got, written by the store's own
// writer from rows, against the file want the general writer (arrow-go's
// pqarrow) wrote from the same rows: equal footers but for placement, and
// the values arrow-go's reader gives for got equal to the input rows
// column by column, and to those of want; DuckDB sees the same rows.
func checkOwnFile(t *testing.T, rows *Rows[LevelRow], want, got string) {
	t.Helper()
	sameFooter(t, want, got)
	arrs, n, err := rows.arrays()
	if err != nil {
		t.Fatal(err)
	}
	g, w := cells(t, got), cells(t, want)
	for i, c := range rows.cols {
		in := arrayCells(arrs[i])
		arrs[i].Release()
		if len(in) != n || !slices.Equal(g[c.Name], in) {
			t.Errorf("column %s: %d values read back, %d written; first difference at %d", c.Name, len(g[c.Name]), n, firstDiff(g[c.Name], in))
		}
		if !slices.Equal(w[c.Name], in) {
			t.Errorf("column %s: the general writer's file reads back otherwise (scaffolding broken)", c.Name)
		}
	}
	if m := duckRows(t, want, got); m != n {
		t.Errorf("DuckDB counts %d rows, %d written", m, n)
	}
}

// sameContent checks that the Parquet files a and b have equal footers but
// for placement and equal values read back by arrow-go, column by column.
func sameContent(t *testing.T, a, b string) {
	t.Helper()
	sameFooter(t, a, b)
	ca, cb := cells(t, a), cells(t, b)
	if len(ca) == 0 || len(ca) != len(cb) {
		t.Fatalf("%d and %d columns", len(ca), len(cb))
	}
	for name, v := range ca {
		if !slices.Equal(v, cb[name]) {
			t.Errorf("column %s: %d and %d values, first difference at %d", name, len(v), len(cb[name]), firstDiff(v, cb[name]))
		}
	}
}

func firstDiff(a, b []string) int {
	for i := range min(len(a), len(b)) {
		if a[i] != b[i] {
			return i
		}
	}
	return min(len(a), len(b))
}

// writeBoth writes rows with the own writer (got) and the general writer
// (want) in dir, the general writer told to write the float columns the
// own one gave a dictionary (dictFloats) the same way.
func writeBoth(t *testing.T, dir string, rows *Rows[LevelRow]) (want, got string) {
	t.Helper()
	want, got = filepath.Join(dir, "general.parquet"), filepath.Join(dir, "own.parquet")
	if err := WriteRows(got, TableLevels, rows, false); err != nil {
		t.Fatal(err)
	}
	sc := arrowSchema(TableLevels, rows.cols)
	if _, err := writePartition(dir, "general.parquet", arrowEncoder(sc, rows.cols, rows.arrays, dictFloatProps(t, got)...), false); err != nil {
		t.Fatal(err)
	}
	return want, got
}

// dictFloats returns the names of the double columns of the Parquet file
// at path whose chunks are dictionary-encoded, read by arrow-go's reader,
// and whether each of them is so in every row group, uncompressed.
func dictFloats(t *testing.T, path string) (names []string, consistent bool) {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	md := pf.MetaData()
	consistent = true
	for c := range md.Schema.NumColumns() {
		if md.Schema.Column(c).PhysicalType() != parquet.Types.Double {
			continue
		}
		var dict int
		for g := range md.NumRowGroups() {
			cc, err := md.RowGroup(g).ColumnChunk(c)
			if err != nil {
				t.Fatal(err)
			}
			if slices.Contains(cc.Encodings(), parquet.Encodings.RLEDict) {
				dict++
				consistent = consistent && cc.Compression() == compress.Codecs.Uncompressed
			}
		}
		if dict > 0 {
			names = append(names, md.Schema.Column(c).Name())
			consistent = consistent && dict == md.NumRowGroups()
		}
	}
	return names, consistent
}

// dictFloatProps returns the general writer's properties that make it
// write the float columns dictFloats finds in the own writer's file at
// path as the own writer did: with a dictionary, uncompressed.
func dictFloatProps(t *testing.T, path string) []parquet.WriterProperty {
	t.Helper()
	names, ok := dictFloats(t, path)
	if !ok {
		t.Errorf("%s: float columns %v dictionary-encoded in some row groups only, or compressed", path, names)
	}
	var props []parquet.WriterProperty
	for _, name := range names {
		// Uncompressed, the general writer would drop a dictionary that
		// is not smaller than the plain values; the own writer's rule
		// (floatDicts) is its own.
		props = append(props, parquet.WithDictionaryFor(name, true), parquet.WithCompressionFor(name, compress.Codecs.Uncompressed),
			parquet.WithDictionaryCostFallbackFor(name, false))
	}
	return props
}

// TestOwnWriterRealLevels: the levels files of real soundings (the 1950
// portion of station 74794, the Melbourne file and Sterling's 2016
// high-resolution soundings, PROVENANCE.md) written by the store's own
// writer hold what arrow-go's general writer wrote, read back by arrow-go
// and by DuckDB. The general writer's file is the reference.
func TestOwnWriterRealLevels(t *testing.T) {
	for _, name := range []string{"USM00074794-data-1950-portion.txt", "AUM00011035-data.txt.gz", "USM00072403-data-beg2016.txt.zip"} {
		all := realAnalysed(t, name)
		cols, err := NewLevelColumns(10)
		if err != nil {
			t.Fatal(err)
		}
		for i := range all {
			a := &all[i]
			appendLevelRows(cols, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
		}
		want, got := writeBoth(t, t.TempDir(), cols.rows)
		checkOwnFile(t, cols.rows, want, got)
		wi, _ := os.Stat(want)
		gi, _ := os.Stat(got)
		t.Logf("%s: %d levels, %d bytes (general writer %d)", name, cols.Len(), gi.Size(), wi.Size())
	}
}

// TestOwnWriterEdgeCases: no rows, one row, columns entirely null (the
// launch time, a statistics column, among them), nulls at the row-group
// boundary of rowGroupRows rows, a row count not a multiple of 8, runs
// and scattered nulls, several stations in one file, large and negative
// integers. Invented rows (unit scaffolding); the reference is arrow-go's
// general writer as in TestOwnWriterRealLevels.
func TestOwnWriterEdgeCases(t *testing.T) {
	t0 := time.Date(2003, 7, 1, 12, 0, 0, 0, time.UTC)
	kinds := []string{"surface", "standard", "significant", "wind_only", ""}
	flags := []string{"good", "suspect", "", "bad", "good", "good"}
	level := func(i int) LevelRow {
		p := 1000 - float64(i%90)*10
		if i%7 == 0 || (i/1000)%3 == 1 {
			p = math.NaN()
		}
		r := LevelRow{StationID: "ZQ" + strconv.Itoa(i/50000), LaunchTime: t0.Add(time.Duration(i/90) * 12 * time.Hour),
			Year: 2003, Index: int32(i % 90), Kind: kinds[i%5], SourceLine: int64(i)*1_000_003 - 5_000_000_000, PressureHPa: p,
			HeightM: float64(i) * 31.5, HeightDerived: i%3 == 0, ThetaK: 290 + float64(i%90)*0.37, TemperatureC: -float64(i % 17),
			ElapsedS: math.NaN(), TemperatureStatus: "reported", WindQC: flags[i%6], HumidityQC: flags[(i/9)%6]}
		if i%11 == 0 {
			r.LaunchTime = time.Time{}
		}
		return r
	}
	cases := []struct {
		name string
		n    int
		edit func(*LevelRow, int)
	}{
		{"empty", 0, nil},
		{"one row", 1, nil},
		{"one row, no launch time", 1, func(r *LevelRow, _ int) { r.LaunchTime = time.Time{} }},
		{"seven rows", 7, nil},
		{"all null", 300, func(r *LevelRow, _ int) {
			*r = LevelRow{StationID: "ZQ1", Year: 1, PressureHPa: math.NaN(), HeightM: math.NaN(), HeightAGLM: math.NaN(),
				TemperatureC: math.NaN(), DewpointC: math.NaN(), ThetaK: math.NaN(), ElapsedS: math.NaN(),
				LatDispDeg: math.NaN(), LonDispDeg: math.NaN(), RelHumidityPct: math.NaN(), WindDirDeg: math.NaN(),
				WindSpeedMS: math.NaN(), MixingRatioGKg: math.NaN()}
		}},
		{"mixed", 5003, nil},
		{"signed zeros", 300, func(r *LevelRow, i int) {
			// 0 and -0 are two values (the dictionary keys on the bits).
			r.TemperatureC, r.DewpointC = math.Copysign(0, float64(i%2)-0.5), float64(i%3)
		}},
		{"two row groups", rowGroupRows + 1237, func(r *LevelRow, i int) {
			if i >= rowGroupRows-3 && i < rowGroupRows+5 {
				r.PressureHPa, r.WindQC, r.LaunchTime = math.NaN(), "", time.Time{}
			}
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			rows, err := NewRows[LevelRow](tc.n)
			if err != nil {
				t.Fatal(err)
			}
			for i := range tc.n {
				r := level(i)
				if tc.edit != nil {
					tc.edit(&r, i)
				}
				rows.Append(r)
			}
			want, got := writeBoth(t, t.TempDir(), rows)
			checkOwnFile(t, rows, want, got)
		})
	}
}

// TestOwnWriterEncodings holds the hybrid and delta encoders to values
// decoded by hand from the rules of parquet-format's Encodings.md.
func TestOwnWriterEncodings(t *testing.T) {
	// RLE/bit-packing hybrid, bit width 3: eight 5s are one RLE run
	// (header 8<<1 = 0x10, value 0x05); 0..7 one bit-packed group (header
	// 1<<1|1 = 0x03), packed LSB first: 0b10001000, 0b11000110, 0b11111010
	// = 0x88 0xC6 0xFA (Encodings.md's own example of bit-packing 0..7).
	got := appendHybrid(nil, []uint32{5, 5, 5, 5, 5, 5, 5, 5, 0, 1, 2, 3, 4, 5, 6, 7}, 3)
	hybrid := got
	if want := []byte{0x10, 0x05, 0x03, 0x88, 0xC6, 0xFA}; !slices.Equal(hybrid, want) {
		t.Errorf("hybrid: % x, want % x", hybrid, want)
	}
	// Definition levels of 19 rows, all set: one RLE run of 19 ones
	// (header 38 = 0x26, value 1), after the 4-byte length 2.
	bits := []byte{0xff, 0xff, 0xff}
	if got := appendDefLevels(nil, bits, 0, 19); !slices.Equal(got, []byte{2, 0, 0, 0, 0x26, 1}) {
		t.Errorf("definition levels, none null: % x", got)
	}
	// 10 rows, row 2 null: one bit-packed run of two groups (header 0x05),
	// the bitmap bytes 0xfb and 0x03 (rows 8 and 9; padding zero).
	if got := appendDefLevels(nil, []byte{0xfb, 0xff}, 0, 10); !slices.Equal(got, []byte{3, 0, 0, 0, 0x05, 0xfb, 0x03}) {
		t.Errorf("definition levels, one null: % x", got)
	}
	// 16 rows, the first 3 null: levels 0 0 0 1 1 1 1 1 bit-packed (header
	// 0x03, 0b11111000), then the 8 ones left as an RLE run (0x10, 1).
	if got := appendDefLevels(nil, []byte{0xf8, 0xff}, 0, 16); !slices.Equal(got, []byte{4, 0, 0, 0, 0x03, 0xf8, 0x10, 1}) {
		t.Errorf("definition levels, three nulls first: % x", got)
	}
	// Rows 8..27 of a bitmap whose rows 8 and 27 are null: levels 0, 18
	// ones, 0. Runs start and end inside bitmap bytes: a bit-packed group
	// 0 1 1 1 1 1 1 1 (0x03, 0xfe), the 11 ones left as an RLE run (22 =
	// 0x16, 1), a last group of one 0, padded (0x03, 0x00).
	got = appendDefLevels(nil, []byte{0, 0xfe, 0xff, 0xf7}, 8, 28)
	if want := []byte{6, 0, 0, 0, 0x03, 0xfe, 0x16, 1, 0x03, 0x00}; !slices.Equal(got, want) {
		t.Errorf("definition levels, unaligned runs: % x, want % x", got, want)
	}
	// DELTA_BINARY_PACKED of 1, 2, 3, 4, 5 (Encodings.md's first
	// example): header 128, 4 miniblocks, 5 values, first value 1 (zigzag
	// 2); the block's min delta 1 (zigzag 2), bit widths 0, 0, 0, 0, no
	// miniblock bodies.
	if got := appendDelta(nil, []int32{1, 2, 3, 4, 5}); !slices.Equal(got, []byte{0x80, 0x01, 4, 5, 2, 2, 0, 0, 0, 0}) {
		t.Errorf("delta: % x", got)
	}
	// Its second example, 7, 5, 3, 1, 2, 3, 4, 5: deltas -2 -2 -2 1 1 1 1,
	// min delta -2 (zigzag 3), relative 0 0 0 3 3 3 3 in 2 bits:
	// 0b11000000, 0b00111111 (the eighth slot is padding), then zero
	// padding to 32 values (8 bytes in all).
	got = appendDelta(nil, []int64{7, 5, 3, 1, 2, 3, 4, 5})
	want := []byte{0x80, 0x01, 4, 8, 14, 3, 2, 0, 0, 0, 0xC0, 0x3F, 0, 0, 0, 0, 0, 0}
	if !slices.Equal(got, want) {
		t.Errorf("delta: % x, want % x", got, want)
	}
	// 0, 2^40, 2^40: deltas 2^40 and 0, min delta 0 (zigzag 0), the
	// first miniblock 41 bits wide: 32·41 bits = 164 bytes holding 2^40
	// in its first 41 bits (byte 5 = 0x01), the rest zero.
	got = appendDelta(nil, []int64{0, 1 << 40, 1 << 40})
	want = append([]byte{0x80, 0x01, 4, 3, 0, 0, 41, 0, 0, 0}, make([]byte, 164)...)
	want[10+5] = 0x01
	if !slices.Equal(got, want) {
		t.Errorf("delta, 41 bits: % x, want % x", got, want)
	}
}

// TestPackWidths: the bit-packed runs of the hybrid (Encodings.md, "Run
// Length Encoding / Bit-Packing Hybrid": values packed from the least
// significant bit of each byte) of every width from 1 to 32, against a
// packer that sets one bit at a time. The values are invented: a multiplicative
// sequence cut to the width, so that every bit position takes both
// values (unit scaffolding).
func TestPackWidths(t *testing.T) {
	for width := uint(1); width <= 32; width++ {
		for _, n := range []int{8, 16, 24, 64, 200} {
			v := make([]uint32, n)
			for i := range v {
				v[i] = uint32((uint64(i+1) * 0x9E3779B97F4A7C15 >> 17) & (1<<width - 1))
			}
			want := make([]byte, n*int(width)/8)
			for i, x := range v {
				for k := range width {
					if x>>k&1 != 0 {
						bit := i*int(width) + int(k)
						want[bit/8] |= 1 << (bit % 8)
					}
				}
			}
			if got := packGroups([]byte{0xAA}, v, width); got[0] != 0xAA || !slices.Equal(got[1:], want) {
				t.Errorf("width %d, %d values: % x, want % x", width, n, got[1:], want)
			}
		}
	}
}

// TestRunEnd: the end of a run found eight values at a time is the one a
// value-by-value scan finds, for runs of every length from 1 to 40 at
// every offset of a sequence of 16-bit and 32-bit values (invented: runs
// of one value, then another that differs in one byte only, unit
// scaffolding).
func TestRunEnd(t *testing.T) {
	naive := func(v []uint32, i int) int {
		j := i + 1
		for j < len(v) && v[j] == v[i] {
			j++
		}
		return j
	}
	for run := 1; run <= 40; run++ {
		for pad := range 10 {
			v := make([]uint32, pad+run+9)
			for k := range v {
				v[k] = 0x1234
				if k < pad || k >= pad+run {
					v[k] = 0x1235 + uint32(k%2)<<16
				}
			}
			v16 := make([]int16, len(v))
			for k, x := range v {
				v16[k] = int16(x)
			}
			for i := range v {
				if got, want := runEnd(v, i), naive(v, i); got != want {
					t.Errorf("32-bit, run %d after %d, from %d: end %d, want %d", run, pad, i, got, want)
				}
				want16 := i + 1
				for want16 < len(v16) && v16[want16] == v16[i] {
					want16++
				}
				if got := runEnd(v16, i); got != want16 {
					t.Errorf("16-bit, run %d after %d, from %d: end %d, want %d", run, pad, i, got, want16)
				}
			}
		}
	}
}

// TestSplitFloats: BYTE_STREAM_SPLIT (Encodings.md: byte k of every
// value, in order, forms stream k) of values whose bytes are worked by
// hand: 1.0 is 0x3FF0000000000000, -2.0 0xC000000000000000, 0.1
// 0x3FB999999999999A. Eleven values, past the transposed groups of 8.
func TestSplitFloats(t *testing.T) {
	vals := []float64{1, -2, 0.1, 1, 1, -2, 0.1, 0.1, -2, 1, 0.1}
	bytesOf := map[float64][8]byte{
		1:   {0, 0, 0, 0, 0, 0, 0xF0, 0x3F},
		-2:  {0, 0, 0, 0, 0, 0, 0, 0xC0},
		0.1: {0x9A, 0x99, 0x99, 0x99, 0x99, 0x99, 0xB9, 0x3F},
	}
	var want []byte
	for k := range 8 {
		for _, v := range vals {
			want = append(want, bytesOf[v][k])
		}
	}
	if got := appendSplitFloats([]byte{7}, vals, nil, 0, nil); !slices.Equal(got, append([]byte{7}, want...)) {
		t.Errorf("split: % x\nwant % x", got[1:], want)
	}
	// Every count from 0 to 40 (whole groups of 8 and remainders), the
	// values' bits invented (unit scaffolding), against byte k of value
	// j at k·n + j.
	for n := range 41 {
		x := make([]float64, n)
		for j := range x {
			x[j] = math.Float64frombits(uint64(j+1) * 0x9E3779B97F4A7C15)
		}
		want := make([]byte, 8*n)
		for j, v := range x {
			for k := range 8 {
				want[k*n+j] = byte(math.Float64bits(v) >> (8 * k))
			}
		}
		if got := appendSplitFloats(nil, x, nil, 0, nil); !slices.Equal(got, want) {
			t.Errorf("%d values: % x\nwant % x", n, got, want)
		}
	}
}

// TestFloatDictionaryEncoding holds the float dictionary's parts to bytes
// and indices worked by hand from parquet-format's Encodings.md ("Bit-
// packed": values packed from the least significant bit of each byte;
// "Dictionary Encoding": the data page's bit width in one byte, then the
// RLE/bit-packing hybrid).
func TestFloatDictionaryEncoding(t *testing.T) {
	// Eight 12-bit indices, one bit-packed group (header 1<<1|1 = 0x03)
	// of 12 bytes, two values in each three bytes: a&0xff,
	// a>>8 | (b&0xf)<<4, b>>4. The group crosses the packer's 64 bits.
	v := []uint32{0x123, 0x456, 0x789, 0xABC, 0xDEF, 0x001, 0x002, 0xFFF}
	want := []byte{12, 0x03, 0x23, 0x61, 0x45, 0x89, 0xC7, 0xAB, 0xEF, 0x1D, 0x00, 0x02, 0xF0, 0xFF}
	if got := appendIndices(nil, v, 4096); !slices.Equal(got, want) {
		t.Errorf("12-bit indices: % x, want % x", got, want)
	}
	// A ninth value makes two groups (header 0x05), the second the value
	// 7 and seven zeros of padding: 0x07 and 11 zero bytes.
	want = append([]byte{12, 0x05}, want[2:]...)
	want = append(want, 0x07, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0)
	if got := appendIndices(nil, append(v, 7), 4000); !slices.Equal(got, want) {
		t.Errorf("nine 12-bit indices: % x, want % x", got, want)
	}
	// The dictionary of 2.5 2.5 -0 0 7 2.5 -0: the distinct values in
	// order of first appearance, -0 and 0 apart.
	var fd floatDict
	negZero := math.Copysign(0, -1)
	fd.reset()
	if !fd.add([]float64{2.5, 2.5, negZero}) || !fd.add([]float64{0, 7, 2.5, negZero}) {
		t.Fatal("five values: over the limit")
	}
	wantVals := []uint64{math.Float64bits(2.5), math.Float64bits(negZero), 0, math.Float64bits(7)}
	if !slices.Equal(fd.vals, wantVals) || !slices.Equal(fd.idx, []uint32{0, 0, 1, 2, 3, 0, 1}) {
		t.Errorf("dictionary %x, indices %v", fd.vals, fd.idx)
	}
	// floatDictLimit distinct values fit, one more does not.
	x := make([]float64, floatDictLimit+1)
	for i := range x {
		x[i] = float64(i) * 0.1
	}
	fd.reset()
	if !fd.add(x[:floatDictLimit]) || len(fd.vals) != floatDictLimit {
		t.Errorf("%d distinct values: refused or %d kept", floatDictLimit, len(fd.vals))
	}
	if fd.reset(); fd.add(x) {
		t.Errorf("%d distinct values accepted", len(x))
	}
}

// TestFloatDictionaryChoice: the float columns written with a dictionary
// are those of few distinct values, counted here with a Go map. Sterling
// 2016 (PROVENANCE.md): wind direction 361, wind speed 790, relative
// humidity 999, temperature 1,100 and dewpoint 2,444 distinct values get
// one; elapsed time (7,140), pressure (37,689), the heights, theta and the
// mixing ratio (over 28,000) keep byte-stream split, as do the all-null
// displacements. Invented columns of 4,096 and 4,097 distinct values in
// 70,000 rows test the limit (unit scaffolding).
func TestFloatDictionaryChoice(t *testing.T) {
	all := realAnalysed(t, "USM00072403-data-beg2016.txt.zip")
	cols, err := NewLevelColumns(len(all) * 200)
	if err != nil {
		t.Fatal(err)
	}
	for i := range all {
		a := &all[i]
		appendLevelRows(cols, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
	}
	distinct := map[string]int{}
	arrs, _, err := cols.rows.arrays()
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range cols.rows.cols {
		if f, ok := arrs[i].(*array.Float64); ok {
			seen := map[uint64]bool{}
			for k := range f.Len() {
				if f.IsValid(k) {
					seen[math.Float64bits(f.Value(k))] = true
				}
			}
			distinct[c.Name] = len(seen)
		}
		arrs[i].Release()
	}
	wantDist := map[string]int{"wind_direction_deg": 361, "wind_speed_ms": 790, "relative_humidity_pct": 999,
		"temperature_c": 1100, "dewpoint_c": 2444, "elapsed_s": 7140, "pressure_hpa": 37689}
	for name, n := range wantDist {
		if distinct[name] != n {
			t.Errorf("%s: %d distinct values counted, %d expected", name, distinct[name], n)
		}
	}
	path := filepath.Join(t.TempDir(), "levels.parquet")
	if err := WriteRows(path, TableLevels, cols.rows, false); err != nil {
		t.Fatal(err)
	}
	got, ok := dictFloats(t, path)
	want := []string{"temperature_c", "dewpoint_c", "relative_humidity_pct", "wind_direction_deg", "wind_speed_ms"}
	if !slices.Equal(got, want) || !ok {
		t.Errorf("dictionary columns %v (every row group, uncompressed: %v), want %v", got, ok, want)
	}

	rows, err := NewRows[LevelRow](70000)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 70000 {
		rows.Append(LevelRow{StationID: "ZQ1", Year: 2001, WindDirDeg: float64(i % 4096), WindSpeedMS: float64(i%4097) / 10,
			PressureHPa: math.NaN(), HeightM: math.NaN(), HeightAGLM: math.NaN(), TemperatureC: math.NaN(), DewpointC: math.NaN(),
			ThetaK: math.NaN(), ElapsedS: math.NaN(), LatDispDeg: math.NaN(), LonDispDeg: math.NaN(), RelHumidityPct: math.NaN(),
			MixingRatioGKg: math.NaN()})
	}
	want2, got2 := writeBoth(t, t.TempDir(), rows)
	if names, _ := dictFloats(t, got2); !slices.Equal(names, []string{"wind_direction_deg"}) {
		t.Errorf("limit: dictionary columns %v, want wind_direction_deg only", names)
	}
	checkOwnFile(t, rows, want2, got2)
}

// checkSlice writes rows of table with arrow-go's general writer and with
// the store's own, and checks the two files with sameContent and DuckDB.
func checkSlice[T any](t *testing.T, table string, rows []T) {
	t.Helper()
	dir := t.TempDir()
	cols, err := Columns[T]()
	if err != nil {
		t.Fatal(err)
	}
	idx := make([]int, len(rows))
	for i := range idx {
		idx[i] = i
	}
	arrays := func() ([]arrow.Array, int, error) {
		a, err := columnArrays(cols, rows, idx)
		return a, len(rows), err
	}
	want, got := filepath.Join(dir, "general.parquet"), filepath.Join(dir, "own.parquet")
	if err := WriteFile(got, table, rows, false); err != nil {
		t.Fatal(err)
	}
	if _, err := writePartition(dir, "general.parquet", arrowEncoder(arrowSchema(table, cols), cols, arrays, dictFloatProps(t, got)...), false); err != nil {
		t.Fatal(err)
	}
	sameContent(t, want, got)
	if n := duckRows(t, want, got); n != len(rows) {
		t.Errorf("%s: DuckDB counts %d rows, %d written", table, n, len(rows))
	}
}

// TestOwnWriterAllTables: every table the engine writes, filled from real
// soundings (the three files of TestOwnWriterRealLevels) by AppendSounding
// and written from slices by the store's own writer, holds what arrow-go's
// general writer wrote from the same rows. The afternoon rows, which the
// engine pairs across soundings, are invented here (unit scaffolding), as
// are the allKinds rows of sampleRows, which hold every column kind.
func TestOwnWriterAllTables(t *testing.T) {
	var p PartRows
	var levels RowSlice[LevelRow]
	p.Levels = &levels
	for _, name := range []string{"USM00074794-data-1950-portion.txt", "AUM00011035-data.txt.gz", "USM00072403-data-beg2016.txt.zip"} {
		for _, a := range realAnalysed(t, name) {
			row := AppendSounding(&p, a.s, a.rep, &a.res)
			row.SoundingHash = fmt.Sprintf("%064x", len(p.Soundings))
			p.Soundings = append(p.Soundings, row)
		}
	}
	for i, s := range p.Soundings[:400] {
		st := []string{"ok", "undefined", "surface"}[i%3]
		p.Afternoon = append(p.Afternoon, AfternoonRow{StationID: s.StationID, Year: s.Year, LocalDate: s.NominalTime.Truncate(24 * time.Hour),
			MorningLaunch: s.LaunchTime, TmaxC: float64(i%40) - 5.5, TmaxSource: "later_sounding", HeightAGLM: float64(i * 7), Status: st,
			Note: strings.Repeat("n", i%3)})
	}
	if len(p.Soundings) < 900 || len(p.QCFindings) < 100 || len(p.Inversions) < 100 {
		t.Fatalf("%d soundings, %d findings, %d inversions: too few", len(p.Soundings), len(p.QCFindings), len(p.Inversions))
	}
	checkSlice(t, TableSoundings, p.Soundings)
	checkSlice(t, TableLevels, levels)
	checkSlice(t, TableDescentLevels, levels[:5000])
	checkSlice(t, TableInversions, p.Inversions)
	checkSlice(t, TableMixedLayers, p.MixedLayers)
	checkSlice(t, TableMixingHeights, p.MixingHeights)
	checkSlice(t, TableQCFindings, p.QCFindings)
	checkSlice(t, TableAfternoon, p.Afternoon)
	checkSlice(t, "all_kinds", sampleRows())
	checkSlice(t, "all_kinds", []allKinds{})
}

// BenchmarkWriteRealLevels writes the levels of a real station-year (the
// Sterling 2016 file, PROVENANCE.md: 662 soundings, 131,306 levels) as one
// file with the store's own writer, without sync, as the ingest pipeline
// does; it reports the processor time per file and the file's size.
func BenchmarkWriteRealLevels(b *testing.B) {
	all := realAnalysed(b, "USM00072403-data-beg2016.txt.zip")
	cols, err := NewLevelColumns(len(all) * 200)
	if err != nil {
		b.Fatal(err)
	}
	for i := range all {
		a := &all[i]
		appendLevelRows(cols, a.s, a.rep, &a.res, a.s.LaunchTime.UTC(), int32(a.s.NominalTime.Year()))
	}
	path := filepath.Join(b.TempDir(), "levels", "part.parquet")
	cpu := benchcpu.Used()
	for b.Loop() {
		if err := WriteRows(path, TableLevels, cols.rows, false); err != nil {
			b.Fatal(err)
		}
	}
	benchcpu.PerOp(b, cpu)
	st, err := os.Stat(path)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(st.Size()), "file-bytes")
}
