package temp

import (
	"errors"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// sharedDir returns ../shared/validation/temp, or skips the test.
func sharedDir(t testing.TB) string { return realdata.Dir(t, "temp") }

// readAll decodes every sounding of r and returns them with the errors.
func readAll(t testing.TB, rd *Reader) ([]*sounding.Sounding, []error) {
	t.Helper()
	var ss []*sounding.Sounding
	var errs []error
	for {
		s, err := rd.Next()
		if err == io.EOF {
			return ss, errs
		}
		if err != nil {
			var pe *ingest.ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error is not a *ingest.ParseError: %v", err)
			}
			errs = append(errs, err)
			continue
		}
		ss = append(ss, s)
	}
}

func levelAt(s *sounding.Sounding, hPa float64) *sounding.Level {
	for i := range s.Levels {
		if math.Abs(s.Levels[i].PressurePa-hPa*100) < 1 {
			return &s.Levels[i]
		}
	}
	return nil
}

// want is one expected level: NaN means "not checked".
type want struct {
	hPa, heightM, tC, tdC, dirDeg, kt float64
}

func near(got, want, tol float64) bool {
	if math.IsNaN(want) {
		return true
	}
	return math.Abs(got-want) <= tol
}

func checkLevels(t *testing.T, s *sounding.Sounding, ws []want) {
	t.Helper()
	for _, w := range ws {
		l := levelAt(s, w.hPa)
		if l == nil {
			t.Errorf("%s: no level at %v hPa", s.StationID, w.hPa)
			continue
		}
		if !near(l.HeightM, w.heightM, 0.01) || !near(l.TemperatureK-celsiusK, w.tC, 1e-9) ||
			!near(l.DewpointK-celsiusK, w.tdC, 1e-9) || !near(l.WindDirectionDeg, w.dirDeg, 0) ||
			!near(l.WindSpeedMS/knotMS, w.kt, 1e-9) {
			t.Errorf("%s %v hPa: got z=%v T=%.2f Td=%.2f %v°/%.2f kt; want %+v", s.StationID, w.hPa,
				l.HeightM, l.TemperatureK-celsiusK, l.DewpointK-celsiusK, l.WindDirectionDeg, l.WindSpeedMS/knotMS, w)
		}
	}
}

const nan = -999 // placeholder in tables, turned into NaN

func fix(ws []want) []want {
	for i := range ws {
		for _, p := range []*float64{&ws[i].heightM, &ws[i].tC, &ws[i].tdC, &ws[i].dirDeg, &ws[i].kt} {
			if *p == nan {
				*p = math.NaN()
			}
		}
	}
	return ws
}

// Synthetic message and expected values: METHODS.md §9 "TEMP decoding"
// (derived by the rules of §7.1).
const methodsPartA = "TTAA 56121 72208 99019 21456 18010 00178 20658 19013 92848 16856 21518 85563 12456 23521 70152 01158 25025 50575 17764 26535 40738 29762 26542 30937 45160 26553 25056 52957 26560 20198 58757 26064 15378 60966 27051 10627 66569 27033 88201 58757 26564 77230 27620 41616="
const methodsPartB = "TTBB 06001 72208 00019 14456 11983 16650 22962 18257 33850 12456="

func TestMethodsPartA(t *testing.T) {
	ref := time.Date(2024, 3, 1, 0, 0, 0, 0, time.UTC) // invented month; TEMP gives the day only
	ss, errs := readAll(t, NewReader(strings.NewReader(methodsPartA), "synthetic", Options{Reference: ref}))
	if len(errs) > 0 || len(ss) != 1 {
		t.Fatalf("got %d soundings, errors %v", len(ss), errs)
	}
	s := ss[0]
	// METHODS §9: day 6, 12 UTC, knots (YY = 56), Id = 1, station 72208.
	if s.StationID != "72208" || !s.NominalTime.Equal(time.Date(2024, 3, 6, 12, 0, 0, 0, time.UTC)) {
		t.Errorf("station %s time %v", s.StationID, s.NominalTime)
	}
	if !math.IsNaN(s.ElevationM) || !math.IsNaN(s.LatitudeDeg) || s.LaunchTimeReported {
		t.Errorf("elevation %v lat %v launch reported %v: want NaN, NaN, false", s.ElevationM, s.LatitudeDeg, s.LaunchTimeReported)
	}
	// METHODS §9 list, level by level (Td = T − DPD).
	checkLevels(t, s, fix([]want{
		{1019, nan, 21.4, 15.4, 180, 10},
		{1000, 178, 20.6, 12.6, 190, 13},
		{925, 848, 16.8, 10.8, 215, 18},
		{850, 1563, 12.4, 6.4, 235, 21},
		{700, 3152, -1.1, -9.1, 250, 25},
		{500, 5750, -17.7, -31.7, 265, 35},
		{400, 7380, -29.7, -41.7, 265, 42},
		{300, 9370, -45.1, -55.1, 265, 53},
		{250, 10560, -52.9, -59.9, 265, 60},
		{200, 11980, -58.7, -65.7, 260, 64},
		{150, 13780, -60.9, -76.9, 270, 51},
		{100, 16270, -66.5, -85.5, 270, 33},
		{201, nan, -58.7, -65.7, 265, 64}, // tropopause
		{230, nan, nan, nan, 275, 120},    // maximum wind
	}))
	if l := levelAt(s, 201); l == nil || !l.Tropopause || l.Kind != sounding.KindSignificant {
		t.Errorf("201 hPa should be the tropopause: %+v", l)
	}
	if l := levelAt(s, 230); l == nil || !math.IsNaN(l.TemperatureK) || l.Kind != sounding.KindSignificant {
		t.Errorf("230 hPa should be a wind-only significant level: %+v", l)
	}
	if l := levelAt(s, 1019); l == nil || l.Kind != sounding.KindSurface || !math.IsNaN(l.HeightM) {
		t.Errorf("1019 hPa should be the surface without height: %+v", l)
	}
	for i := 1; i < len(s.Levels); i++ {
		if !(s.Levels[i].PressurePa < s.Levels[i-1].PressurePa) {
			t.Fatalf("levels not sorted by decreasing pressure at %d", i)
		}
	}
	// 1 kt = 1852/3600 m/s (international nautical mile): 120 kt = 61.7333 m/s.
	if l := levelAt(s, 230); math.Abs(l.WindSpeedMS-61.73333) > 1e-4 {
		t.Errorf("120 kt = %v m/s, want 61.7333", l.WindSpeedMS)
	}
}

func TestMethodsPartsAB(t *testing.T) {
	ref := time.Date(2024, 3, 1, 0, 0, 0, 0, time.UTC)
	// As printed in METHODS §9, the Part B header 06001 decodes to day 6,
	// 00 UTC, m/s (no +50), while Part A is day 6, 12 UTC: by the §7.1
	// rules they are two soundings.
	in := methodsPartA + "\n" + methodsPartB
	ss, errs := readAll(t, NewReader(strings.NewReader(in), "synthetic", Options{Reference: ref}))
	if len(errs) > 0 || len(ss) != 2 || ss[1].NominalHour() != 0 || ss[0].NominalHour() != 12 {
		t.Fatalf("got %d soundings, errors %v; want 12 UTC and 00 UTC", len(ss), errs)
	}
	// With the Part B section 1 set to Part A's day and hour (56128) the
	// two parts merge.
	in = methodsPartA + "\n" + strings.Replace(methodsPartB, "06001", "56128", 1)
	ss, errs = readAll(t, NewReader(strings.NewReader(in), "synthetic", Options{Reference: ref}))
	if len(errs) > 0 || len(ss) != 1 {
		t.Fatalf("got %d soundings, errors %v", len(ss), errs)
	}
	s := ss[0]
	// METHODS §9 Part B snippet: 1019 hPa 14.4/8.4; 983 16.6/11.6;
	// 962 18.2/11.2; 850 12.4/6.4. Significant heights stay NaN. At the
	// surface the Part B temperature is kept (the §9 inversion figures,
	// ΔT = +3.8 K from the surface to 962 hPa, are built on it); the
	// surface wind comes from Part A (180°/10 kt). At 850 hPa Part A's
	// standard level (height 1563 m) is kept.
	checkLevels(t, s, fix([]want{
		{1019, nan, 14.4, 8.4, 180, 10},
		{983, nan, 16.6, 11.6, nan, nan},
		{962, nan, 18.2, 11.2, nan, nan},
		{850, 1563, 12.4, 6.4, 235, 21},
	}))
	for _, p := range []float64{983, 962} {
		if l := levelAt(s, p); l == nil || !math.IsNaN(l.HeightM) || l.Kind != sounding.KindSignificant {
			t.Errorf("%v hPa: want significant level with NaN height, got %+v", p, l)
		}
	}
	if l := levelAt(s, 850); l.Kind != sounding.KindStandard {
		t.Errorf("850 hPa kind %v, want standard", l.Kind)
	}
	if n := len(s.Levels); n != 16 { // 12 from A + tropopause + max wind + 983 + 962
		t.Errorf("%d levels, want 16", n)
	}
}

// Real report: 83746 Rio de Janeiro-Galeão, 2023-02-23 00 UTC
// (validation/temp, from a public decoder's test data). Hand decoding:
//
//	73001        day 73−50 = 23, 00 UTC, knots, Id 1
//	99017 25838 15003  surface 1017 hPa, 25.8 °C, DD 38 → 3.8 K, Td 22.0; 150°/3 kt
//	00156 25643 10003  1000 hPa 156 m, 25.6 °C, DPD 4.3 → Td 21.3; 100°/3 kt
//	85567 17013 08508  850 hPa 1567 m, 17.0 °C, DPD 1.3 → 15.7; 085°/8 kt
//	50592 07356 02010  500 hPa 592 dam = 5920 m, −7.3 °C (odd tenth), DD 56 → 6 K → −13.3; 020°/10 kt
//	25098 43138 29025  250 hPa 1098 dam = 10980 m, −43.1 °C, DPD 3.8 → −46.9; 290°/25 kt
//	31313 42308 82356  launch 23:56 UTC, the day before
//	TTBB 11903 18608   903 hPa 18.6 °C, DPD 0.8 → 17.8
//	TTBB 44799 15645   799 hPa 15.6 °C, DPD 4.5 → 11.1
//	TTBB 99611 02429   611 hPa 2.4 °C, DPD 2.9 → −0.5
//	21212 11764 00000  764 hPa calm
//	21212 44433 32011  433 hPa 320°/11 kt
func TestRio(t *testing.T) {
	dir := sharedDir(t)
	name := filepath.Join(dir, "83746-2023-02-23-00Z.txt")
	f, err := os.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	ss, errs := readAll(t, NewReader(f, name, Options{}))
	if len(errs) > 0 || len(ss) != 1 {
		t.Fatalf("got %d soundings, errors %v", len(ss), errs)
	}
	s := ss[0]
	if s.StationID != "83746" || !s.NominalTime.Equal(time.Date(2023, 2, 23, 0, 0, 0, 0, time.UTC)) {
		t.Errorf("station %s time %v (date from the file name)", s.StationID, s.NominalTime)
	}
	if !s.LaunchTimeReported || !s.LaunchTime.Equal(time.Date(2023, 2, 22, 23, 56, 0, 0, time.UTC)) {
		t.Errorf("launch %v reported %v, want 2023-02-22 23:56", s.LaunchTime, s.LaunchTimeReported)
	}
	checkLevels(t, s, fix([]want{
		{1017, nan, 25.8, 22.0, 150, 3},
		{1000, 156, 25.6, 21.3, 100, 3},
		{850, 1567, 17.0, 15.7, 85, 8},
		{500, 5920, -7.3, -13.3, 20, 10},
		{250, 10980, -43.1, -46.9, 290, 25},
		{903, nan, 18.6, 17.8, nan, nan},
		{799, nan, 15.6, 11.1, nan, nan},
		{611, nan, 2.4, -0.5, nan, nan},
		{764, nan, nan, nan, 0, 0},
		{433, nan, nan, nan, 320, 11},
	}))
	if s.Source.Line != 2 || s.Source.Format != Format {
		t.Errorf("source %+v, want line 2 (the TTAA line)", s.Source)
	}
}

var surfaceReport = regexp.MustCompile(`TTAA [0-9/]{5} ([0-9]{5}) 99`)

// Real stream: bulletins of 2022-07-13 00 UTC (validation/temp).
func TestBulletins(t *testing.T) {
	dir := sharedDir(t)
	name := filepath.Join(dir, "bulletins-2022-07-13-00Z.wmo")
	data, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	ss, errs := readAll(t, NewReader(strings.NewReader(string(data)), name, Options{}))
	// Nothing is dropped silently: every report that is neither NIL nor
	// decoded is reported. The stream holds, for five stations, parts
	// carrying only a regional 51515 101xx group (no data), and PILOT
	// Part D reports whose top levels use height indicator 8 (read in
	// part).
	byReason := map[error]int{}
	noData := map[string]bool{}
	for _, e := range errs {
		switch {
		case errors.Is(e, ingest.ErrPartlyDecoded):
			byReason[ingest.ErrPartlyDecoded]++
		case errors.Is(e, ingest.ErrNoData):
			byReason[ingest.ErrNoData]++
			if m := regexp.MustCompile(`TT.. ([0-9]{5})`).FindStringSubmatch(e.Error()); m != nil {
				noData[m[1]] = true
			}
		default:
			t.Errorf("unexpected rejection: %v", e)
		}
	}
	for _, id := range []string{"70026", "72214", "72403", "72501", "72518"} {
		if !noData[id] {
			t.Errorf("station %s sends only data-free parts but none was reported", id)
		}
	}
	if byReason[ingest.ErrPartlyDecoded] == 0 {
		t.Errorf("PILOT Part D groups with indicator 8 present in the stream were not reported")
	}
	t.Logf("remarks: %d reports read in part, %d data-free reports", byReason[ingest.ErrPartlyDecoded], byReason[ingest.ErrNoData])
	byID := map[string]*sounding.Sounding{}
	for _, s := range ss {
		if byID[s.StationID] != nil {
			t.Errorf("station %s appears twice", s.StationID)
		}
		byID[s.StationID] = s
	}
	// Independent count: stations with a Part A surface group, found by a
	// plain pattern over the file with line breaks removed. 112 stations
	// send a non-NIL Part A, but five of them (70026, 72214, 72403, 72501,
	// 72518) send only the regional group 51515 101xx in every part, with
	// no level at all, so 107 soundings carry data.
	flat := strings.NewReplacer("\r", "", "\n", " ").Replace(string(data))
	withSurface := map[string]bool{}
	for _, m := range surfaceReport.FindAllStringSubmatch(flat, -1) {
		withSurface[m[1]] = true
	}
	if len(withSurface) != 107 {
		t.Errorf("pattern found %d stations with a surface group, expected 107", len(withSurface))
	}
	for id := range withSurface {
		if s := byID[id]; s == nil || s.Levels[0].Kind != sounding.KindSurface {
			t.Errorf("station %s: missing or without surface level", id)
		}
	}
	if len(ss) != len(withSurface) {
		t.Errorf("%d soundings, want %d", len(ss), len(withSurface))
	}
	for _, id := range []string{"70026", "72214", "72403", "72501", "72518"} {
		if byID[id] != nil {
			t.Errorf("station %s has no levels and should not be emitted", id)
		}
	}
	for _, s := range ss {
		if !s.NominalTime.Equal(time.Date(2022, 7, 13, 0, 0, 0, 0, time.UTC)) {
			t.Errorf("%s: nominal time %v", s.StationID, s.NominalTime)
		}
	}

	// 72201 Key West, hand decoding of its Part A:
	//   99014 32259 11504  surface 1014 hPa, 32.2 °C, DD 59 → 9 K (Td 23.2); 115°/4 kt (504: +5°)
	//   00140 30057 11506  1000 hPa 140 m, 30.0 °C, DPD 7 → 23.0; 115°/6 kt
	//   85563 18256 11506  850 hPa 1563 m, 18.2 °C, DPD 6 → 12.2; 115°/6 kt
	//   70204 09457 11011  700 hPa 3204 m (204 < 500: +3000), 9.4 °C, DPD 7 → 2.4; 110°/11 kt
	//   25100 41137 15515  250 hPa 1100 dam = 11000 m, −41.1 °C, DPD 3.7 → −44.8; 155°/15 kt
	//   88107 74959 11017  tropopause 107 hPa, −74.9 °C, DPD 9 → −83.9; 110°/17 kt
	//   31313 44108 82302  launch 23:02 on the 12th
	// and of its Part B: 11988 27656 → 988 hPa, 27.6 °C, DPD 6 → 21.6.
	s := byID["72201"]
	if s == nil {
		t.Fatal("72201 missing")
	}
	checkLevels(t, s, fix([]want{
		{1014, nan, 32.2, 23.2, 115, 4},
		{1000, 140, 30.0, 23.0, 115, 6},
		{850, 1563, 18.2, 12.2, 115, 6},
		{700, 3204, 9.4, 2.4, 110, 11},
		{250, 11000, -41.1, -44.8, 155, 15},
		{107, nan, -74.9, -83.9, 110, 17},
		{988, nan, 27.6, 21.6, nan, nan},
	}))
	// 72201 PPBB (winds at heights; unit 1000 ft above sea level, an
	// assumption documented in doc.go): 90/12 11504 11507 08005 →
	// surface (skipped), 1000 ft = 304.8 m 115°/7 kt, 2000 ft = 609.6 m
	// 080°/5 kt; 90346 12004 10004 10506 → 3000 ft 120°/4 kt.
	for _, w := range []struct{ z, dir, kt float64 }{{304.8, 115, 7}, {609.6, 80, 5}, {914.4, 120, 4}} {
		found := false
		for _, l := range s.Levels {
			if l.Kind == sounding.KindWindOnly && math.Abs(l.HeightM-w.z) < 0.01 {
				found = l.WindDirectionDeg == w.dir && math.Abs(l.WindSpeedMS/knotMS-w.kt) < 1e-9 && math.IsNaN(l.PressurePa)
			}
		}
		if !found {
			t.Errorf("72201: wind-only level at %v m (%v°/%v kt) missing or wrong", w.z, w.dir, w.kt)
		}
	}
	if l := levelAt(s, 107); !l.Tropopause {
		t.Error("72201: 107 hPa should be the tropopause")
	}
	if !s.LaunchTime.Equal(time.Date(2022, 7, 12, 23, 2, 0, 0, time.UTC)) {
		t.Errorf("72201 launch %v", s.LaunchTime)
	}

	// 89664 McMurdo, hand decoding of its Part A (polar winter):
	//   99976 20135 05011  surface 976 hPa, −20.1 °C, DPD 3.5 → −23.6; 050°/11 kt
	//   00670 ///// /////  1000 hPa below the surface (extrapolated): dropped
	//   92412 19737 14505  925 hPa 412 m, −19.7 °C, DPD 3.7 → −23.4; 145°/5 kt
	//   85032 25317 18028  850 hPa 1032 m, −25.3 °C, DPD 1.7 → −27.0; 180°/28 kt
	//   70426 30522 19506  700 hPa: 426 + 2000 = 2426 m, not the +3000 of the
	//                      mid-latitude rule: the 850–700 hPa thickness at a mean
	//                      of about −28 °C is (Rd/g0)·T·ln(850/700) ≈ 1.39 km,
	//                      so 1032 + 1390 ≈ 2420 m (METHODS §1.6)
	//   25920 62768 34012  250 hPa 920 dam = 9200 m, −62.7 °C, DD 68 → 18 K
	//   88256 62967 34511  tropopause 256 hPa, −62.9 °C, DPD 17; 345°/11 kt
	s = byID["89664"]
	if s == nil {
		t.Fatal("89664 missing")
	}
	checkLevels(t, s, fix([]want{
		{976, nan, -20.1, -23.6, 50, 11},
		{925, 412, -19.7, -23.4, 145, 5},
		{850, 1032, -25.3, -27.0, 180, 28},
		{700, 2426, -30.5, -32.7, 195, 6},
		{250, 9200, -62.7, -80.7, 340, 12},
		{256, nan, -62.9, -79.9, 345, 11},
	}))
	if levelAt(s, 1000) != nil {
		t.Error("89664: 1000 hPa lies below the surface and should be dropped")
	}
}

// PILOT Part D (winds at heights above 100 hPa) of the real stream,
// checked against the same station's TEMP Part C, an independent report
// of the same balloon (validation/temp, 2022-07-13 00 UTC).
func TestPilotPartD(t *testing.T) {
	dir := sharedDir(t)
	name := filepath.Join(dir, "bulletins-2022-07-13-00Z.wmo")
	data, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	ss, _ := readAll(t, NewReader(strings.NewReader(string(data)), name, Options{}))
	var s *sounding.Sounding
	for _, x := range ss {
		if x.StationID == "72233" {
			s = x
		}
	}
	if s == nil {
		t.Fatal("72233 missing")
	}
	windAt := func(z float64) *sounding.Level {
		for i := range s.Levels {
			if l := &s.Levels[i]; l.Kind == sounding.KindWindOnly && math.Abs(l.HeightM-z) < 0.01 {
				return l
			}
		}
		return nil
	}
	// 72233 PPDD, hand decoding: 98013 08042 08545 11037 → 80 000 ft
	// (24 384 m) 080°/42 kt; 10012 10524 11023 09520 → 100 000 ft
	// (30 480 m) 105°/24 kt (indicator 1: 100 + 10·tn + u units);
	// 106// 08038 → 106 000 ft (32 308.8 m) 080°/38 kt.
	for _, w := range []struct{ z, dir, kt float64 }{{24384, 80, 42}, {30480, 105, 24}, {32308.8, 80, 38}} {
		l := windAt(w.z)
		if l == nil || l.WindDirectionDeg != w.dir || math.Abs(l.WindSpeedMS/knotMS-w.kt) > 1e-9 {
			t.Errorf("72233: wind-only level at %v m (%v°/%v kt) missing or wrong: %+v", w.z, w.dir, w.kt, l)
		}
	}
	// Outside check: the station's TTCC gives at 30 hPa (24 100 m,
	// 30410 54382 08540) 085°/40 kt and at 10 hPa (31 370 m, 10137 39987
	// 08525) 085°/25 kt; the PILOT winds nearest in height (80 000 ft,
	// 24 384 m; 103 000 ft is not reported, 102 000 ft = 31 090 m 095°/20
	// kt) agree within 10° and 5 kt.
	for _, c := range []struct{ z, dir, kt float64 }{{24384, 85, 40}, {31089.6, 85, 25}} {
		l := windAt(c.z)
		if l == nil {
			t.Errorf("72233: no PILOT wind at %v m", c.z)
			continue
		}
		if math.Abs(l.WindDirectionDeg-c.dir) > 10 || math.Abs(l.WindSpeedMS/knotMS-c.kt) > 5 {
			t.Errorf("72233: PILOT wind at %v m is %v°/%.0f kt, TEMP Part C nearby gives %v°/%v kt",
				c.z, l.WindDirectionDeg, l.WindSpeedMS/knotMS, c.dir, c.kt)
		}
	}
	// Heights rise through the report: the 1tn groups follow 99 units.
	var prev float64
	for _, l := range s.Levels {
		if l.Kind != sounding.KindWindOnly {
			continue
		}
		if l.HeightM <= prev {
			t.Errorf("72233: wind-only heights not increasing: %v after %v", l.HeightM, prev)
		}
		prev = l.HeightM
	}
}

// PILOT Parts A and C: standard-level winds. The stream of 2022-07-13
// sends both only as NIL, so this message is built in the FM 32 form
// (44/55 n P1P1 followed by n winds; from memory) from the real TTCC
// winds of 72233 that day (70 hPa 120°/12 kt, 50 hPa 105°/14, 30 hPa
// 085°/40, 20 hPa 105°/32, 10 hPa 085°/25), beside a real TTAA/TTCC pair
// would be the same balloon. A maximum-wind group 77PPP (tenths of hPa in
// Part C) closes it.
func TestPilotStandardParts(t *testing.T) {
	msg := "PPAA 63008 72233 55385 28010 27015 26020 44225 25030 24035=\n" +
		"PPCC 63008 72233 55370 12012 10514 08540 55220 10532 08525 77150 08545=\n" +
		"TTAA 6300/ 72233 99015 28456 18005 00113 28258 85520 18656=\n"
	ss, errs := readAll(t, NewReader(strings.NewReader(msg), "pilot-2022-07-13.txt", Options{}))
	if len(errs) > 0 || len(ss) != 1 {
		t.Fatalf("got %d soundings, errors %v", len(ss), errs)
	}
	s := ss[0]
	for _, w := range []struct{ hPa, dir, kt float64 }{
		{850, 280, 10}, {700, 270, 15}, {500, 260, 20}, {250, 250, 30}, {200, 240, 35},
		{70, 120, 12}, {50, 105, 14}, {30, 85, 40}, {20, 105, 32}, {10, 85, 25}, {15, 85, 45},
	} {
		l := levelAt(s, w.hPa)
		if l == nil || l.WindDirectionDeg != w.dir || math.Abs(l.WindSpeedMS/knotMS-w.kt) > 1e-9 {
			t.Errorf("%v hPa: want %v°/%v kt, got %+v", w.hPa, w.dir, w.kt, l)
		}
	}
	// The TEMP Part A temperature at 850 hPa survives beside the PILOT wind
	// of the same level (18.6 °C: 186, tenths even → positive).
	if l := levelAt(s, 850); l == nil || math.Abs(l.TemperatureK-celsiusK-18.6) > 1e-9 {
		t.Errorf("850 hPa temperature lost in the merge: %+v", l)
	}
}
