package schema

import (
	"fmt"
	"math"
	"reflect"
	"regexp"
	"time"

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

	field int       // index of the struct field
	kind  fieldKind // how values are appended
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
		cols = append(cols, Column{
			Name: name, Type: typ, Nullable: nullable, Doc: f.Tag.Get("doc"),
			field: i, kind: kind,
		})
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

// appendValue appends field c of the struct value row to builder b.
func (c *Column) appendValue(b array.Builder, row reflect.Value) {
	v := row.Field(c.field)
	switch c.kind {
	case kindString:
		b.(*array.StringBuilder).Append(v.String())
	case kindBool:
		b.(*array.BooleanBuilder).Append(v.Bool())
	case kindInt32:
		b.(*array.Int32Builder).Append(int32(v.Int()))
	case kindInt64:
		b.(*array.Int64Builder).Append(v.Int())
	case kindFloat64:
		if x := v.Float(); math.IsNaN(x) {
			b.AppendNull()
		} else {
			b.(*array.Float64Builder).Append(x)
		}
	case kindTime:
		if t := v.Interface().(time.Time); t.IsZero() {
			b.AppendNull()
		} else {
			b.(*array.TimestampBuilder).Append(arrow.Timestamp(t.UnixMicro()))
		}
	case kindPtrBool, kindPtrInt32, kindPtrString:
		if v.IsNil() {
			b.AppendNull()
			return
		}
		e := v.Elem()
		switch c.kind {
		case kindPtrBool:
			b.(*array.BooleanBuilder).Append(e.Bool())
		case kindPtrInt32:
			b.(*array.Int32Builder).Append(int32(e.Int()))
		default:
			b.(*array.StringBuilder).Append(e.String())
		}
	}
}
