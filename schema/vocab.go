package schema

import (
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
)

// vocabularies are the fixed vocabularies whose values are defined by the
// package that owns them, not written out in the row structs. A field
// tagged `values:"NAME"` gets vocabularies[NAME]() in place of "{values}" in
// its doc tag.
var vocabularies = map[string]func() string{
	"mixing_height_method": analyze.MethodsDoc,
}

// expandDoc returns the doc tag with its vocabulary filled in; ok is false
// for an unknown vocabulary name.
func expandDoc(doc, vocab string) (string, bool) {
	if vocab == "" {
		return doc, true
	}
	f, ok := vocabularies[vocab]
	if !ok {
		return "", false
	}
	return strings.ReplaceAll(doc, "{values}", f()), true
}
