package schema

import (
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
)

// allKinds is an invented row type (unit scaffolding) holding every
// supported field type once.
type allKinds struct {
	StationID string    `col:"station_id" doc:"invented station"`
	Year      int32     `col:"year" doc:"calendar year"`
	Label     string    `col:"label" doc:"free text"`
	Flag      bool      `col:"flag"`
	CountN    int32     `col:"count_n" doc:"count"`
	Big       int64     `col:"big" doc:"count"`
	ValueK    float64   `col:"value_k" doc:"K; invented value"`
	When      time.Time `col:"when_utc" doc:"UTC"`
	OptFlag   *bool     `col:"opt_flag"`
	OptN      *int32    `col:"opt_n"`
	OptS      *string   `col:"opt_s"`
	Skipped   string    `col:"-"`
	hidden    int
}

func TestColumnsKinds(t *testing.T) {
	cols, err := Columns[allKinds]()
	if err != nil {
		t.Fatal(err)
	}
	want := []struct {
		name     string
		typ      arrow.DataType
		nullable bool
		doc      string
	}{
		{"station_id", arrow.BinaryTypes.String, false, "invented station"},
		{"year", arrow.PrimitiveTypes.Int32, false, "calendar year"},
		{"label", arrow.BinaryTypes.String, false, "free text"},
		{"flag", arrow.FixedWidthTypes.Boolean, false, ""},
		{"count_n", arrow.PrimitiveTypes.Int32, false, "count"},
		{"big", arrow.PrimitiveTypes.Int64, false, "count"},
		{"value_k", arrow.PrimitiveTypes.Float64, true, "K; invented value"},
		{"when_utc", &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}, true, "UTC"},
		{"opt_flag", arrow.FixedWidthTypes.Boolean, true, ""},
		{"opt_n", arrow.PrimitiveTypes.Int32, true, ""},
		{"opt_s", arrow.BinaryTypes.String, true, ""},
	}
	if len(cols) != len(want) {
		t.Fatalf("got %d columns, want %d", len(cols), len(want))
	}
	for i, w := range want {
		c := cols[i]
		if c.Name != w.name || !arrow.TypeEqual(c.Type, w.typ) || c.Nullable != w.nullable || c.Doc != w.doc {
			t.Errorf("column %d = {%s %v %v %q}, want {%s %v %v %q}",
				i, c.Name, c.Type, c.Nullable, c.Doc, w.name, w.typ, w.nullable, w.doc)
		}
	}
}

type (
	badMap struct {
		M map[string]int `col:"m"`
	}
	badFloat32 struct {
		F float32 `col:"f"`
	}
	badPtrFloat struct {
		F *float64 `col:"f"`
	}
	badSlice struct {
		S []int32 `col:"s"`
	}
	badStruct struct {
		D time.Duration   `col:"d"`
		X struct{ A int } `col:"x"`
	}
	noTag struct {
		A int32
	}
	badTag struct {
		A int32 `col:"HeightM"`
	}
	dupTag struct {
		A int32 `col:"a"`
		B int64 `col:"a"`
	}
	inner    struct{ A int32 }
	embedded struct {
		inner
		Inner2 inner `col:"-"`
		B      int32 `col:"b"`
	}
	exportedEmbedded struct {
		Inner
	}
	Inner  struct{ A int32 }
	noCols struct {
		A int32 `col:"-"`
	}
)

func TestColumnsErrors(t *testing.T) {
	tests := []struct {
		name    string
		columns func() ([]Column, error)
		want    string // substring of the error
	}{
		{"map", Columns[badMap], "unsupported Go type map[string]int"},
		{"float32", Columns[badFloat32], "unsupported Go type float32"},
		{"pointer to float", Columns[badPtrFloat], "unsupported Go type *float64"},
		{"slice", Columns[badSlice], "unsupported Go type []int32"},
		// time.Duration is an int64 underneath and is accepted; the
		// anonymous struct field after it is not.
		{"struct", Columns[badStruct], `badStruct.X: unsupported Go type struct`},
		{"missing tag", Columns[noTag], "noTag.A: missing or malformed col tag"},
		{"malformed tag", Columns[badTag], `malformed col tag "HeightM"`},
		{"duplicate", Columns[dupTag], `column "a" already used by dupTag.A`},
		{"embedded", Columns[exportedEmbedded], "embedded fields are not supported"},
		{"not a struct", Columns[int], "row type int is not a struct"},
		{"pointer row", Columns[*allKinds], "is not a struct"},
		{"no columns", Columns[noCols], "has no columns"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cols, err := tt.columns()
			if err == nil {
				t.Fatalf("no error, got %d columns", len(cols))
			}
			if !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q does not contain %q", err, tt.want)
			}
		})
	}
	// An unexported embedded struct is ignored like any unexported field.
	cols, err := Columns[embedded]()
	if err != nil || len(cols) != 1 || cols[0].Name != "b" {
		t.Errorf("embedded unexported: got %v, %v; want one column b", cols, err)
	}
}

// TestStoreRowTypes checks that the store's own row structs are fully
// supported: one column per exported field, doc text present on each.
func TestStoreRowTypes(t *testing.T) {
	tables, err := Tables()
	if err != nil {
		t.Fatal(err)
	}
	types := []reflect.Type{reflect.TypeFor[SoundingRow](), reflect.TypeFor[LevelRow](), reflect.TypeFor[InversionRow](),
		reflect.TypeFor[MixedLayerRow](), reflect.TypeFor[MixingHeightRow](), reflect.TypeFor[AfternoonRow](), reflect.TypeFor[QCFindingRow](),
		reflect.TypeFor[DescentRow](), reflect.TypeFor[LevelRow](), reflect.TypeFor[QCFindingRow](),
		reflect.TypeFor[DayRow](), reflect.TypeFor[EpisodeRow](), reflect.TypeFor[EpisodeDayRow](), reflect.TypeFor[RuleMonthRow]()}
	if len(tables) != len(types) {
		t.Fatalf("%d tables documented, want %d", len(tables), len(types))
	}
	for i, td := range tables {
		if n := types[i].NumField(); len(td.Columns) != n {
			t.Errorf("%s: %d columns, want %d (one per field)", td.Name, len(td.Columns), n)
		}
		for _, c := range td.Columns {
			if c.Doc == "" {
				t.Errorf("%s.%s: empty doc", td.Name, c.Name)
			}
		}
	}
}
