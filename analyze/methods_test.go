package analyze

import (
	"reflect"
	"regexp"
	"testing"
)

// TestMethodRegistry checks the registry's entries are usable by the
// rest of the program: unique snake_case names (they are column values
// and SQL literals), a height function, a Config field that exists,
// regimes from the three of METHODS §4.6a, and results that come out in
// registry order under each method's own name.
func TestMethodRegistry(t *testing.T) {
	snake := regexp.MustCompile(`^[a-z][a-z0-9_]*$`)
	seen := map[string]bool{}
	titles := map[string]bool{}
	cfgType := reflect.TypeFor[Config]()
	for _, m := range Methods() {
		if !snake.MatchString(m.Name) || seen[m.Name] || m.Name == HeightConsensus {
			t.Errorf("method name %q: not snake_case, repeated or reserved", m.Name)
		}
		seen[m.Name] = true
		// A title is words for people: not the code name, no underscore,
		// and no two methods share one.
		if m.Title == "" || m.Title == m.Name || regexp.MustCompile(`_`).MatchString(m.Title) || titles[m.Title] {
			t.Errorf("%s: title %q is empty, the code name, has an underscore or is repeated", m.Name, m.Title)
		}
		titles[m.Title] = true
		if got := MethodTitle(m.Name); got != m.Title {
			t.Errorf("MethodTitle(%q) = %q, want %q", m.Name, got, m.Title)
		}
		if m.height == nil {
			t.Errorf("%s: no height function", m.Name)
		}
		if _, ok := cfgType.FieldByName(m.Config); m.Config != "" && !ok {
			t.Errorf("%s: Config field %q does not exist", m.Name, m.Config)
		}
		if len(m.Regimes) == 0 {
			t.Errorf("%s: serves no regime", m.Name)
		}
		for _, g := range m.Regimes {
			if g != BLConvective && g != BLNeutral && g != BLStable {
				t.Errorf("%s: unknown regime %q", m.Name, g)
			}
		}
		if got, ok := LookupMethod(m.Name); !ok || got.Name != m.Name {
			t.Errorf("LookupMethod(%q) = %v, %v", m.Name, got.Name, ok)
		}
	}
	if got := MethodTitle("no_such_method"); got != "no_such_method" {
		t.Errorf("MethodTitle of an unregistered name = %q, want the name", got)
	}
	if _, ok := LookupMethod("no_such_method"); ok {
		t.Error("LookupMethod found an unregistered name")
	}
	r := Analyze(ribSounding(), DefaultConfig())
	names := MethodNames()
	if len(r.MixingHeights) != len(names) {
		t.Fatalf("%d results for %d methods", len(r.MixingHeights), len(names))
	}
	for i, name := range names {
		if r.MixingHeights[i].Method != name {
			t.Errorf("result %d is %q, registry has %q", i, r.MixingHeights[i].Method, name)
		}
		if m, ok := r.MixingHeight(name); !ok || m.Method != name {
			t.Errorf("MixingHeight(%q) = %+v, %v", name, m, ok)
		}
	}
	// The default consensus is the flagged methods, never the second
	// Richardson critical value (MixingHeightConfig doc).
	for _, name := range DefaultMixingHeightConfig().Consensus {
		if m, _ := LookupMethod(name); !m.Consensus || name == MethodRichardsonAlt {
			t.Errorf("default consensus holds %q", name)
		}
	}
	flagged := 0
	for _, m := range Methods() {
		if m.Consensus {
			flagged++
		}
	}
	if got := len(DefaultMixingHeightConfig().Consensus); got != flagged {
		t.Errorf("default consensus has %d methods, want the %d flagged in the registry", got, flagged)
	}
}
