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

// appendColumn appends field c of rows[idx...] to builder b, one column at
// a time so that the builder's type is resolved once per batch. Fields are
// read through their byte offset (the row type was checked by Columns, so
// the offset and the field's Go type agree); NaN and nil become nulls and a
// zero time.Time is null.
func appendColumn[T any](c *Column, b array.Builder, rows []T, idx []int) error {
	at := func(i int) unsafe.Pointer { return unsafe.Add(unsafe.Pointer(&rows[i]), c.offset) }
	switch c.kind {
	case kindString:
		sb := b.(*array.StringBuilder)
		sb.Reserve(len(idx))
		for _, i := range idx {
			sb.Append(*(*string)(at(i)))
		}
	case kindBool:
		bb := b.(*array.BooleanBuilder)
		bb.Reserve(len(idx))
		for _, i := range idx {
			bb.UnsafeAppend(*(*bool)(at(i)))
		}
	case kindInt32:
		ib := b.(*array.Int32Builder)
		ib.Reserve(len(idx))
		for _, i := range idx {
			ib.UnsafeAppend(*(*int32)(at(i)))
		}
	case kindInt64:
		ib := b.(*array.Int64Builder)
		ib.Reserve(len(idx))
		for _, i := range idx {
			ib.UnsafeAppend(*(*int64)(at(i)))
		}
	case kindFloat64:
		fb := b.(*array.Float64Builder)
		fb.Reserve(len(idx))
		for _, i := range idx {
			if x := *(*float64)(at(i)); math.IsNaN(x) {
				fb.UnsafeAppendBoolToBitmap(false)
			} else {
				fb.UnsafeAppend(x)
			}
		}
	case kindTime:
		tb := b.(*array.TimestampBuilder)
		tb.Reserve(len(idx))
		for _, i := range idx {
			if t := (*time.Time)(at(i)); t.IsZero() {
				tb.UnsafeAppendBoolToBitmap(false)
			} else {
				tb.UnsafeAppend(arrow.Timestamp(t.UnixMicro()))
			}
		}
	case kindPtrBool:
		bb := b.(*array.BooleanBuilder)
		for _, i := range idx {
			if p := *(**bool)(at(i)); p == nil {
				bb.AppendNull()
			} else {
				bb.Append(*p)
			}
		}
	case kindPtrInt32:
		ib := b.(*array.Int32Builder)
		for _, i := range idx {
			if p := *(**int32)(at(i)); p == nil {
				ib.AppendNull()
			} else {
				ib.Append(*p)
			}
		}
	case kindPtrString:
		sb := b.(*array.StringBuilder)
		for _, i := range idx {
			if p := *(**string)(at(i)); p == nil {
				sb.AppendNull()
			} else {
				sb.Append(*p)
			}
		}
	case kindEnum:
		// The dictionary is the tag's fixed list, so values are appended
		// as indices: no hashing here or in the Parquet writer.
		db := b.(*array.BinaryDictionaryBuilder)
		if db.DictionarySize() == 0 {
			if err := db.InsertStringDictValues(c.dict); err != nil {
				return err
			}
		}
		ix := make([]int, len(idx))
		valid := make([]bool, len(idx))
		for k, i := range idx {
			v := *(*string)(at(i))
			if v == "" {
				continue
			}
			n, ok := c.enum[v]
			if !ok {
				return fmt.Errorf("column %s: value %q is not one of its enum values", c.Name, v)
			}
			ix[k], valid[k] = n, true
		}
		db.AppendIndices(ix, valid)
	}
	return nil
}
