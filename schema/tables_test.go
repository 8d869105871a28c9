package schema

import (
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// TestTableRegistry checks the registry: unique identifier names, row
// structs the writer accepts, only levels compressed with zstd, the schema
// document in registry order, and rows of the wrong struct refused.
func TestTableRegistry(t *testing.T) {
	names := TableNames()
	seen := map[string]bool{}
	for _, tb := range AllTables() {
		if !tableName.MatchString(tb.Name) || seen[tb.Name] || tb.Description == "" {
			t.Errorf("table %q: bad or repeated name, or no description", tb.Name)
		}
		seen[tb.Name] = true
		if _, err := columnsOf(tb.Row); err != nil {
			t.Errorf("table %s: %v", tb.Name, err)
		}
		if tb.Compact != (tb.Name == TableLevels) {
			t.Errorf("table %s: compact %v", tb.Name, tb.Compact)
		}
	}
	docs, err := Tables()
	if err != nil {
		t.Fatal(err)
	}
	for _, tb := range DerivedTables() {
		names = append(names, tb.Name)
	}
	if len(docs) != len(names) {
		t.Fatalf("%d tables documented, registry and derived tables %d", len(docs), len(names))
	}
	for i, d := range docs {
		if d.Name != names[i] {
			t.Errorf("schema document table %d is %s, registry has %s", i, d.Name, names[i])
		}
	}
	path := filepath.Join(t.TempDir(), "x.parquet")
	err = WriteFile(path, TableLevels, []InversionRow{}, false)
	if err == nil || !strings.Contains(err.Error(), "LevelRow") {
		t.Errorf("inversion rows written as levels: %v", err)
	}
}

// TestVocabularies checks that the dictionary columns take their values,
// in the order of the Go constants, from the typed enums: these are the
// dictionaries stores of schema version 2 were written with, so a
// reordering of the constants would show here (the values are the
// documented names, sounding.LevelKind, sounding.Status, qc.Flag).
func TestVocabularies(t *testing.T) {
	cols, err := Columns[LevelRow]()
	if err != nil {
		t.Fatal(err)
	}
	want := map[string][]string{
		"level_kind":         {"significant", "surface", "standard", "wind_only"},
		"temperature_status": {"reported", "missing", "removed_upstream", "derived"},
		"height_status":      {"reported", "missing", "removed_upstream", "derived"},
		"humidity_status":    {"reported", "missing", "removed_upstream", "derived"},
		"pressure_qc":        {"good", "missing", "suspect", "bad", "corrected"},
		"height_qc":          {"good", "missing", "suspect", "bad", "corrected"},
		"temperature_qc":     {"good", "missing", "suspect", "bad", "corrected"},
		"humidity_qc":        {"good", "missing", "suspect", "bad", "corrected"},
		"wind_qc":            {"good", "missing", "suspect", "bad", "corrected"},
	}
	for _, c := range cols {
		w, ok := want[c.Name]
		if !ok {
			if c.kind == kindEnum {
				t.Errorf("%s is a dictionary column", c.Name)
			}
			continue
		}
		var got []string
		for i := 0; c.dict != nil && i < c.dict.Len(); i++ {
			got = append(got, c.dict.Value(i))
		}
		if c.kind != kindEnum || !slices.Equal(got, w) {
			t.Errorf("%s: dictionary %v, want %v", c.Name, got, w)
		}
	}
	h, err := Columns[MixingHeightRow]()
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range h {
		if c.Name == "method" && (c.kind != kindString || !strings.Contains(c.Doc, "bulk_richardson (critical 0.25)") || strings.Contains(c.Doc, "{values}")) {
			t.Errorf("method column %+v", c.Doc)
		}
	}
	if _, err := columnsOf(reflect.TypeFor[struct {
		X string `col:"x" values:"no_such_vocabulary"`
	}]()); err == nil {
		t.Error("unknown vocabulary accepted")
	}
}

// TestVocabularyDocs checks that no column documents its allowed values by
// hand: a column whose values come from a vocabulary (a `values` tag) and
// whose doc names more than one of them writes "{values}" instead, so the
// document lists what the Go type defines; and the list reads as English. Scaffolding on the package's own
// conventions, no outside source.
func TestVocabularyDocs(t *testing.T) {
	for _, tb := range append(AllTables(), DerivedTables()...) {
		for i := range tb.Row.NumField() {
			f := tb.Row.Field(i)
			name, ok := f.Tag.Lookup("values")
			doc := f.Tag.Get("doc")
			if !ok || strings.Contains(doc, "{values}") {
				continue
			}
			v, _ := vocabOf(name)
			named := 0
			for _, value := range v.values {
				if strings.Contains(doc, value) {
					named++
				}
			}
			if named > 1 {
				t.Errorf("%s.%s: values:%q but its doc lists the values by hand: %q", tb.Name, f.Tag.Get("col"), name, doc)
			}
		}
	}
	for name := range vocabularies {
		v, _ := vocabOf(name)
		for _, value := range v.values {
			if !strings.Contains(v.doc, value) {
				t.Errorf("vocabulary %s: doc %q misses %q", name, v.doc, value)
			}
		}
	}
	for in, want := range map[string]string{"": "", "a": "a", "a,b": "a or b", "a,b,c": "a, b or c"} {
		var list []string
		if in != "" {
			list = strings.Split(in, ",")
		}
		if got := englishList(list); got != want {
			t.Errorf("englishList(%q) = %q, want %q", in, got, want)
		}
	}
}
