package archivev2

import (
	"encoding/binary"
	"fmt"
	"math"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// Special values of the data records (igra2-data-format.txt).
const (
	codeRemoved = -8888 // removed by the archive's quality assurance
	codeMissing = -9999 // missing before quality assurance
)

// field returns columns from..to (1-based, inclusive) of line, clipped to
// the line's length.
func field(line []byte, from, to int) []byte {
	if from > len(line) {
		return nil
	}
	return line[from-1 : min(to, len(line))]
}

// blankAt reports whether 1-based column c is a space or beyond the line.
func blankAt(line []byte, c int) bool { return c > len(line) || line[c-1] == ' ' }

// atoi parses a right- or left-aligned decimal integer with an optional
// sign, surrounded by spaces, without allocating. ok is false for a blank
// or malformed field.
func atoi(b []byte) (v int, ok bool) {
	i, n := 0, len(b)
	for i < n && b[i] == ' ' {
		i++
	}
	for n > i && b[n-1] == ' ' {
		n--
	}
	neg := false
	if i < n && (b[i] == '-' || b[i] == '+') {
		neg = b[i] == '-'
		i++
	}
	if i == n || n-i > 9 {
		return 0, false
	}
	for _, c := range b[i:n] {
		d := c - '0'
		if d > 9 {
			return 0, false
		}
		v = v*10 + int(d)
	}
	if neg {
		v = -v
	}
	return v, true
}

// parseHeader reads a header record into a sounding without levels (and
// without room reserved for them: the reader reserves it, the indexer,
// which only needs the station and year, does not).
//
// Columns (1-based): ID 2–12, YEAR 14–17, MONTH 19–20, DAY 22–23, HOUR
// 25–26, RELTIME 28–31, NUMLEV 33–36, P_SRC 38–45, NP_SRC 47–54, LAT 56–62,
// LON 64–71. LAT and LON are degrees × 10⁴; a blank field, a negative
// all-nines code (−99999, −999999, −9999999) or a value outside ±90°/±180°
// gives NaN. Columns between fields must be blank. Times are set by
// nominalAndLaunch.
func parseHeader(line []byte) (*sounding.Sounding, error) {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ingest.ErrBadHeader, fmt.Sprintf(format, a...))
	}
	if len(line) < 36 {
		return nil, bad("%d characters, want at least 36", len(line))
	}
	for _, c := range [...]int{13, 18, 21, 24, 27, 32, 37, 46, 55, 63} {
		if !blankAt(line, c) {
			return nil, bad("column %d is not blank", c)
		}
	}
	id := strings.TrimSpace(string(field(line, 2, 12)))
	if id == "" || strings.ContainsAny(id, " \t") {
		return nil, bad("station id %q", field(line, 2, 12))
	}
	year, ok1 := atoi(field(line, 14, 17))
	month, ok2 := atoi(field(line, 19, 20))
	day, ok3 := atoi(field(line, 22, 23))
	if !ok1 || !ok2 || !ok3 || year < 1 || month < 1 || month > 12 || day < 1 ||
		day > time.Date(year, time.Month(month)+1, 0, 0, 0, 0, 0, time.UTC).Day() {
		return nil, bad("date %q", field(line, 14, 23))
	}
	hour, ok := atoi(field(line, 25, 26))
	if !ok || (hour > 23 && hour != 99) || hour < 0 {
		return nil, bad("hour %q", field(line, 25, 26))
	}
	rel, ok := atoi(field(line, 28, 31))
	relMin := -1 // minutes after 00 UTC, −1 when missing
	switch {
	case !ok || rel < 0:
		return nil, bad("release time %q", field(line, 28, 31))
	case rel == 9999:
	case rel/100 <= 23 && (rel%100 <= 59 || rel%100 == 99):
		relMin = rel / 100 * 60
		if rel%100 != 99 {
			relMin += rel % 100
		}
	default:
		return nil, bad("release time %q", field(line, 28, 31))
	}
	numlev, ok := atoi(field(line, 33, 36))
	if !ok || numlev < 0 {
		return nil, bad("level count %q", field(line, 33, 36))
	}
	lat, err := coord(field(line, 56, 62), 90)
	if err != nil {
		return nil, bad("latitude %q", field(line, 56, 62))
	}
	lon, err := coord(field(line, 64, 71), 180)
	if err != nil {
		return nil, bad("longitude %q", field(line, 64, 71))
	}
	s := &sounding.Sounding{
		StationID:      id,
		LatitudeDeg:    lat,
		LongitudeDeg:   lon,
		ElevationM:     math.NaN(),
		DeclaredLevels: numlev,
		PressureSource: strings.TrimSpace(string(field(line, 38, 45))),
		HeightSource:   strings.TrimSpace(string(field(line, 47, 54))),
	}
	s.NominalTime, s.LaunchTime, s.NominalHourInferred, s.LaunchTimeReported =
		nominalAndLaunch(year, time.Month(month), day, hour, relMin)
	return s, nil
}

// coord converts a header coordinate in degrees × 10⁴ to degrees; blank,
// negative all-nines codes and values beyond ±limit give NaN.
func coord(b []byte, limit float64) (float64, error) {
	if isBlank(b) {
		return math.NaN(), nil
	}
	v, ok := atoi(b)
	if !ok {
		return 0, ingest.ErrBadHeader
	}
	switch v {
	case -99999, -999999, -9999999:
		return math.NaN(), nil
	}
	d := float64(v) / 1e4
	if math.Abs(d) > limit {
		return math.NaN(), nil
	}
	return d, nil
}

// nominalAndLaunch returns the nominal and launch times of a sounding whose
// header gives date y-m-d, nominal hour (99 = missing) and release time as
// minutes after 00 UTC (relMin; −1 when RELTIME is 9999; an hour-only
// release time HH99 is passed as HH:00).
//
// The nominal time is the header date at the nominal hour. When the hour is
// 99 it is inferred (inferred = true) from the release time rounded to the
// nearest multiple of 3 h, halves rounding up, taken modulo 24 on the header
// date: a release at 23:30 gives 00 UTC of the header date. When both hour
// and release time are missing the nominal hour is taken as 00 UTC.
//
// The release is placed on the header date, the day before or the day after,
// whichever puts it closest to the nominal time (so always within ±12 h; a
// tie goes to the earlier day): "HOUR 00 RELTIME 2315" is a release at 23:15
// on the previous day. When RELTIME is 9999 the launch time is the nominal
// time and reported is false.
func nominalAndLaunch(y int, m time.Month, d, hour, relMin int) (nominal, launch time.Time, inferred, reported bool) {
	day := time.Date(y, m, d, 0, 0, 0, 0, time.UTC)
	switch {
	case hour != 99:
		nominal = day.Add(time.Duration(hour) * time.Hour)
	case relMin < 0:
		nominal, inferred = day, true
	default:
		h := (relMin + 90) / 180 * 3 % 24
		nominal, inferred = day.Add(time.Duration(h)*time.Hour), true
	}
	if relMin < 0 {
		return nominal, nominal, inferred, false
	}
	best := time.Time{}
	bestGap := time.Duration(math.MaxInt64)
	for k := -1; k <= 1; k++ {
		c := day.AddDate(0, 0, k).Add(time.Duration(relMin) * time.Minute)
		gap := c.Sub(nominal)
		if gap < 0 {
			gap = -gap
		}
		if gap < bestGap {
			best, bestGap = c, gap
		}
	}
	return nominal, best, inferred, true
}

// parseLevel reads one data record into lv, which it overwrites.
//
// Columns (1-based): LVLTYP1 1, LVLTYP2 2, ETIME 4–8 (MMMSS), PRESS 10–15
// (Pa), PFLAG 16, GPH 17–21 (gpm), ZFLAG 22, TEMP 23–27 (°C × 10), TFLAG 28,
// RH 29–33 (% × 10), DPDP 35–39 (°C × 10), WDIR 41–45 (degrees), WSPD 47–51
// (m/s × 10). Columns 3, 9, 34, 40 and 46 must be blank and flags blank, 'A'
// or 'B'.
//
// Kind: LVLTYP2 = 1 gives KindSurface whatever LVLTYP1 says (the files also
// hold "11", a surface on a standard level, and "01", a surface record with
// no pressure); otherwise LVLTYP1 1 is standard, 2 significant, 3 wind-only.
// LVLTYP1 = 0 is accepted only with LVLTYP2 = 1. LVLTYP2 = 2 marks the
// tropopause.
//
// −9999 gives NaN with status Missing, −8888 NaN with RemovedUpstream. The
// dewpoint is T − DPD when both are reported (status of the depression
// stays Reported; the dewpoint itself is derived here).
//
// The level is filled where it lies (a level is about 140 bytes; returning
// it by value and copying it into the sounding cost a tenth of the
// reading time on the real Sterling file). Records of the common form go
// through parseLevelFast, all others through parseLevelGeneral, which
// gives the same level and reports what is wrong.
func parseLevel(lv *sounding.Level, line []byte) error {
	if parseLevelFast(lv, line) {
		return nil
	}
	return parseLevelGeneral(lv, line)
}

// parseLevelGeneral is parseLevel for any line: it reads the fields one by
// one and reports the first bad one. parseLevel calls it for the lines
// parseLevelFast does not take.
func parseLevelGeneral(lv *sounding.Level, line []byte) error {
	*lv = sounding.NewLevel()
	if len(line) < 51 {
		return badLevel("%d characters, want at least 51", len(line))
	}
	for _, c := range [...]int{3, 9, 34, 40, 46} {
		if line[c-1] != ' ' {
			return badLevel("column %d is not blank", c)
		}
	}
	var ok bool
	if lv.Kind, lv.Tropopause, ok = levelKind(line[0], line[1]); !ok {
		return badLevel("level type %q", line[:2])
	}

	// The fields in column order; the first bad one is reported.
	if err := readField(lv, line, sounding.VarPressure, 10, 15, 16, 1, 0, &lv.PressurePa); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarHeight, 17, 21, 22, 1, 0, &lv.HeightM); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarTemperature, 23, 27, 28, 10, thermo.ZeroCelsiusK, &lv.TemperatureK); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarRelHumidity, 29, 33, 0, 10, 0, &lv.RelHumidityPct); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarDewpointDepression, 35, 39, 0, 10, 0, &lv.DewpointDepressionK); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarWindDirection, 41, 45, 0, 1, 0, &lv.WindDirectionDeg); err != nil {
		return err
	}
	if err := readField(lv, line, sounding.VarWindSpeed, 47, 51, 0, 10, 0, &lv.WindSpeedMS); err != nil {
		return err
	}
	raw, ok := atoi(line[3:8])
	if !ok {
		return badLevel("elapsed time %q in columns 4-8", line[3:8])
	}
	switch raw {
	case codeMissing:
		lv.Status[sounding.VarElapsedTime] = sounding.Missing
	case codeRemoved:
		lv.Status[sounding.VarElapsedTime] = sounding.RemovedUpstream
	default:
		lv.ElapsedS = float64(raw/100*60 + raw%100)
		lv.Status[sounding.VarElapsedTime] = sounding.Reported
	}
	if lv.Status[sounding.VarTemperature] == sounding.Reported &&
		lv.Status[sounding.VarDewpointDepression] == sounding.Reported {
		lv.DewpointK = lv.TemperatureK - lv.DewpointDepressionK
	}
	return nil
}

// levelKind reads the level type columns LVLTYP1 t1 and LVLTYP2 t2 as
// parseLevel describes them; ok is false for an invalid pair.
func levelKind(t1, t2 byte) (kind sounding.LevelKind, tropopause, ok bool) {
	switch {
	case t1 < '0' || t1 > '3' || t2 < '0' || t2 > '2' || (t1 == '0' && t2 != '1'):
		return 0, false, false
	case t2 == '1':
		kind = sounding.KindSurface
	case t1 == '1':
		kind = sounding.KindStandard
	case t1 == '2':
		kind = sounding.KindSignificant
	default:
		kind = sounding.KindWindOnly
	}
	return kind, t2 == '2', true
}

func badLevel(format string, a ...any) error {
	return fmt.Errorf("%w: %s", ingest.ErrBadLevel, fmt.Sprintf(format, a...))
}

// readField reads variable v of a data record, columns from..to (1-based)
// scaled as raw/scale + off, into *dst and its status into lv, with the
// flag in column flag (0 when the field has none) into lv.UpstreamTier.
func readField(lv *sounding.Level, line []byte, v sounding.Var, from, to, flag int, scale, off float64, dst *float64) error {
	raw, ok := atoi(line[from-1 : to])
	if !ok {
		return badLevel("%s %q in columns %d-%d", v, line[from-1:to], from, to)
	}
	if flag > 0 {
		switch f := line[flag-1]; f {
		case ' ':
		case 'A', 'B':
			lv.UpstreamTier[v] = f
		default:
			return badLevel("%s flag %q in column %d", v, f, flag)
		}
	}
	lv.Status[v], *dst = value(raw, scale, off)
	return nil
}

// value returns the status of a field's raw value and the value, raw/scale
// + off, or NaN for the special codes.
func value(raw int, scale, off float64) (sounding.Status, float64) {
	// Both codes are at most codeRemoved: one comparison passes the
	// common value.
	if raw <= codeRemoved {
		switch raw {
		case codeMissing:
			return sounding.Missing, math.NaN()
		case codeRemoved:
			return sounding.RemovedUpstream, math.NaN()
		}
	}
	return sounding.Reported, scaled(raw, scale, off)
}

// parseLevelFast reads the common data record, in which every field is
// right-aligned (spaces, an optional minus sign, then digits up to the
// field's last column), the separating columns are blank, the flags blank,
// 'A' or 'B', and the level type valid. It fills lv as parseLevelGeneral
// would and returns true, or returns false, leaving lv to be overwritten,
// for any other line, which the general path then reads (and rejects with
// its message where it is bad). TestFastLevelMatchesGeneral and
// FuzzFastLevel check the two paths against each other.
//
// Each field is read from the eight bytes that end at its last column as
// one 64-bit word, with no loop over its characters (fixedRun,
// fixedValue), in straight-line code. Every member of lv is written once:
// the statuses and the flags are put together as words and stored whole,
// the level type is looked up in levelTypes and the flags in flagTiers.
func parseLevelFast(lv *sounding.Level, line []byte) bool {
	if len(line) < 51 || line[8] != ' ' {
		return false
	}
	l := (*[51]byte)(line)
	// The level type digits less '0', LVLTYP1 in the low byte; any byte
	// outside '0'..'3' leaves bits outside 0x0303 (a borrow from a low
	// byte below '0' included).
	key := uint(binary.LittleEndian.Uint16(l[0:2])) - 0x3030
	if key&^0x0303 != 0 {
		return false
	}
	typ := levelTypes[(key|key>>6)&15]
	tp, tz, tt := flagTiers[l[15]], flagTiers[l[21]], flagTiers[l[27]]
	if !typ.ok || (tp|tz|tt)&badFlag != 0 {
		return false
	}
	lv.Kind, lv.Tropopause = typ.kind, typ.tropopause
	// Stored as one word (the compiler joins byte stores of one word).
	tw := uint64(tp)<<(8*sounding.VarPressure) | uint64(tz)<<(8*sounding.VarHeight) | uint64(tt)<<(8*sounding.VarTemperature)
	lv.UpstreamTier = [sounding.NumVars]byte{byte(tw), byte(tw >> 8), byte(tw >> 16), byte(tw >> 24),
		byte(tw >> 32), byte(tw >> 40), byte(tw >> 48), byte(tw >> 56)}

	// Each field, in column order: a "-9999" (codeMissing, the commonest
	// field of the real files) is taken whole, any other is read by
	// fixedRun and fixedValue; the fields after a blank column (ETIME,
	// DPDP, WDIR, WSPD) are read with it (field6), which must stay blank.
	// st holds the status of Var v in its byte v; bad, and bit 7 of a
	// byte of nd, are set when a field is not of fixedRun's form, and are
	// tested once at the end (lv may then hold anything).
	le := binary.LittleEndian
	nan := math.NaN()
	var st, bad, nd uint64
	if u := le.Uint64(l[0:8]); u&field6 == missing5|blank2 {
		lv.ElapsedS = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarElapsedTime)
	} else {
		x, neg, b, c := fixedRun(u, field6)
		bad, nd = bad|b, nd|c
		if u&field5 == removed5 {
			lv.ElapsedS = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarElapsedTime)
		} else {
			lv.ElapsedS = float64(fixedSeconds(x, neg))
		}
	}
	// The six-character pressure is read as its last five characters and
	// column 10: a space or, before five digits (column 11 a digit), a
	// digit. A pressure of another form ('-' before five digits) is left
	// to the general path.
	if u := le.Uint64(l[7:15]); u&field6 == missing5|blank2 {
		lv.PressurePa = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarPressure)
	} else {
		x, neg, b, c := fixedRun(u, field5)
		bad, nd = bad|b, nd|c
		p := fixedValue(x, neg)
		if c := l[9]; c != ' ' {
			if c-'0' > 9 || l[10]-'0' > 9 {
				return false
			}
			p += int(c-'0') * 100000
		}
		if p == codeRemoved {
			lv.PressurePa = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarPressure)
		} else {
			lv.PressurePa = float64(p)
		}
	}
	if u := le.Uint64(l[13:21]); u&field5 == missing5 {
		lv.HeightM = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarHeight)
	} else {
		x, neg, b, c := fixedRun(u, field5)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.HeightM = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarHeight)
		} else {
			lv.HeightM = scaled(v, 1, 0)
		}
	}
	if u := le.Uint64(l[19:27]); u&field5 == missing5 {
		lv.TemperatureK = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarTemperature)
	} else {
		x, neg, b, c := fixedRun(u, field5)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.TemperatureK = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarTemperature)
		} else {
			lv.TemperatureK = scaled(v, 10, thermo.ZeroCelsiusK)
		}
	}
	if u := le.Uint64(l[25:33]); u&field5 == missing5 {
		lv.RelHumidityPct = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarRelHumidity)
	} else {
		x, neg, b, c := fixedRun(u, field5)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.RelHumidityPct = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarRelHumidity)
		} else {
			lv.RelHumidityPct = scaled(v, 10, 0)
		}
	}
	if u := le.Uint64(l[31:39]); u&field6 == missing5|blank2 {
		lv.DewpointDepressionK = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarDewpointDepression)
	} else {
		x, neg, b, c := fixedRun(u, field6)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.DewpointDepressionK = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarDewpointDepression)
		} else {
			lv.DewpointDepressionK = scaled(v, 10, 0)
		}
	}
	if u := le.Uint64(l[37:45]); u&field6 == missing5|blank2 {
		lv.WindDirectionDeg = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarWindDirection)
	} else {
		x, neg, b, c := fixedRun(u, field6)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.WindDirectionDeg = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarWindDirection)
		} else {
			lv.WindDirectionDeg = scaled(v, 1, 0)
		}
	}
	if u := le.Uint64(l[43:51]); u&field6 == missing5|blank2 {
		lv.WindSpeedMS = nan
		st |= uint64(sounding.Missing) << (8 * sounding.VarWindSpeed)
	} else {
		x, neg, b, c := fixedRun(u, field6)
		bad, nd = bad|b, nd|c
		if v := fixedValue(x, neg); v == codeRemoved {
			lv.WindSpeedMS = nan
			st |= uint64(sounding.RemovedUpstream) << (8 * sounding.VarWindSpeed)
		} else {
			lv.WindSpeedMS = scaled(v, 10, 0)
		}
	}
	if bad|nd&(0x80*ones) != 0 {
		return false
	}
	if (st>>(8*sounding.VarTemperature)|st>>(8*sounding.VarDewpointDepression))&0xff == uint64(sounding.Reported) {
		lv.DewpointK = lv.TemperatureK - lv.DewpointDepressionK
	} else {
		lv.DewpointK = nan
	}
	lv.LatDisplacementDeg, lv.LonDisplacementDeg = nan, nan
	lv.Status = [sounding.NumVars]sounding.Status{sounding.Status(st), sounding.Status(st >> 8),
		sounding.Status(st >> 16), sounding.Status(st >> 24), sounding.Status(st >> 32),
		sounding.Status(st >> 40), sounding.Status(st >> 48), sounding.Status(st >> 56)}
	lv.Line = 0
	return true
}

// scaled returns raw/scale + off, value's reading of a field that is not
// a special code.
func scaled(raw int, scale, off float64) float64 {
	// x/1 and x+0 are x exactly (float64(raw) is never −0), so the
	// unscaled fields skip the division.
	x := float64(raw)
	if scale != 1 {
		x /= scale
	}
	if off != 0 {
		x += off
	}
	return x
}

// levelType is what the two level type columns of a data record give.
type levelType struct {
	kind       sounding.LevelKind
	tropopause bool
	ok         bool // the columns are a valid level type
}

// levelTypes holds levelKind of the level type columns "00" to "33":
// entry t1 + 4·t2 for LVLTYP1 '0'+t1 and LVLTYP2 '0'+t2.
var levelTypes = func() (tab [16]levelType) {
	for i := range tab {
		k, tr, ok := levelKind(byte('0'+i%4), byte('0'+i/4))
		tab[i] = levelType{k, tr, ok}
	}
	return tab
}()

// badFlag marks a byte that is not a valid flag in flagTiers.
const badFlag = 0x80

// flagTiers gives, for each byte of a flag column, the UpstreamTier entry
// it makes: 0 for a blank, 'A' and 'B' for themselves, badFlag for any
// other byte.
var flagTiers = func() (tab [256]byte) {
	for i := range tab {
		tab[i] = badFlag
	}
	tab[' '], tab['A'], tab['B'] = 0, 'A', 'B'
	return tab
}()

// Byte-wise constants of fixedRun: each repeats one byte eight times.
const (
	ones = 0x0101010101010101
	// field5 is the mask of the top five bytes of a word: the characters
	// of a five-character field that ends at the word's top byte.
	field5 = uint64(0xffffffffff) << 24
	// field6 is field5 and the byte below, a blank column before some
	// fields; blank2 is a space in that byte.
	field6 = uint64(0xffffffffffff) << 16
	blank2 = ' ' << 16
	// missing5 and removed5 are the fields "-9999" (codeMissing) and
	// "-8888" (codeRemoved) in the bytes of field5.
	missing5 = uint64('-'|'9'<<8|'9'<<16|'9'<<24|'9'<<32) << 24
	removed5 = uint64('-'|'8'<<8|'8'<<16|'8'<<24|'8'<<32) << 24
)

// fixedRun tests the right-aligned integer field of five characters that
// ends at the top byte of u, the eight bytes that end at the field's last
// character as a little-endian word. The field must be spaces, then an
// optional '-', then at least one digit up to its end; it is of another
// form (blank, left-aligned, '+', embedded spaces, other bytes), which
// atoi may still read, when bad is nonzero or bit 7 of any byte of nd is
// set, and so when a byte of lead (field5, or field6 for a field with a
// blank column before it) below the field is not a space. nd is to be
// tested by the caller, once for all the fields of a record. For a field
// of that form, x holds the values of its digits in their bytes (others
// zero) and neg is all ones when it is negative, else zero; fixedValue
// then gives atoi's value. The test has no branch, so that a record's
// fields are decided at once.
//
// Digits, 0x30 to 0x39, have bit 4 set, which a space (0x20) or '-'
// (0x2d) has not. The bytes from the lowest byte with bit 4 (or the top
// byte, when none has it) up to the top must be digits, their xor with
// '0' at most 9 (tested by adding 0x76 in nd), and the bytes below them be
// spaces, but for a '-' just below them inside the field.
func fixedRun(u, lead uint64) (x, neg, bad, nd uint64) {
	b := u&(0x10*ones&field5) | 0x10<<56 // bit 4 of each byte of the field, and of the top byte
	low := b & -b                        // of the lowest byte that has it
	run := -(low >> 4)                   // the bytes from that one up
	x = (u ^ 0x30*ones) & run
	// The bytes below the run, xor spaces: zero, or '-'^' ' just below
	// the run for a negative value.
	w := (u ^ 0x20*ones) & lead &^ run
	if w != 0 {
		neg = ^uint64(0)
	}
	bad = w ^ ((low>>12)*('-'^' ')&field5)&neg
	return x, neg, bad, (x + 0x76*ones) | x
}

// fixedValue returns the value of the field fixedRun found, from its digit
// values x and sign neg. The digits are combined pairwise by three
// multiplications (two digits, then four, then eight; the most
// significant is the lowest byte).
func fixedValue(x, neg uint64) int {
	x = (x * (10<<8 + 1)) >> 8 & 0x00ff00ff00ff00ff
	x = (x * (100<<16 + 1)) >> 16 & 0x0000ffff0000ffff
	x = (x * (10000<<32 + 1)) >> 32
	return int((x ^ neg) - neg)
}

// fixedSeconds is fixedValue for an elapsed time MMMSS, which it returns
// in seconds, MMM·60 + SS, with the sign of the field. After the first
// multiplication the 16-bit lanes hold 0, M, MM and SS (most significant
// first), and one more multiplication sums 6000·M + 60·MM + SS in the top
// lane (at most 60039: no lane overflows into the next).
func fixedSeconds(x, neg uint64) int {
	x = (x * (10<<8 + 1)) >> 8 & 0x00ff00ff00ff00ff
	x = (x * (6000<<32 + 60<<16 + 1)) >> 48
	return int((x ^ neg) - neg)
}
