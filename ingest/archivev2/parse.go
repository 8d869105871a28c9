package archivev2

import (
	"encoding/binary"
	"fmt"
	"math"
	"math/bits"
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
	t1, t2 := line[0], line[1]
	switch {
	case t1 < '0' || t1 > '3' || t2 < '0' || t2 > '2' || (t1 == '0' && t2 != '1'):
		return badLevel("level type %q", line[:2])
	case t2 == '1':
		lv.Kind = sounding.KindSurface
	case t1 == '1':
		lv.Kind = sounding.KindStandard
	case t1 == '2':
		lv.Kind = sounding.KindSignificant
	default:
		lv.Kind = sounding.KindWindOnly
	}
	lv.Tropopause = t2 == '2'

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
	lv.Status[v] = setValue(dst, raw, scale, off)
	return nil
}

// setValue stores raw/scale + off in *dst, or NaN for the special codes,
// and returns the value's status.
func setValue(dst *float64, raw int, scale, off float64) sounding.Status {
	// Both codes are at most codeRemoved: one comparison passes the
	// common value.
	if raw <= codeRemoved {
		switch raw {
		case codeMissing:
			*dst = math.NaN()
			return sounding.Missing
		case codeRemoved:
			*dst = math.NaN()
			return sounding.RemovedUpstream
		}
	}
	// x/1 and x+0 are x exactly (float64(raw) is never −0), so the
	// unscaled fields skip the division.
	x := float64(raw)
	if scale != 1 {
		x /= scale
	}
	if off != 0 {
		x += off
	}
	*dst = x
	return sounding.Reported
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
// one 64-bit word, with no loop over its characters (fixedWords).
func parseLevelFast(lv *sounding.Level, line []byte) bool {
	if len(line) < 51 {
		return false
	}
	line = line[:51]
	if line[2]|line[8]|line[33]|line[39]|line[45] != ' ' ||
		line[2]&line[8]&line[33]&line[39]&line[45] != ' ' {
		return false
	}
	t1, t2 := line[0], line[1]
	if t1 < '0' || t1 > '3' || t2 < '0' || t2 > '2' || (t1 == '0' && t2 != '1') {
		return false
	}
	pf, zf, tf := line[15], line[21], line[27]
	if !flagOK(pf) || !flagOK(zf) || !flagOK(tf) {
		return false
	}
	var raw [8]int
	if !fixedFields((*[51]byte)(line), &raw) {
		return false
	}
	et, pr, gh, te, rh, dd, wd, ws := raw[0], raw[1], raw[2], raw[3], raw[4], raw[5], raw[6], raw[7]

	*lv = sounding.NewLevel()
	switch {
	case t2 == '1':
		lv.Kind = sounding.KindSurface
	case t1 == '1':
		lv.Kind = sounding.KindStandard
	case t1 == '2':
		lv.Kind = sounding.KindSignificant
	default:
		lv.Kind = sounding.KindWindOnly
	}
	lv.Tropopause = t2 == '2'
	if pf != ' ' {
		lv.UpstreamTier[sounding.VarPressure] = pf
	}
	if zf != ' ' {
		lv.UpstreamTier[sounding.VarHeight] = zf
	}
	if tf != ' ' {
		lv.UpstreamTier[sounding.VarTemperature] = tf
	}
	lv.Status[sounding.VarPressure] = setValue(&lv.PressurePa, pr, 1, 0)
	lv.Status[sounding.VarHeight] = setValue(&lv.HeightM, gh, 1, 0)
	lv.Status[sounding.VarTemperature] = setValue(&lv.TemperatureK, te, 10, thermo.ZeroCelsiusK)
	lv.Status[sounding.VarRelHumidity] = setValue(&lv.RelHumidityPct, rh, 10, 0)
	lv.Status[sounding.VarDewpointDepression] = setValue(&lv.DewpointDepressionK, dd, 10, 0)
	lv.Status[sounding.VarWindDirection] = setValue(&lv.WindDirectionDeg, wd, 1, 0)
	lv.Status[sounding.VarWindSpeed] = setValue(&lv.WindSpeedMS, ws, 10, 0)
	switch et {
	case codeMissing:
		lv.Status[sounding.VarElapsedTime] = sounding.Missing
	case codeRemoved:
		lv.Status[sounding.VarElapsedTime] = sounding.RemovedUpstream
	default:
		lv.ElapsedS = float64(et/100*60 + et%100)
		lv.Status[sounding.VarElapsedTime] = sounding.Reported
	}
	if lv.Status[sounding.VarTemperature] == sounding.Reported &&
		lv.Status[sounding.VarDewpointDepression] == sounding.Reported {
		lv.DewpointK = lv.TemperatureK - lv.DewpointDepressionK
	}
	return true
}

func flagOK(f byte) bool { return f == ' ' || f == 'A' || f == 'B' }

// fixedFields reads the eight integer fields of a data record into raw by
// fixedWords' rule and reports whether every one was of that form. Each
// field is read from the eight bytes that end at its last column (0-based
// index 8, 15, 21, 27, 33, 39, 45 and 51) as a field of five characters;
// the six-character pressure (columns 10–15) is its last five characters
// and a first, column 10, that is a space or, before five digits, a digit.
// A pressure of another form ('-' before five digits) is left to the
// general path.
func fixedFields(line *[51]byte, raw *[8]int) bool {
	le := binary.LittleEndian
	u := [8]uint64{le.Uint64(line[0:8]), le.Uint64(line[7:15]), le.Uint64(line[13:21]), le.Uint64(line[19:27]),
		le.Uint64(line[25:33]), le.Uint64(line[31:39]), le.Uint64(line[37:45]), le.Uint64(line[43:51])}
	if fixedWords(&u, raw) != 0 {
		return false
	}
	if c := line[9]; c != ' ' {
		// Column 11 a digit: the last five columns are all digits.
		if c-'0' > 9 || line[10]-'0' > 9 {
			return false
		}
		raw[1] += int(c-'0') * 100000
	}
	return true
}

// Byte-wise constants of fixedWords: each repeats one byte eight times.
const (
	ones  = 0x0101010101010101
	bit4s = 0x10 * ones
	// field5 is the mask of the top five bytes of a word: the characters
	// of a five-character field that ends at the word's top byte.
	field5 = uint64(0xffffffffff) << 24
)

// fixedWords reads eight right-aligned integer fields of five characters
// into raw: field k is the top five bytes of u[k], the eight bytes that end
// at its last character as a little-endian word, so the field's last
// character is the word's top byte. A field must be spaces, then an
// optional '-', then at least one digit up to its end; bad is nonzero when
// any field is of another form (blank, left-aligned, '+', embedded spaces,
// other bytes), which atoi may still read. Where a field is of that form
// its value is atoi's. The fields are tested without branching and the
// caller decides once; the field width is a constant, so the masks fold
// into the instructions.
//
// A byte is a digit when its high nibble is 3 and its low nibble at most 9;
// the highest non-digit byte ends the run of digits, and the digits'
// values, their low nibbles, are combined pairwise by three
// multiplications (two digits, then four, then eight).
func fixedWords(u *[8]uint64, raw *[8]int) (bad uint64) {
	const field = field5
	for k := range 8 {
		u := u[k]
		// Bit 4 of each byte of nd is set where the byte is not a digit,
		// and in the byte just below the field (a sentinel).
		hi := (u & (0xf0 * ones)) ^ (0x30 * ones)
		nd := (((hi >> 4) + 0x0f*ones) | ((u & (0x0f * ones)) + 0x06*ones)) & (field & bit4s)
		nd |= (^field ^ ^field>>8) & bit4s
		bad |= nd >> 56 // the last character is not a digit
		// The highest non-digit byte p has its bit 4 at 8p+4, so z =
		// 56-8p, and the bytes up to p are the low 64-z bits.
		z := uint(bits.LeadingZeros64(nd)) & 56
		below := ^uint64(0) >> z
		lead := u & below & field
		spaces := below & (0x20 * ones & field)
		minus := spaces ^ (0x20^'-')<<56>>z
		// lead must be all spaces, or spaces and a minus sign just
		// before the digits.
		isMinus := b2u(lead == minus)
		bad |= uint64(b2u(lead != spaces) &^ isMinus)
		d := u & (0x0f * ones) &^ below // digit values, most significant first
		d = (d * (10<<8 + 1)) >> 8 & (0x00ff00ff00ff00ff)
		d = (d * (100<<16 + 1)) >> 16 & (0x0000ffff0000ffff)
		d = (d * (10000<<32 + 1)) >> 32
		neg := -int(isMinus) // all ones for a negative value
		raw[k] = (int(d) ^ neg) - neg
	}
	return bad
}

func b2u(b bool) uint {
	if b {
		return 1
	}
	return 0
}
