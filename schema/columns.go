package schema

import (
	"fmt"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"math"
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
	kindEnum // a string field tagged enum:"a,b,…": written as a dictionary column
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
		if values, ok := f.Tag.Lookup("enum"); ok {
			if kind != kindString || values == "" {
				return nil, fmt.Errorf("schema: %s: an enum tag needs a string field and at least one value", where)
			}
			c.kind, c.Nullable, c.enum = kindEnum, true, map[string]int{}
			c.Type = &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}
			list := strings.Split(values, ",")
			for k, v := range list {
				c.enum[v] = k
			}
			b := array.NewStringBuilder(memory.DefaultAllocator)
			b.AppendValues(list, nil)
			c.dict = b.NewStringArray()
			b.Release()
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
			Name: c.Name, Type: c.Type, Nullable: c.Nullable,
			Metadata: arrow.NewMetadata([]string{DocKey}, []string{c.Doc}),
		}
	}
	md := arrow.NewMetadata([]string{VersionKey, TableKey}, []string{fmt.Sprint(Version), table})
	return arrow.NewSchema(fields, &md)
}

// columnArray returns field c of rows[idx...] as an Arrow array whose
// buffers are plain Go memory, filled in one pass: no builder, no
// reallocation. Fields are read through their byte offset (the row type was
// checked by Columns, so the offset and the field's Go type agree); NaN and
// nil become nulls and a zero time.Time is null. An enum value outside the
// column's list is an error.
func columnArray[T any](c *Column, rows []T, idx []int) (arrow.Array, error) {
	at := func(i int) unsafe.Pointer { return unsafe.Add(unsafe.Pointer(&rows[i]), c.offset) }
	n := len(idx)
	var valid validity
	switch c.kind {
	case kindString, kindPtrString:
		offsets := make([]int32, n+1)
		size := 0
		for _, i := range idx {
			if c.kind == kindString {
				size += len(*(*string)(at(i)))
			} else if p := *(**string)(at(i)); p != nil {
				size += len(*p)
			}
		}
		if size > math.MaxInt32 {
			return nil, fmt.Errorf("column %s: %d bytes of text exceed one Arrow string array", c.Name, size)
		}
		data := make([]byte, 0, size)
		if c.kind == kindPtrString {
			valid = newValidity(n)
		}
		for k, i := range idx {
			if c.kind == kindString {
				data = append(data, *(*string)(at(i))...)
			} else if p := *(**string)(at(i)); p == nil {
				valid.null(k)
			} else {
				data = append(data, *p...)
			}
			offsets[k+1] = int32(len(data))
		}
		return array.MakeFromData(valid.data(c.Type, n, bytesOf(offsets), data)), nil
	case kindBool, kindPtrBool:
		bits := make([]byte, bitmapBytes(n))
		if c.kind == kindPtrBool {
			valid = newValidity(n)
		}
		for k, i := range idx {
			var v bool
			if c.kind == kindBool {
				v = *(*bool)(at(i))
			} else if p := *(**bool)(at(i)); p == nil {
				valid.null(k)
			} else {
				v = *p
			}
			if v {
				bits[k/8] |= 1 << (k % 8)
			}
		}
		return array.MakeFromData(valid.data(c.Type, n, bits)), nil
	case kindInt32, kindPtrInt32:
		vals := make([]int32, n)
		if c.kind == kindPtrInt32 {
			valid = newValidity(n)
		}
		for k, i := range idx {
			if c.kind == kindInt32 {
				vals[k] = *(*int32)(at(i))
			} else if p := *(**int32)(at(i)); p == nil {
				valid.null(k)
			} else {
				vals[k] = *p
			}
		}
		return array.MakeFromData(valid.data(c.Type, n, bytesOf(vals))), nil
	case kindInt64:
		vals := make([]int64, n)
		for k, i := range idx {
			vals[k] = *(*int64)(at(i))
		}
		return array.MakeFromData(valid.data(c.Type, n, bytesOf(vals))), nil
	case kindFloat64:
		vals := make([]float64, n)
		valid = newValidity(n)
		for k, i := range idx {
			if x := *(*float64)(at(i)); x != x {
				valid.null(k)
			} else {
				vals[k] = x
			}
		}
		return array.MakeFromData(valid.data(c.Type, n, bytesOf(vals))), nil
	case kindTime:
		vals := make([]int64, n)
		valid = newValidity(n)
		for k, i := range idx {
			if t := (*time.Time)(at(i)); t.IsZero() {
				valid.null(k)
			} else {
				vals[k] = t.UnixMicro()
			}
		}
		return array.MakeFromData(valid.data(c.Type, n, bytesOf(vals))), nil
	case kindEnum:
		// The dictionary is the tag's fixed list, so values are stored as
		// indices: no hashing here or in the Parquet writer. Values repeat
		// (flags are mostly "good"), so the last lookup is remembered.
		ix := make([]int16, n)
		valid = newValidity(n)
		last, lastIx := "", int16(-1)
		for k, i := range idx {
			v := *(*string)(at(i))
			switch {
			case v == "":
				valid.null(k)
				continue
			case v == last:
			default:
				m, ok := c.enum[v]
				if !ok {
					return nil, fmt.Errorf("column %s: value %q is not one of its enum values", c.Name, v)
				}
				last, lastIx = v, int16(m)
			}
			ix[k] = lastIx
		}
		d := valid.data(c.Type, n, bytesOf(ix)).(*array.Data)
		d.SetDictionary(c.dict.Data())
		return array.MakeFromData(d), nil
	}
	return nil, fmt.Errorf("column %s: unsupported kind %d", c.Name, c.kind)
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
	v.bits[k/8] &^= 1 << (k % 8)
	v.nulls++
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

// bytesOf views a slice of fixed-width numbers as its bytes (little-endian
// on every platform Go and Arrow share here).
func bytesOf[E int16 | int32 | int64 | float64](s []E) []byte {
	if len(s) == 0 {
		return []byte{}
	}
	return unsafe.Slice((*byte)(unsafe.Pointer(&s[0])), len(s)*int(unsafe.Sizeof(s[0])))
}
