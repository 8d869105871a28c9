package schema

import (
	"fmt"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/sounding"
)

// vocabulary is a fixed set of values of a column, defined by the package
// that owns the values (a typed enum's String, a registry), not written out
// in the row structs.
type vocabulary struct {
	values []string // in the order of the Go constants
	doc    string   // replaces "{values}" in the doc tag; default: the values as an English list ("a, b or c")
	// dict columns are written as dictionary indices into values (a value
	// outside them is an error); the others as plain strings.
	dict bool
}

// vocabularies are the vocabularies a field may name in a `values:"NAME"`
// tag.
var vocabularies = map[string]func() vocabulary{
	"mixing_height_method": func() vocabulary {
		return vocabulary{values: analyze.MethodNames(), doc: analyze.MethodsDoc()}
	},
	"mixing_height_status": func() vocabulary {
		return vocabulary{values: strs(analyze.MixingHeightStatuses())}
	},
	"analysis_status":    func() vocabulary { return vocabulary{values: strs(analyze.Statuses())} },
	"sun_class":          func() vocabulary { return vocabulary{values: strs(sun.Classes)} },
	"inversion_class":    func() vocabulary { return vocabulary{values: strs(analyze.InversionClasses())} },
	"liu_liang_regime":   func() vocabulary { return vocabulary{values: strs(analyze.LiuLiangRegimes())} },
	"bl_regime":          func() vocabulary { return vocabulary{values: strs(analyze.BLRegimes)} },
	"transport_wind":     func() vocabulary { return vocabulary{values: strs(analyze.TransportConventions())} },
	"tmax_source":        func() vocabulary { return vocabulary{values: strs(analyze.TmaxSources())} },
	"afternoon_source":   func() vocabulary { return vocabulary{values: strs(analyze.AfternoonSources())} },
	"qc_check":           func() vocabulary { return vocabulary{values: strs(qc.Checks())} },
	"episode_day_status": func() vocabulary { return vocabulary{values: strs(analyze.EpisodeDayStatuses())} },
	"qc_variable": func() vocabulary {
		return vocabulary{values: enumNames(sounding.VarPressure, sounding.NumVars-1)}
	},
	"qc_severity": func() vocabulary { return vocabulary{values: enumNames(qc.Suspect, qc.Corrected)} },
	"level_kind": func() vocabulary {
		return vocabulary{values: enumNames(sounding.KindSignificant, sounding.KindWindOnly), dict: true}
	},
	"value_status": func() vocabulary {
		return vocabulary{values: enumNames(sounding.Reported, sounding.Derived), dict: true}
	},
	"qc_flag": func() vocabulary {
		return vocabulary{values: enumNames(qc.Good, qc.Corrected), dict: true}
	},
}

// strs returns the values of a string enum as plain strings, in order.
func strs[E ~string](values []E) []string {
	out := make([]string, len(values))
	for i, v := range values {
		out[i] = string(v)
	}
	return out
}

// enumNames returns the String of every value of an integer enum from
// first to last.
func enumNames[E interface {
	~uint8
	fmt.Stringer
}](first, last E) []string {
	var out []string
	for v := first; ; v++ {
		out = append(out, v.String())
		if v >= last {
			return out
		}
	}
}

// vocabOf returns the vocabulary a `values` tag names; ok is false for an
// unknown name.
func vocabOf(name string) (vocabulary, bool) {
	f, ok := vocabularies[name]
	if !ok {
		return vocabulary{}, false
	}
	v := f()
	if v.doc == "" {
		v.doc = englishList(v.values)
	}
	return v, true
}

// englishList joins values as "a", "a or b", "a, b or c".
func englishList(values []string) string {
	if len(values) < 2 {
		return strings.Join(values, "")
	}
	return strings.Join(values[:len(values)-1], ", ") + " or " + values[len(values)-1]
}
