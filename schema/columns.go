package schema

import (
	"fmt"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"math"
	"math/bits"
	"reflect"
	"regexp"
	"strings"
	"time"
	"unsafe"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// Version is the store's schema version. It is written into every Parquet
// file's key-value metadata under VersionKey. Increment it whenever a column
// is removed, renamed or changes type or meaning.
const Version = 2

// Metadata keys written into every Parquet file of the store.
const (
	VersionKey = "sondeclim.schema_version" // decimal schema version
	TableKey   = "sondeclim.table"          // table name, e.g. "soundings"
	DocKey     = "description"              // Arrow field metadata: the column's doc tag
)

// Column describes one column of a store table, derived from one field of a
// row struct.
type Column struct {
	Name     string         // column name, from the field's `col` tag
	Type     arrow.DataType // Arrow type written to Parquet
	Nullable bool           // whether the column can hold null (NaN floats, nil pointers, zero times)
	Doc      string         // units first, then meaning, from the field's `doc` tag

	field  int            // index of the struct field
	offset uintptr        // byte offset of the field in the struct
	kind   fieldKind      // how values are appended
	enum   map[string]int // kindEnum: index of each allowed value ("" is null)
	dict   *array.String  // kindEnum: the allowed values, in tag order
	// dictList is dict as Go strings, made by enumList when first needed
	// (a Column is not shared between goroutines: Columns makes new ones).
	dictList []string
}

// keyType is the Arrow type kindKey columns are written as; they are read
// back (by DuckDB) as text, like any dictionary-encoded string column.
var keyType = &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}

// writeType is the Arrow type the column is written as: its Type, except
// for the station_id key, whose text is written through a dictionary.
func (c *Column) writeType() arrow.DataType {
	if c.kind == kindKey {
		return keyType
	}
	return c.Type
}

// fieldKind enumerates the Go field types the writer supports.
type fieldKind int

const (
	kindString fieldKind = iota
	kindBool
	kindInt32
	kindInt64
	kindFloat64
	kindTime
	kindPtrBool
	kindPtrInt32
	kindPtrString
	kindEnum // a string field tagged enum:"a,b,…" or naming a dictionary vocabulary: written as a dictionary column
	// kindKey is the station_id string column: one value per file in the
	// store's partitioned files, so it is written as a dictionary array
	// built here (the last value remembered) rather than hashed value by
	// value in the Parquet writer's dictionary encoder.
	kindKey
)

var (
	timeType   = reflect.TypeFor[time.Time]()
	columnName = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)
	// timestampUTC is the Arrow type of time.Time columns: microseconds
	// since the Unix epoch, adjusted to UTC.
	timestampUTC = &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
)

// kindOf maps a Go field type to its fieldKind, Arrow type and nullability.
func kindOf(t reflect.Type) (fieldKind, arrow.DataType, bool, bool) {
	if t == timeType {
		return kindTime, timestampUTC, true, true
	}
	switch t.Kind() {
	case reflect.String:
		return kindString, arrow.BinaryTypes.String, false, true
	case reflect.Bool:
		return kindBool, arrow.FixedWidthTypes.Boolean, false, true
	case reflect.Int32:
		return kindInt32, arrow.PrimitiveTypes.Int32, false, true
	case reflect.Int64:
		return kindInt64, arrow.PrimitiveTypes.Int64, false, true
	case reflect.Float64:
		return kindFloat64, arrow.PrimitiveTypes.Float64, true, true
	case reflect.Pointer:
		switch t.Elem().Kind() {
		case reflect.Bool:
			return kindPtrBool, arrow.FixedWidthTypes.Boolean, true, true
		case reflect.Int32:
			return kindPtrInt32, arrow.PrimitiveTypes.Int32, true, true
		case reflect.String:
			return kindPtrString, arrow.BinaryTypes.String, true, true
		}
	}
	return 0, nil, false, false
}

// Columns returns the columns of the table whose rows are values of the
// struct type T, in field order.
//
// Every exported field must carry a `col` tag (a snake_case name, unique
// within T) and may carry a `doc` tag; a field tagged `col:"-"` is skipped,
// and unexported fields are ignored. Supported field types and their Arrow
// types: string (utf8), bool, int32, int64, float64 (NaN is written as
// null), time.Time (timestamp in µs, UTC; the zero time is written as null),
// *bool, *int32 and *string (nil is written as null). Named types with these
// underlying kinds are accepted. Any other field type, an embedded field, a
// missing or malformed tag, or a T that is not a struct is an error naming
// the field.
func Columns[T any]() ([]Column, error) {
	return columnsOf(reflect.TypeFor[T]())
}

func columnsOf(t reflect.Type) ([]Column, error) {
	if t == nil || t.Kind() != reflect.Struct {
		return nil, fmt.Errorf("schema: row type %v is not a struct", t)
	}
	var cols []Column
	seen := make(map[string]string)
	for i := range t.NumField() {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		where := t.Name() + "." + f.Name
		if f.Anonymous {
			return nil, fmt.Errorf("schema: %s: embedded fields are not supported", where)
		}
		name, ok := f.Tag.Lookup("col")
		if name == "-" {
			continue
		}
		if !ok || !columnName.MatchString(name) {
			return nil, fmt.Errorf("schema: %s: missing or malformed col tag %q (want snake_case)", where, name)
		}
		if prev, dup := seen[name]; dup {
			return nil, fmt.Errorf("schema: %s: column %q already used by %s", where, name, prev)
		}
		seen[name] = where
		kind, typ, nullable, ok := kindOf(f.Type)
		if !ok {
			return nil, fmt.Errorf("schema: %s: unsupported Go type %v for column %q", where, f.Type, name)
		}
		c := Column{Name: name, Type: typ, Nullable: nullable, Doc: f.Tag.Get("doc"), field: i, offset: f.Offset, kind: kind}
		values, isEnum := f.Tag.Lookup("enum")
		var list []string
		if isEnum {
			list = strings.Split(values, ",")
		}
		if vname, ok := f.Tag.Lookup("values"); ok {
			v, ok := vocabOf(vname)
			if !ok || isEnum {
				return nil, fmt.Errorf("schema: %s: unknown vocabulary %q in values tag, or an enum tag beside it", where, vname)
			}
			c.Doc = strings.ReplaceAll(c.Doc, "{values}", v.doc)
			isEnum, list, values = v.dict, v.values, strings.Join(v.values, ",")
		}
		if isEnum {
			if kind != kindString || values == "" {
				return nil, fmt.Errorf("schema: %s: an enum tag needs a string field and at least one value", where)
			}
			c.kind, c.Nullable, c.enum = kindEnum, true, map[string]int{}
			c.Type = &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}
			for k, v := range list {
				c.enum[v] = k
			}
			b := array.NewStringBuilder(memory.DefaultAllocator)
			b.AppendValues(list, nil)
			c.dict = b.NewStringArray()
			b.Release()
		}
		if c.kind == kindString && c.Name == StationColumn {
			c.kind = kindKey
		}
		cols = append(cols, c)
	}
	if len(cols) == 0 {
		return nil, fmt.Errorf("schema: row type %v has no columns", t)
	}
	return cols, nil
}

// arrowSchema returns the Arrow schema of cols with each column's doc in the
// field metadata under DocKey and the version and table name in the schema
// metadata (which the Parquet writer copies into the file's key-value
// metadata).
func arrowSchema(table string, cols []Column) *arrow.Schema {
	fields := make([]arrow.Field, len(cols))
	for i, c := range cols {
		fields[i] = arrow.Field{
			Name: c.Name, Type: c.writeType(), Nullable: c.Nullable,
			Metadata: arrow.NewMetadata([]string{DocKey}, []string{c.Doc}),
		}
	}
	md := arrow.NewMetadata([]string{VersionKey, TableKey}, []string{fmt.Sprint(Version), table})
	return arrow.NewSchema(fields, &md)
}

// colBuf is one column of a record batch under construction: plain Go
// memory that becomes the Arrow array's buffers without a copy. Its slices
// hold exactly n rows (n+1 string offsets); grow extends them.
type colBuf struct {
	n       int
	valid   validity
	f64     []float64
	i64     []int64
	i32     []int32 // int32 values, or string offsets (n+1)
	i16     []int16 // enum indices
	bits    []byte  // bool values
	data    []byte  // string bytes
	last    string  // enum: the last value looked up
	lastIdx int16
	keys    []string         // kindKey: the distinct values, in order of appearance (indices in i32)
	keyIdx  map[string]int32 // kindKey: index of each value once there is more than one
}

func newColBuf(c *Column, n int) *colBuf {
	b := &colBuf{lastIdx: -1}
	if c.kind == kindString || c.kind == kindPtrString {
		b.i32 = []int32{0}
		b.data = make([]byte, 0, 16*n)
	}
	b.grow(c, n)
	return b
}

// extend returns s with length n, reallocating (doubling) when its
// capacity is too small; new elements are zero.
func extend[E any](s []E, n int) []E {
	if n <= cap(s) {
		s = s[:n]
		return s
	}
	t := make([]E, n, max(n, 2*cap(s)))
	copy(t, s)
	return t
}

// allValid is a validity bitmap of rows all valid, copied to grow one.
var allValid = func() (ones [256]byte) {
	for i := range ones {
		ones[i] = 0xff
	}
	return ones
}()

// grow makes room for n rows in all.
func (b *colBuf) grow(c *Column, n int) {
	if c.Nullable {
		old := len(b.valid.bits)
		b.valid.bits = extend(b.valid.bits, bitmapBytes(n))
		for add := b.valid.bits[min(old, len(b.valid.bits)):]; len(add) > 0; {
			add = add[copy(add, allValid[:]):]
		}
	}
	switch c.kind {
	case kindString, kindPtrString:
		b.i32 = extend(b.i32, n+1)
	case kindBool, kindPtrBool:
		b.bits = extend(b.bits, bitmapBytes(n))
	case kindInt32, kindPtrInt32, kindKey:
		b.i32 = extend(b.i32, n)
	case kindInt64, kindTime:
		b.i64 = extend(b.i64, n)
	case kindFloat64:
		b.f64 = extend(b.f64, n)
	case kindEnum:
		b.i16 = extend(b.i16, n)
	}
	b.n = n
}

// fillColumn stores field c of rows[idx...] at positions base… of b.
// Fields are read through their byte offset (the row type was checked by
// Columns, so the offset and the field's Go type agree); NaN and nil
// become nulls and a zero time.Time is null. An enum value outside the
// column's list is an error.
//
// Callers fill all columns block by block (a few hundred rows at a time),
// so that the rows being read stay in the processor's cache while every
// column takes its values from them: filling a whole column at a time
// read the full row slice once per column.
func fillColumn[T any](c *Column, b *colBuf, rows []T, idx []int, base int) error {
	at := func(i int) unsafe.Pointer { return unsafe.Add(unsafe.Pointer(&rows[i]), c.offset) }
	switch c.kind {
	case kindString, kindPtrString:
		for k, i := range idx {
			if c.kind == kindString {
				b.data = append(b.data, *(*string)(at(i))...)
			} else if p := *(**string)(at(i)); p == nil {
				b.valid.null(base + k)
			} else {
				b.data = append(b.data, *p...)
			}
			if len(b.data) > math.MaxInt32 {
				return fmt.Errorf("column %s: more than %d bytes of text in one Arrow string array", c.Name, math.MaxInt32)
			}
			b.i32[base+k+1] = int32(len(b.data))
		}
	case kindBool, kindPtrBool:
		for k, i := range idx {
			var v bool
			if c.kind == kindBool {
				v = *(*bool)(at(i))
			} else if p := *(**bool)(at(i)); p == nil {
				b.valid.null(base + k)
			} else {
				v = *p
			}
			if v {
				b.bits[(base+k)/8] |= 1 << ((base + k) % 8)
			}
		}
	case kindInt32:
		for k, i := range idx {
			b.i32[base+k] = *(*int32)(at(i))
		}
	case kindPtrInt32:
		for k, i := range idx {
			if p := *(**int32)(at(i)); p == nil {
				b.valid.null(base + k)
			} else {
				b.i32[base+k] = *p
			}
		}
	case kindInt64:
		for k, i := range idx {
			b.i64[base+k] = *(*int64)(at(i))
		}
	case kindFloat64:
		out := b.f64[base : base+len(idx)]
		for k, i := range idx {
			if x := *(*float64)(at(i)); x != x {
				b.valid.null(base + k)
			} else {
				out[k] = x
			}
		}
	case kindTime:
		for k, i := range idx {
			if t := (*time.Time)(at(i)); t.IsZero() {
				b.valid.null(base + k)
			} else {
				b.i64[base+k] = t.UnixMicro()
			}
		}
	case kindKey:
		for k, i := range idx {
			v := *(*string)(at(i))
			if n := len(b.keys); n == 0 || v != b.keys[n-1] {
				b.i32[base+k] = b.keyIndex(v)
			} else {
				b.i32[base+k] = int32(n - 1)
			}
		}
	case kindEnum:
		// The dictionary is the tag's fixed list, so values are stored as
		// indices: no hashing here or in the Parquet writer. Values repeat
		// (flags are mostly "good"), so the last lookup is remembered.
		for k, i := range idx {
			v := *(*string)(at(i))
			switch {
			case v == "":
				b.valid.null(base + k)
				continue
			case v == b.last && b.lastIdx >= 0:
			default:
				m, ok := c.enum[v]
				if !ok {
					return fmt.Errorf("column %s: value %q is not one of its enum values", c.Name, v)
				}
				b.last, b.lastIdx = v, int16(m)
			}
			b.i16[base+k] = b.lastIdx
		}
	default:
		return fmt.Errorf("column %s: unsupported kind %d", c.Name, c.kind)
	}
	return nil
}

// keyIndex returns the dictionary index of the kindKey value v, adding it
// when new. The value last added is checked by the caller; a map is made
// only when a second value appears.
func (b *colBuf) keyIndex(v string) int32 {
	if b.keyIdx == nil {
		b.keyIdx = make(map[string]int32, 2)
		for i, k := range b.keys {
			b.keyIdx[k] = int32(i)
		}
	}
	if i, ok := b.keyIdx[v]; ok {
		return i
	}
	b.keys = append(b.keys, v)
	b.keyIdx[v] = int32(len(b.keys) - 1)
	return int32(len(b.keys) - 1)
}

// array returns the filled column as an Arrow array over b's memory.
func (b *colBuf) array(c *Column) arrow.Array {
	switch c.kind {
	case kindString, kindPtrString:
		return array.MakeFromData(b.valid.data(c.Type, b.n, bytesOf(b.i32), b.data))
	case kindBool, kindPtrBool:
		return array.MakeFromData(b.valid.data(c.Type, b.n, b.bits))
	case kindInt32, kindPtrInt32:
		return array.MakeFromData(b.valid.data(c.Type, b.n, bytesOf(b.i32)))
	case kindInt64, kindTime:
		return array.MakeFromData(b.valid.data(c.Type, b.n, bytesOf(b.i64)))
	case kindFloat64:
		return array.MakeFromData(b.valid.data(c.Type, b.n, bytesOf(b.f64)))
	case kindKey:
		d := b.valid.data(keyType, b.n, bytesOf(b.i32)).(*array.Data)
		sb := array.NewStringBuilder(memory.DefaultAllocator)
		sb.AppendValues(b.keys, nil)
		dict := sb.NewStringArray()
		sb.Release()
		d.SetDictionary(dict.Data())
		dict.Release()
		return array.MakeFromData(d)
	}
	d := b.valid.data(c.Type, b.n, bytesOf(b.i16)).(*array.Data)
	d.SetDictionary(c.dict.Data())
	return array.MakeFromData(d)
}

// columnArrays returns the columns cols of rows[idx...] as Arrow arrays.
func columnArrays[T any](cols []Column, rows []T, idx []int) ([]arrow.Array, error) {
	bufs, err := columnBufs(cols, rows, idx)
	if err != nil {
		return nil, err
	}
	return arraysOf(cols, bufs), nil
}

// columnBufs returns the columns cols of rows[idx...] filled, one buffer
// per column.
func columnBufs[T any](cols []Column, rows []T, idx []int) ([]*colBuf, error) {
	bufs := make([]*colBuf, len(cols))
	for c := range cols {
		bufs[c] = newColBuf(&cols[c], len(idx))
	}
	for lo := 0; lo < len(idx); lo += fillBlock {
		hi := min(lo+fillBlock, len(idx))
		for c := range cols {
			if err := fillColumn(&cols[c], bufs[c], rows, idx[lo:hi], lo); err != nil {
				return nil, err
			}
		}
	}
	return bufs, nil
}

// fillBlock is the number of rows filled into all columns at a time: a few
// tens of KB of row structs, which stay in cache while each column takes
// its values.
const fillBlock = 256

func arraysOf(cols []Column, bufs []*colBuf) []arrow.Array {
	arrs := make([]arrow.Array, len(cols))
	for c := range cols {
		arrs[c] = bufs[c].array(&cols[c])
	}
	return arrs
}

// identity[i] = i: the row indices of a block.
var identity = func() []int {
	s := make([]int, fillBlock)
	for i := range s {
		s[i] = i
	}
	return s
}()

// Rows collects the rows of one Parquet file column by column, for
// WriteRows. Appended rows wait in a block of fillBlock row structs that is
// moved into the columns when full, so a large table is never held as row
// structs: the levels of a station-year are some 70,000 rows of 300 bytes,
// which as a slice cost their own allocation, zeroing and a second pass
// through memory to transpose.
type Rows[T any] struct {
	cols  []Column
	bufs  []*colBuf
	n     int // rows moved into bufs
	block []T
	err   error
}

// NewRows returns an empty Rows for the row type T (see Columns) with room
// for about capacity rows before its columns grow.
func NewRows[T any](capacity int) (*Rows[T], error) {
	cols, err := Columns[T]()
	if err != nil {
		return nil, err
	}
	r := &Rows[T]{cols: cols, bufs: make([]*colBuf, len(cols)), block: make([]T, 0, fillBlock)}
	for c := range cols {
		r.bufs[c] = newColBuf(&cols[c], 0)
		r.bufs[c].grow(&cols[c], capacity)
		r.bufs[c].grow(&cols[c], 0)
	}
	return r, nil
}

// reuseRows is NewRows over the column buffers bufs of an earlier Rows of
// the same row type, emptied.
func reuseRows[T any](bufs []*colBuf, capacity int) (*Rows[T], error) {
	cols, err := Columns[T]()
	if err != nil {
		return nil, err
	}
	if len(bufs) != len(cols) {
		return nil, fmt.Errorf("schema: %d column buffers for %d columns", len(bufs), len(cols))
	}
	r := &Rows[T]{cols: cols, bufs: bufs, block: make([]T, 0, fillBlock)}
	for c := range cols {
		bufs[c].reset(&cols[c])
		bufs[c].grow(&cols[c], capacity)
		bufs[c].grow(&cols[c], 0)
	}
	return r, nil
}

// reset empties b for column c, keeping its memory. Fillers store every
// value but set bool bits only when true, so those bits are cleared;
// other values under a null stay as they were, unread.
func (b *colBuf) reset(c *Column) {
	clear(b.bits[:cap(b.bits)])
	b.n, b.valid = 0, validity{bits: b.valid.bits[:0]}
	b.f64, b.i64, b.i16, b.bits, b.data = b.f64[:0], b.i64[:0], b.i16[:0], b.bits[:0], b.data[:0]
	b.i32 = b.i32[:0]
	if c.kind == kindString || c.kind == kindPtrString {
		b.i32 = append(b.i32, 0)
	}
	b.last, b.lastIdx, b.keys, b.keyIdx = "", -1, nil, nil
}

// Append adds one row. A value the column cannot hold (an enum value
// outside its list) is reported by WriteRows.
func (r *Rows[T]) Append(row T) {
	r.block = append(r.block, row)
	if len(r.block) == fillBlock {
		r.flush()
	}
}

// Len returns the number of rows appended.
func (r *Rows[T]) Len() int { return r.n + len(r.block) }

func (r *Rows[T]) flush() {
	if len(r.block) == 0 {
		return
	}
	n := r.n + len(r.block)
	for c := range r.cols {
		r.bufs[c].grow(&r.cols[c], n)
		if err := fillColumn(&r.cols[c], r.bufs[c], r.block, identity[:len(r.block)], r.n); err != nil && r.err == nil {
			r.err = err
		}
	}
	r.n = n
	clear(r.block) // drop references held by the rows' strings and pointers
	r.block = r.block[:0]
}

// arrays moves the pending rows into the columns and returns them.
func (r *Rows[T]) arrays() ([]arrow.Array, int, error) {
	r.flush()
	if r.err != nil {
		return nil, 0, r.err
	}
	return arraysOf(r.cols, r.bufs), r.n, nil
}

// validity is a column's validity bitmap under construction; the zero
// value means "no nulls possible".
type validity struct {
	bits  []byte
	nulls int
}

func newValidity(n int) validity {
	b := make([]byte, bitmapBytes(n))
	for i := range b {
		b[i] = 0xff
	}
	return validity{bits: b}
}

func (v *validity) null(k int) {
	v.bits[uint(k)/8] &^= 1 << (uint(k) % 8)
	v.nulls++
}

// nullMask marks as null the rows at+k whose bit k of m is set.
func (v *validity) nullMask(at int, m uint64) {
	if m == 0 {
		return
	}
	v.nulls += bits.OnesCount64(m)
	i, s := uint(at)/8, uint(at)%8
	lo, hi := m<<s, m>>(64-s) // rows of byte i onwards; hi: those of byte i+8 (none when s is 0)
	for j := i; lo != 0; j++ {
		v.bits[j] &^= byte(lo)
		lo >>= 8
	}
	if hi != 0 {
		v.bits[i+8] &^= byte(hi)
	}
}

// data returns array data of type t and length n over the given value
// buffers, with the bitmap only when some value is null.
func (v validity) data(t arrow.DataType, n int, bufs ...[]byte) arrow.ArrayData {
	all := make([]*memory.Buffer, 0, len(bufs)+1)
	if v.nulls > 0 {
		all = append(all, memory.NewBufferBytes(v.bits))
	} else {
		all = append(all, nil)
	}
	for _, b := range bufs {
		all = append(all, memory.NewBufferBytes(b))
	}
	return array.NewData(t, n, all, nil, v.nulls, 0)
}

func bitmapBytes(n int) int { return (n + 7) / 8 }

// bytesOf views a slice of fixed-width numbers as its bytes, in the
// machine's byte order. Arrow buffers are little-endian, so this is right
// on little-endian machines (amd64, arm64, the platforms the project runs
// on); a big-endian build would need a byte swap here.
func bytesOf[E int16 | int32 | int64 | float64](s []E) []byte {
	if len(s) == 0 {
		return []byte{}
	}
	return unsafe.Slice((*byte)(unsafe.Pointer(&s[0])), len(s)*int(unsafe.Sizeof(s[0])))
}
