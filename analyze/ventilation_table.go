package analyze

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"unicode"
)

// BuiltinVentilationTables returns the category tables built into the
// program, each with its source: GenericVentilationTable (the default)
// and NCVISTable.
func BuiltinVentilationTables() []VentilationTable {
	return []VentilationTable{GenericVentilationTable(), NCVISTable()}
}

// LookupVentilationTable returns the built-in table called name.
func LookupVentilationTable(name string) (VentilationTable, bool) {
	for _, t := range BuiltinVentilationTables() {
		if t.Name == name {
			return t, true
		}
	}
	return VentilationTable{}, false
}

var tableName = regexp.MustCompile(`^[a-z][a-z0-9_]{0,39}$`)

// maxVentilationLabel is the longest category label, bytes.
const maxVentilationLabel = 40

// ParseVentilationTable reads a ventilation category table in the text
// format of README.md ("Ventilation categories"):
//
//	# comment (a '#' starts a comment anywhere on a line)
//	name: county_smoke          required; lower case, digits, '_'; at most 40 bytes
//	unit: kt*ft                 required; m2/s or kt*ft (also m²/s, kt·ft, kt-ft)
//	source: Smoke plan, 2024    optional; who set the thresholds
//	0       poor                one category a line: the lower bound, inclusive,
//	33500   fair                in the unit, then the label (the rest of the line)
//	60000   good
//
// Bounds must be finite, start at 0 and rise strictly; labels must be
// non-empty, printable, at most 40 bytes and distinct. Blank lines are
// ignored. An error names the line ("line 7: …"); the caller adds the file.
// The name must not be a built-in table's, so that the name recorded with
// every result (soundings.ventilation_table) says which thresholds were used.
func ParseVentilationTable(r io.Reader) (VentilationTable, error) {
	var t VentilationTable
	seen := map[string]bool{}
	labels := map[string]bool{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 4096), 4096)
	line := 0
	for sc.Scan() {
		line++
		text := sc.Text()
		if i := strings.IndexByte(text, '#'); i >= 0 {
			text = text[:i]
		}
		text = strings.TrimSpace(text)
		if text == "" {
			continue
		}
		fail := func(format string, a ...any) error {
			return fmt.Errorf("line %d: %s", line, fmt.Sprintf(format, a...))
		}
		if key, val, ok := strings.Cut(text, ":"); ok && !startsNumber(text) {
			key, val = strings.ToLower(strings.TrimSpace(key)), strings.TrimSpace(val)
			if seen[key] {
				return t, fail("%s given twice", key)
			}
			seen[key] = true
			switch key {
			case "name":
				if !tableName.MatchString(val) {
					return t, fail("name %q: use 1-40 lower-case letters, digits and '_', starting with a letter", val)
				}
				if _, builtin := LookupVentilationTable(val); builtin {
					return t, fail("name %q is a built-in table's; give the table a name of its own", val)
				}
				t.Name = val
			case "unit":
				switch VentilationUnit(val) {
				case UnitM2S, "m²/s":
					t.Unit = UnitM2S
				case UnitKtFt, "kt·ft", "kt-ft":
					t.Unit = UnitKtFt
				default:
					return t, fail("unit %q: use m2/s or kt*ft", val)
				}
			case "source":
				t.Source = val
			default:
				return t, fail("unknown key %q (name, unit, source)", key)
			}
			continue
		}
		num, label := text, ""
		if i := strings.IndexAny(text, " \t"); i >= 0 {
			num, label = text[:i], strings.TrimSpace(text[i:])
		}
		v, err := strconv.ParseFloat(num, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return t, fail("%q is neither a key (name:, unit:, source:) nor a lower bound followed by a label", text)
		}
		if label == "" {
			return t, fail("bound %s has no label", num)
		}
		if len(label) > maxVentilationLabel || strings.IndexFunc(label, func(r rune) bool { return !unicode.IsPrint(r) }) >= 0 {
			return t, fail("label %q: at most %d bytes of printable text", label, maxVentilationLabel)
		}
		if labels[label] {
			return t, fail("label %q given twice", label)
		}
		labels[label] = true
		n := len(t.Categories)
		switch {
		case n == 0 && v != 0:
			return t, fail("the first category must start at 0, not %s", num)
		case n > 0 && v <= t.Categories[n-1].MinInclusive:
			return t, fail("bound %s does not rise above the previous one (%g)", num, t.Categories[n-1].MinInclusive)
		}
		t.Categories = append(t.Categories, VentilationCategory{Label: label, MinInclusive: v})
	}
	if err := sc.Err(); err != nil {
		return t, fmt.Errorf("line %d: %w", line+1, err)
	}
	switch {
	case t.Name == "":
		return t, fmt.Errorf(`no "name:" line`)
	case t.Unit == "":
		return t, fmt.Errorf(`no "unit:" line (m2/s or kt*ft)`)
	case len(t.Categories) == 0:
		return t, fmt.Errorf("no categories (lines of a lower bound and a label)")
	}
	return t, nil
}

// startsNumber reports whether s starts like a number (a category line,
// whose label may hold a colon).
func startsNumber(s string) bool {
	return s != "" && (s[0] >= '0' && s[0] <= '9' || s[0] == '.' || s[0] == '-' || s[0] == '+')
}

// Describe returns the table in the file format ParseVentilationTable
// reads (a built-in table printed this way is a starting point for one's
// own, once renamed).
func (t VentilationTable) Describe() string {
	var b strings.Builder
	fmt.Fprintf(&b, "name: %s\nunit: %s\n", t.Name, t.Unit)
	if t.Source != "" {
		fmt.Fprintf(&b, "source: %s\n", t.Source)
	}
	for _, c := range t.Categories {
		fmt.Fprintf(&b, "%-10s %s\n", strconv.FormatFloat(c.MinInclusive, 'f', -1, 64), c.Label)
	}
	return b.String()
}
