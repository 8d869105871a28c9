package figures

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

// TestOnlySounding: the station and time left out are filled in only when
// the file leaves no choice, and otherwise the error names the flag that
// chooses (the behaviour of "sondeclim profile --file", whose README
// example leaves --station out for a one-station file).
func TestOnlySounding(t *testing.T) {
	t0 := time.Date(2016, 7, 1, 11, 3, 0, 0, time.UTC)
	row := func(id string, at time.Time) schema.SoundingRow {
		return schema.SoundingRow{StationID: id, LaunchTime: at}
	}
	two := []schema.SoundingRow{row("B", t0), row("A", t0.Add(12*time.Hour))}
	if _, _, err := OnlySounding(two, "f.txt", "", t0); err == nil || !strings.Contains(err.Error(), "f.txt holds 2 stations (A, B); choose one with --station") {
		t.Errorf("two stations: %v", err)
	}
	st, at, err := OnlySounding(two, "f.txt", "", time.Time{})
	if err == nil || st != "" || !at.IsZero() {
		t.Errorf("two stations, no time: %q %v %v", st, at, err)
	}
	if st, at, err := OnlySounding(two, "f.txt", "A", time.Time{}); err != nil || st != "A" || !at.Equal(t0.Add(12*time.Hour)) {
		t.Errorf("station A's one sounding: %q %v %v", st, at, err)
	}
	one := []schema.SoundingRow{row("A", t0), row("A", t0.Add(12*time.Hour))}
	if st, at, err := OnlySounding(one, "f.txt", "", t0); err != nil || st != "A" || !at.Equal(t0) {
		t.Errorf("one station, time given: %q %v %v (want A and the time given)", st, at, err)
	}
	if _, _, err := OnlySounding(one, "f.txt", "", time.Time{}); err == nil || !strings.Contains(err.Error(), "holds 2 soundings of A; choose one with --time") {
		t.Errorf("two soundings, no time: %v", err)
	}
	if _, _, err := OnlySounding(one, "f.txt", "Z", time.Time{}); err == nil || !strings.Contains(err.Error(), "holds 0 soundings of Z") {
		t.Errorf("absent station: %v", err)
	}
}

// TestProfileText: methods are named in words (analyze.MethodTitle) in the
// text, by their code names in JSON, where missing values are null; the
// numbers are rounded as printed (heights to 1 m).
func TestProfileText(t *testing.T) {
	nan := math.NaN()
	p := &Profile{StationID: "X", LatitudeDeg: -33.5, LongitudeDeg: 151.25, ElevationM: 5, SunElevation: nan,
		SurfacePressureHPa: nan, SurfaceTemperatureC: nan, SurfaceDewpointC: nan, SurfaceThetaK: nan, ResidualTopAGLM: nan,
		Consensus: MethodHeight{Method: Consensus, HeightAGLM: 512.4, Status: "ok", LevelSpacingM: nan}, SpreadM: 10, MethodsOK: 2,
		TransportWindMS: nan, VentilationM2S: nan, VentilationKtFt: nan, VentilationHeightMethod: "bulk_richardson_alt",
		Heights: []MethodHeight{{Method: "bulk_richardson_alt", HeightAGLM: 498.6, Status: "ok", LevelSpacingM: 40}}}
	var b bytes.Buffer
	if err := p.WriteText(&b); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{"bulk Richardson (alternative)  499", "consensus of methods", "x mixing height (bulk Richardson (alternative))",
		"33.5000 S, 151.2500 E, 5 m"} {
		if !strings.Contains(out, want) {
			t.Errorf("text lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "bulk_richardson_alt") {
		t.Errorf("text names a method by its code name:\n%s", out)
	}
	b.Reset()
	if err := p.WriteJSON(&b); err != nil {
		t.Fatal(err)
	}
	var v map[string]any
	if err := json.Unmarshal(b.Bytes(), &v); err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	hs, _ := v["mixing_heights"].([]any)
	if len(hs) != 1 || hs[0].(map[string]any)["method"] != "bulk_richardson_alt" {
		t.Errorf("JSON mixing_heights %v, want the code name", v["mixing_heights"])
	}
	if x, ok := v["surface_pressure_hpa"]; !ok || x != nil {
		t.Errorf("JSON surface_pressure_hpa %v (present %v), want null", x, ok)
	}
}
