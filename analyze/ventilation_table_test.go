package analyze

import (
	"math"
	"strings"
	"testing"
)

// TestKtFtConversionNIST checks the kt·ft factor against NIST SP 811
// (2008), Appendix B.8: knot = 5.144 444 E−01 m/s, foot = 3.048 E−01 m
// (exact). 1 m²/s = 1/(0.5144444 × 0.3048) kt·ft = 6.37744 kt·ft.
func TestKtFtConversionNIST(t *testing.T) {
	nist := 1 / (5.144444e-01 * 3.048e-01)
	if math.Abs(KtFtPerM2S-nist) > 1e-5 {
		t.Errorf("KtFtPerM2S = %.7f, NIST SP 811 gives %.7f", KtFtPerM2S, nist)
	}
	if math.Abs(KtFtPerM2S-6.37744) > 5e-6 {
		t.Errorf("KtFtPerM2S = %.7f, want 6.37744 to 5 decimals", KtFtPerM2S)
	}
}

// TestParseVentilationTable: the documented file format (README,
// "Ventilation categories") and its errors, each naming its line.
func TestParseVentilationTable(t *testing.T) {
	// An invented agency's table (scaffolding for the parser, not a real
	// agency's thresholds).
	good := `# invented county smoke plan
name: county_smoke
unit: kt*ft
source: Invented county smoke-management plan, 2024

0       poor: no burning   # a label may hold a colon
33500   marginal
60000   good
`
	tab, err := ParseVentilationTable(strings.NewReader(good))
	if err != nil {
		t.Fatal(err)
	}
	if tab.Name != "county_smoke" || tab.Unit != UnitKtFt || tab.Source != "Invented county smoke-management plan, 2024" || len(tab.Categories) != 3 ||
		tab.Categories[0].Label != "poor: no burning" || tab.Categories[2].MinInclusive != 60000 {
		t.Fatalf("parsed %+v", tab)
	}
	// 8000 m²/s is 51,020 kt·ft: marginal; 10,000 m²/s is 63,774: good.
	for _, c := range []struct {
		m2s  float64
		want string
	}{{1000, "poor: no burning"}, {8000, "marginal"}, {10000, "good"}} {
		if got := tab.Category(c.m2s); got != c.want {
			t.Errorf("Category(%g m2/s) = %q, want %q", c.m2s, got, c.want)
		}
	}
	// The built-in tables print in the format and read back (renamed).
	for _, b := range BuiltinVentilationTables() {
		if b.Source == "" {
			t.Errorf("built-in table %s names no source", b.Name)
		}
		text := strings.Replace(b.Describe(), "name: "+b.Name, "name: my_"+b.Name, 1)
		back, err := ParseVentilationTable(strings.NewReader(text))
		if err != nil {
			t.Errorf("%s: %v\n%s", b.Name, err, text)
			continue
		}
		back.Name = b.Name
		if back.Unit != b.Unit || back.Source != b.Source || len(back.Categories) != len(b.Categories) {
			t.Errorf("%s read back as %+v", b.Name, back)
		}
		for i := range b.Categories {
			if i < len(back.Categories) && back.Categories[i] != b.Categories[i] {
				t.Errorf("%s category %d: %+v, want %+v", b.Name, i, back.Categories[i], b.Categories[i])
			}
		}
	}
	head := "name: t1\nunit: m2/s\n"
	for _, c := range []struct{ text, want string }{
		{"unit: m2/s\n0 a\n", `no "name:" line`},
		{"name: t1\n0 a\n", `no "unit:" line`},
		{head, "no categories"},
		{head + "100 a\n", "line 3: the first category must start at 0"},
		{head + "0 a\n500 b\n500 c\n", "line 5: bound 500 does not rise"},
		{head + "0 a\n100 a\n", `line 4: label "a" given twice`},
		{head + "0\n", "line 3: bound 0 has no label"},
		{head + "zero a\n", "line 3:"},
		{head + "0 a\nNaN b\n", "line 4:"},
		{"name: generic\nunit: m2/s\n0 a\n", "line 1: name \"generic\" is a built-in"},
		{"name: Bad Name\n", "line 1: name"},
		{"name: t1\nunit: furlongs\n", "line 2: unit"},
		{"name: t1\nname: t2\n", "line 2: name given twice"},
		{"name: t1\ncolour: red\n", "line 2: unknown key"},
		{head + "0 " + strings.Repeat("x", 41) + "\n", "line 3: label"},
		{head + "0 a\x01b\n", "line 3: label"},
	} {
		_, err := ParseVentilationTable(strings.NewReader(c.text))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: error %v, want %q", c.text, err, c.want)
		}
	}
}
