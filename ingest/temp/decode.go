package temp

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// part is the message part of a report.
type part uint8

const (
	partA  part = iota // TTAA
	partB              // TTBB
	partC              // TTCC
	partD              // TTDD
	pilotB             // PPBB
	pilotA             // PPAA
	pilotC             // PPCC
	pilotD             // PPDD
	numParts
)

// knotMS is one knot in m/s: 1852 m per 3600 s (exact; international
// nautical mile).
const knotMS = 1852.0 / 3600.0

// celsiusK is 0 °C in K.
const celsiusK = thermo.ZeroCelsiusK

// report is one decoded part of one station's sounding.
type report struct {
	part    part
	station string
	day     int
	hour    int
	knots   bool
	ind     byte // Id (Parts A/C) or a4 (Parts B/D), '/' when not given
	levels  []level
	launch  [2]int // hour, minute of section 31313
	hasLnch bool
	line    int // line of the part identifier
	rank    int
	order   int
	// partial, when not nil, says which groups at the end of the report
	// were left out (wrapping ingest.ErrPartlyDecoded); the levels before
	// them are kept.
	partial error
}

// level is a decoded level together with the part it came from.
type level struct {
	sounding.Level
	from part
}

// errSkip marks reports that are dropped without an error (NIL, unknown
// parts).
var errSkip = errors.New("report skipped")

// partOf returns the part of an identifier group such as "TTAA".
func partOf(s string) (p part, known, decoded bool) {
	if len(s) != 4 {
		return 0, false, false
	}
	switch s[:2] {
	case "TT":
		switch s[2:] {
		case "AA":
			return partA, true, true
		case "BB":
			return partB, true, true
		case "CC":
			return partC, true, true
		case "DD":
			return partD, true, true
		}
	case "PP":
		switch s[2:] {
		case "AA":
			return pilotA, true, true
		case "BB":
			return pilotB, true, true
		case "CC":
			return pilotC, true, true
		case "DD":
			return pilotD, true, true
		}
	case "UU", "II", "XX":
		// TEMP SHIP, MOBIL and DROP carry a position section instead of a
		// station number; they are recognised and skipped.
		switch s[2:] {
		case "AA", "BB", "CC", "DD":
			return 0, true, false
		}
	}
	return 0, false, false
}

// decodeReport decodes one report. It returns errSkip for reports that are
// dropped silently, and a *lineError for malformed ones.
func decodeReport(raw rawReport, o *Options) (*report, error) {
	toks := raw.toks
	k := -1
	var p part
	for i, t := range toks {
		q, known, dec := partOf(t.s)
		if known {
			if !dec {
				if isNil(toks[i:]) {
					return nil, errSkip
				}
				return nil, &lineError{t.line, fmt.Errorf("%w: part %s", ingest.ErrUnsupported, t.s)}
			}
			k, p = i, q
			break
		}
	}
	if k < 0 {
		if framing(toks) {
			return nil, errSkip
		}
		return nil, &lineError{toks[0].line, fmt.Errorf("%w: no TEMP or PILOT part identifier in %s", ingest.ErrJunk, quoteTokens(toks))}
	}
	if isNil(toks[k:]) {
		return nil, errSkip
	}
	rep := &report{part: p, line: toks[k].line, rank: raw.rank, order: raw.order}
	if len(toks) < k+3 {
		return nil, &lineError{toks[k].line, fmt.Errorf("%w: %s report ends before the station number", ingest.ErrBadHeader, toks[k].s)}
	}
	if err := rep.section1(toks[k+1], toks[k+2]); err != nil {
		return nil, err
	}
	body := toks[k+3:]
	var err error
	switch p {
	case partA, partC:
		err = rep.decodeStandard(body)
	case partB, partD:
		err = rep.decodeSignificant(body)
	case pilotA, pilotC:
		err = rep.decodePilotStandard(body)
	case pilotB, pilotD:
		err = rep.decodePilot(body, o.pilotUnit())
	}
	if err != nil {
		return nil, err
	}
	if len(rep.levels) == 0 {
		return nil, &lineError{toks[k].line, fmt.Errorf("%w: %s %s has no surface or level groups (only regional or coded remarks)", ingest.ErrNoData, toks[k].s, rep.station)}
	}
	return rep, nil
}

// framing reports whether the tokens of a text without a part identifier
// are only what frames bulletins on the GTS: channel sequence numbers (up
// to 5 digits, as the "221" after each SOH of the real US stream,
// PROVENANCE.md) and the ZCZC/NNNN start and end of message lines (WMO
// Manual on the GTS, WMO-No. 386, from memory).
func framing(toks []token) bool {
	for _, t := range toks {
		if !(isDigits(t.s) && len(t.s) <= 5 || t.s == "ZCZC" || t.s == "NNNN") {
			return false
		}
	}
	return true
}

// quoteTokens quotes the start of a token list (ingest.Quote).
func quoteTokens(toks []token) string {
	var b strings.Builder
	for _, t := range toks {
		if b.Len() > ingest.QuoteLimit {
			break
		}
		if b.Len() > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(t.s)
	}
	return ingest.Quote(b.String())
}

// lineError is a decoding error at a line of the input.
type lineError struct {
	line int
	err  error
}

func (e *lineError) Error() string { return fmt.Sprintf("line %d: %v", e.line, e.err) }
func (e *lineError) Unwrap() error { return e.err }

func badGroup(t token, what string) error {
	return &lineError{t.line, fmt.Errorf("%w: %s group %s", ingest.ErrBadLevel, what, ingest.Quote(t.s))}
}

// section1 decodes YYGGId (YYGGa4) and IIiii.
func (r *report) section1(yg, st token) error {
	g := yg.s
	if len(g) != 5 || !isDigits(g[:4]) || !(isDigits(g[4:]) || g[4] == '/') {
		return &lineError{yg.line, fmt.Errorf("%w: day/hour group %s", ingest.ErrBadHeader, ingest.Quote(g))}
	}
	yy, _ := strconv.Atoi(g[:2])
	gg, _ := strconv.Atoi(g[2:4])
	if yy > 50 {
		yy -= 50
		r.knots = true
	}
	if yy < 1 || yy > 31 || gg > 23 {
		return &lineError{yg.line, fmt.Errorf("%w: day/hour group %s out of range", ingest.ErrBadHeader, ingest.Quote(g))}
	}
	if len(st.s) != 5 || !isDigits(st.s) {
		return &lineError{st.line, fmt.Errorf("%w: station group %s", ingest.ErrBadHeader, ingest.Quote(st.s))}
	}
	r.day, r.hour, r.ind, r.station = yy, gg, g[4], st.s
	return nil
}

// isSection reports whether g opens a numbered section (21212, 31313,
// 41414, 51515–59595, 61616–69696).
func isSection(g string) bool {
	if len(g) != 5 || g[0] != g[2] || g[2] != g[4] || g[1] != g[3] || g[0] == g[1] {
		return false
	}
	switch g[0] {
	case '2', '3', '4':
		return g[1] == '1'
	case '5', '6':
		return g[1] >= '1' && g[1] <= '9'
	}
	return false
}

// stdLevel is a standard isobaric surface of Part A or C.
type stdLevel struct {
	ind   string  // two-digit indicator
	hPa   float64 // pressure
	unitM float64 // height unit of hhh (1 m or 10 m)
	modM  float64 // period of the dropped leading digits, m
	stdM  float64 // USSA76 height, gpm, used to restore the dropped digits
}

// Standard levels. Heights of the USSA76 standard atmosphere (METHODS §1.7
// for 1000–100 hPa; 70–1 hPa from the USSA76 tables, from memory); they
// only choose the dropped leading digits, the nearest candidate being at
// most half a period (500 m or 5000 m) away.
var stdA = []stdLevel{
	{"00", 1000, 1, 1000, 110.9}, {"92", 925, 1, 1000, 762.0}, {"85", 850, 1, 1000, 1457.3},
	{"70", 700, 1, 1000, 3012.2}, {"50", 500, 10, 10000, 5574.4}, {"40", 400, 10, 10000, 7185.4},
	{"30", 300, 10, 10000, 9164.0}, {"25", 250, 10, 10000, 10362.9}, {"20", 200, 10, 10000, 11784.0},
	{"15", 150, 10, 10000, 13608.4}, {"10", 100, 10, 10000, 16179.7},
}

var stdC = []stdLevel{
	{"70", 70, 10, 10000, 18442}, {"50", 50, 10, 10000, 20576}, {"30", 30, 10, 10000, 23849},
	{"20", 20, 10, 10000, 26481}, {"10", 10, 10, 10000, 31055},
	{"07", 7, 10, 10000, 33400}, {"05", 5, 10, 10000, 35800}, {"03", 3, 10, 10000, 39400},
	{"02", 2, 10, 10000, 42400}, {"01", 1, 10, 10000, 47800},
}

// height restores a coded standard-level height hhh in gpm: the candidate
// hhh·unit + k·period nearest to a guess. The guess is the height of the
// last level decoded below (lastM, at standard height lastStdM) plus the
// standard-atmosphere thickness up to this level, or the
// standard-atmosphere height itself when no lower height is known (lastM
// NaN). At ordinary stations this reproduces the published rules (850 hPa:
// +1000 m; 700 hPa: +3000 m when hhh < 500 else +2000 m; 250–100 hPa:
// +10000 m); in cold polar air, where 700 hPa can lie below 2500 m and
// 250 hPa below 10 km, following the lower level keeps it right. A
// 1000-hPa height of 500 + |h| codes a negative height.
func (s stdLevel) height(hhh int, lastM, lastStdM float64) float64 {
	if s.hPa == 1000 {
		if hhh >= 500 {
			return -float64(hhh - 500)
		}
		return float64(hhh)
	}
	guess := s.stdM
	if !math.IsNaN(lastM) {
		guess = lastM + (s.stdM - lastStdM)
	}
	v := float64(hhh) * s.unitM
	k := math.Round((guess - v) / s.modM)
	return v + k*s.modM
}

// decodeTemp decodes TTTaDD (code tables 3931 and 0777) into T in °C and
// the dewpoint depression in K; NaN where missing or invalid (DD 51–55).
func decodeTemp(g string) (tC, dpd float64, ok bool) {
	tC, dpd = math.NaN(), math.NaN()
	if len(g) != 5 {
		return tC, dpd, false
	}
	for i := 0; i < 5; i++ {
		if (g[i] < '0' || g[i] > '9') && g[i] != '/' {
			return tC, dpd, false
		}
	}
	if isDigits(g[:3]) {
		tt, _ := strconv.Atoi(g[:2])
		ta := int(g[2] - '0')
		tC = float64(tt) + float64(ta)/10
		if ta%2 == 1 {
			tC = -tC
		}
	}
	if isDigits(g[3:]) {
		dd, _ := strconv.Atoi(g[3:])
		switch {
		case dd <= 50:
			dpd = float64(dd) / 10
		case dd >= 56:
			dpd = float64(dd - 50)
		}
	}
	return tC, dpd, true
}

// decodeWind decodes dddff (direction to 5°, 500 added to the speed for
// the 5°): direction in degrees and speed in the report's unit; NaN where
// missing. Direction 99 is variable (direction NaN, speed kept).
func decodeWind(g string) (dir, spd float64, ok bool) {
	dir, spd = math.NaN(), math.NaN()
	if len(g) != 5 {
		return dir, spd, false
	}
	for i := 0; i < 5; i++ {
		if (g[i] < '0' || g[i] > '9') && g[i] != '/' {
			return dir, spd, false
		}
	}
	if !isDigits(g) {
		return dir, spd, true
	}
	dd, _ := strconv.Atoi(g[:2])
	fff, _ := strconv.Atoi(g[2:])
	d := dd * 10
	if fff >= 500 {
		d += 5
		fff -= 500
	}
	switch {
	case dd == 99:
		return dir, float64(fff), true
	case d > 360:
		return dir, spd, true
	}
	return float64(d), float64(fff), true
}

// newLevel returns a level of the given kind at pressure hPa.
func (r *report) newLevel(kind sounding.LevelKind, hPa float64, line int) level {
	l := level{Level: sounding.NewLevel(), from: r.part}
	l.Kind, l.Line = kind, line
	if !math.IsNaN(hPa) {
		l.PressurePa = hPa * 100
		l.Status[sounding.VarPressure] = sounding.Reported
	}
	return l
}

// setTemp stores a TTTaDD group on l.
func setTemp(l *level, t token) error {
	tC, dpd, ok := decodeTemp(t.s)
	if !ok {
		return badGroup(t, "temperature")
	}
	if !math.IsNaN(tC) {
		l.TemperatureK = tC + celsiusK
		l.Status[sounding.VarTemperature] = sounding.Reported
	}
	if !math.IsNaN(dpd) {
		l.DewpointDepressionK = dpd
		l.Status[sounding.VarDewpointDepression] = sounding.Reported
		if !math.IsNaN(tC) {
			l.DewpointK = l.TemperatureK - dpd
		}
	}
	return nil
}

// setWind stores a dddff group on l.
func (r *report) setWind(l *level, t token) error {
	d, f, ok := decodeWind(t.s)
	if !ok {
		return badGroup(t, "wind")
	}
	if !math.IsNaN(d) {
		l.WindDirectionDeg = d
		l.Status[sounding.VarWindDirection] = sounding.Reported
	}
	if !math.IsNaN(f) {
		if r.knots {
			f *= knotMS
		}
		l.WindSpeedMS = f
		l.Status[sounding.VarWindSpeed] = sounding.Reported
	}
	return nil
}

// section31313 reads srrarasasa and the optional 8GGgg launch time after
// a 31313 group at body[i]; it returns the index of the next group.
func (r *report) section31313(body []token, i int) (int, error) {
	i++ // 31313
	if i < len(body) {
		i++ // srrarasasa
	}
	if i < len(body) && len(body[i].s) == 5 && body[i].s[0] == '8' {
		g := body[i].s
		if isDigits(g) {
			hh, _ := strconv.Atoi(g[1:3])
			mm, _ := strconv.Atoi(g[3:5])
			if hh < 24 && mm < 60 {
				r.launch, r.hasLnch = [2]int{hh, mm}, true
			}
		}
		i++
	}
	if i < len(body) && len(body[i].s) == 5 && body[i].s[0] == '9' {
		i++ // 9snTwTwTw sea temperature
	}
	return i, nil
}

// otherSection handles a section group at body[i] that is not 21212: it
// returns the index of the next group to decode, or len(body) to stop.
func (r *report) otherSection(body []token, i int) (int, error) {
	switch body[i].s {
	case "31313":
		return r.section31313(body, i)
	case "41414":
		return min(i+2, len(body)), nil
	}
	return len(body), nil // regional sections: skip the rest
}

// isNil reports whether a report is an explicit NIL (nothing to decode, by
// the sender's own statement).
func isNil(toks []token) bool {
	for _, t := range toks {
		if t.s == "NIL" {
			return true
		}
	}
	return false
}
