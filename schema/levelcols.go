package schema

import (
	"fmt"
	"math"
	"sync"
	"time"
	"unsafe"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/sounding"
)

// LevelColumns collects the levels-table rows of one file column by
// column, each column filled from the soundings in one pass over their
// levels, without LevelRow structs in between. A station-year of
// high-resolution soundings has some 130,000 levels: as rows of about 300
// bytes each they were built, copied into a block and read back once per
// column. The result is the file a slice of the same LevelRow values
// gives (TestLevelColumnsEqualRows).
type LevelColumns struct {
	rows    *Rows[LevelRow] // nil once written
	fill    []levelFiller   // per column of rows.cols
	written int             // rows written, once rows is nil
	home    *LevelBuffers   // where the buffers go once written (nil: levelBufs)
}

// levelBufs holds the column buffers of written LevelColumns for the
// next ones ([]*colBuf): a station-year's levels take some 24 MB of
// columns, which allocated afresh for every station-year were zeroed by
// the allocator and faulted in page by page as the columns were filled.
var levelBufs sync.Pool

// LevelBuffers keeps the column buffers of written LevelColumns for the
// next ones its NewLevelColumns makes: a free list its owner (an ingest
// run) holds, which a collection does not empty as it does levelBufs. The
// zero LevelBuffers is ready to use; it is safe for concurrent use.
type LevelBuffers struct {
	mu   sync.Mutex
	free [][]*colBuf
}

// NewLevelColumns is NewLevelColumns with the buffers of lb: their memory
// goes back to lb when the columns are written.
func (lb *LevelBuffers) NewLevelColumns(capacity int) (*LevelColumns, error) {
	lb.mu.Lock()
	var bufs []*colBuf
	if n := len(lb.free); n > 0 {
		bufs, lb.free = lb.free[n-1], lb.free[:n-1]
	}
	lb.mu.Unlock()
	l, err := newLevelColumns(bufs, capacity)
	if err != nil {
		return nil, err
	}
	l.home = lb
	return l, nil
}

// keptLevelRows is the most rows whose buffers LevelBuffers keeps (some
// 45 MB of columns): a station-year far larger than usual gives its
// memory to the collector instead of holding it for the next ones.
const keptLevelRows = 1 << 18

func (lb *LevelBuffers) put(bufs []*colBuf, rows int) {
	if rows > keptLevelRows {
		return
	}
	lb.mu.Lock()
	lb.free = append(lb.free, bufs)
	lb.mu.Unlock()
}

// levelFiller stores the values of one column for the levels of s at
// positions base… of b (b already holds room for them).
type levelFiller func(c *Column, b *colBuf, s *sounding.Sounding, rep qc.Report, res *analyze.Result, launch time.Time, year int32, base int) error

// NewLevelColumns returns an empty LevelColumns with room for about
// capacity levels before its columns grow.
func NewLevelColumns(capacity int) (*LevelColumns, error) {
	bufs, _ := levelBufs.Get().([]*colBuf)
	return newLevelColumns(bufs, capacity)
}

// newLevelColumns returns an empty LevelColumns in the buffers bufs of
// written ones, or in new ones when bufs is nil.
func newLevelColumns(bufs []*colBuf, capacity int) (*LevelColumns, error) {
	var r *Rows[LevelRow]
	var err error
	if bufs != nil {
		r, err = reuseRows[LevelRow](bufs, capacity)
	} else {
		r, err = NewRows[LevelRow](capacity)
	}
	if err != nil {
		return nil, err
	}
	return levelColumnsOver(r)
}

// levelColumnsOver returns a LevelColumns filling the empty Rows r.
func levelColumnsOver(r *Rows[LevelRow]) (*LevelColumns, error) {
	l := &LevelColumns{rows: r, fill: make([]levelFiller, len(r.cols))}
	for i := range r.cols {
		f, err := levelFillerOf(&r.cols[i])
		if err != nil {
			return nil, err
		}
		l.fill[i] = f
	}
	return l, nil
}

// Append adds one level row given as a struct.
func (l *LevelColumns) Append(row LevelRow) { l.rows.Append(row) }

// Len returns the number of level rows collected (and written).
func (l *LevelColumns) Len() int {
	if l.rows == nil {
		return l.written
	}
	return l.rows.Len()
}

// WriteFile writes the collected rows (see WriteRows) and gives their
// memory to the next NewLevelColumns: afterwards l holds no rows and may
// be neither appended to nor written again (Len still counts them).
func (l *LevelColumns) WriteFile(path, table string, sync bool) error {
	if l.rows == nil {
		return fmt.Errorf("schema: levels written already, not again to %s", path)
	}
	err := WriteRows(path, table, l.rows, sync)
	l.written = l.rows.Len()
	if l.home != nil {
		l.home.put(l.rows.bufs, l.written)
	} else {
		levelBufs.Put(l.rows.bufs)
	}
	l.rows = nil
	return err
}

func (l *LevelColumns) appendLevels(s *sounding.Sounding, rep qc.Report, res *analyze.Result, launch time.Time, year int32) {
	r := l.rows
	r.flush() // nothing pending unless Rows.Append was used as well
	n := len(s.Levels)
	if n == 0 {
		return
	}
	base := r.n
	for c := range r.cols {
		r.bufs[c].grow(&r.cols[c], base+n)
		if err := l.fill[c](&r.cols[c], r.bufs[c], s, rep, res, launch, year, base); err != nil && r.err == nil {
			r.err = err
		}
	}
	r.n = base + n
}

// levelRow is row i of the levels table for sounding s (with its QC
// report and analysis): what every levelFiller below stores, column by
// column.
func levelRow(s *sounding.Sounding, rep qc.Report, res *analyze.Result, launch time.Time, year int32, i int) LevelRow {
	l := &s.Levels[i]
	return LevelRow{
		StationID:         s.StationID,
		LaunchTime:        launch,
		Year:              year,
		Index:             int32(i),
		Kind:              l.Kind.String(),
		SourceLine:        int64(l.Line),
		ElapsedS:          l.ElapsedS,
		LatDispDeg:        l.LatDisplacementDeg,
		LonDispDeg:        l.LonDisplacementDeg,
		PressureHPa:       hPa(l.PressurePa),
		HeightM:           res.HeightM[i],
		HeightDerived:     res.HeightDerived[i],
		HeightAGLM:        res.HeightAGLM[i],
		TemperatureC:      degC(l.TemperatureK),
		DewpointC:         degC(l.DewpointK),
		RelHumidityPct:    l.RelHumidityPct,
		WindDirDeg:        l.WindDirectionDeg,
		WindSpeedMS:       l.WindSpeedMS,
		ThetaK:            res.ThetaK[i],
		MixingRatioGKg:    res.MixingRatioKgKg[i] * gPerKg,
		TemperatureStatus: l.Status[sounding.VarTemperature].String(),
		HeightStatus:      heightStatusOf(l, res.HeightDerived[i]).String(),
		HumidityStatus:    l.Status[sounding.VarDewpointDepression].String(),
		PressureQC:        qcFlagName(rep, i, sounding.VarPressure),
		HeightQC:          qcFlagName(rep, i, sounding.VarHeight),
		TemperatureQC:     qcFlagName(rep, i, sounding.VarTemperature),
		HumidityQC:        qcFlagName(rep, i, sounding.VarDewpointDepression),
		WindQC:            qcFlagName(rep, i, sounding.VarWindSpeed),
	}
}

// qcFlagName is the QC flag of variable v of level i, "" (null) when the
// report has no flags for the level.
func qcFlagName(rep qc.Report, i int, v sounding.Var) string {
	if i < len(rep.Flags) {
		return rep.Flags[i][v].String()
	}
	return ""
}

func heightStatusOf(l *sounding.Level, derived bool) sounding.Status {
	if derived {
		return sounding.Derived
	}
	return l.Status[sounding.VarHeight]
}

// levelFillerOf returns the filler of column c of the levels table; a
// column without one is an error, so that a column added to LevelRow
// cannot be left unfilled.
func levelFillerOf(c *Column) (levelFiller, error) {
	perLevel := func(off uintptr, conv unitConv) levelFiller {
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			putLevelFloats(b, base, s.Levels, off, conv)
			return nil
		}
	}
	derived := func(values func(res *analyze.Result) []float64, scale float64) levelFiller {
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, res *analyze.Result, _ time.Time, _ int32, base int) error {
			putFloats(b, base, values(res)[:len(s.Levels)], scale)
			return nil
		}
	}
	status := func(v sounding.Var) (levelFiller, error) {
		tab, err := enumTable[sounding.Status](c)
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			levels, tab, v := s.Levels, tab[:], v%sounding.NumVars // v % NumVars: no bounds test per level
			out := b.i16[base : base+len(levels)]
			out = out[:len(levels)]
			var bad int16
			for k := range levels {
				x := tab[levels[k].Status[v]]
				out[k] = x
				bad |= x
			}
			if bad < 0 {
				return unmapped(c, tab, len(levels), func(k int) sounding.Status { return levels[k].Status[v] })
			}
			return nil
		}, err
	}
	flag := func(v sounding.Var) (levelFiller, error) {
		tab, err := enumTable[qc.Flag](c)
		return func(c *Column, b *colBuf, s *sounding.Sounding, rep qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			n := min(len(s.Levels), len(rep.Flags))
			flags, tab, v := rep.Flags[:n], tab[:], v%sounding.NumVars
			out := b.i16[base : base+n]
			out = out[:len(flags)]
			var bad int16
			for k := range flags {
				x := tab[flags[k][v]]
				out[k] = x
				bad |= x
			}
			if bad < 0 {
				return unmapped(c, tab, n, func(k int) qc.Flag { return flags[k][v] })
			}
			for k := n; k < len(s.Levels); k++ {
				b.valid.null(base + k) // no flags for the level
			}
			return nil
		}, err
	}
	want := func(kind fieldKind) error {
		if c.kind != kind {
			return fmt.Errorf("schema: levels column %s: kind %d, filler written for %d", c.Name, c.kind, kind)
		}
		return nil
	}
	switch c.Name {
	case StationColumn:
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			var idx int32
			if n := len(b.keys); n == 0 || s.StationID != b.keys[n-1] {
				idx = b.keyIndex(s.StationID)
			} else {
				idx = int32(n - 1)
			}
			out := b.i32[base : base+len(s.Levels)]
			for k := range out {
				out[k] = idx
			}
			return nil
		}, want(kindKey)
	case "launch_time":
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, launch time.Time, _ int32, base int) error {
			if launch.IsZero() {
				for k := range s.Levels {
					b.valid.null(base + k)
				}
				return nil
			}
			out, us := b.i64[base:base+len(s.Levels)], launch.UnixMicro()
			for k := range out {
				out[k] = us
			}
			return nil
		}, want(kindTime)
	case YearColumn:
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, year int32, base int) error {
			out := b.i32[base : base+len(s.Levels)]
			for k := range out {
				out[k] = year
			}
			return nil
		}, want(kindInt32)
	case "level_index":
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			out := b.i32[base : base+len(s.Levels)]
			for k := range out {
				out[k] = int32(k)
			}
			return nil
		}, want(kindInt32)
	case "level_kind":
		tab, err := enumTable[sounding.LevelKind](c)
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			levels, tab := s.Levels, tab[:]
			out := b.i16[base : base+len(levels)]
			out = out[:len(levels)]
			var bad int16
			for k := range levels {
				x := tab[levels[k].Kind]
				out[k] = x
				bad |= x
			}
			if bad < 0 {
				return unmapped(c, tab, len(levels), func(k int) sounding.LevelKind { return levels[k].Kind })
			}
			return nil
		}, err
	case "source_line":
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, _ *analyze.Result, _ time.Time, _ int32, base int) error {
			levels := s.Levels
			out := b.i64[base : base+len(levels)]
			out = out[:len(levels)]
			for k := range levels {
				out[k] = int64(levels[k].Line)
			}
			return nil
		}, want(kindInt64)
	case "elapsed_s":
		return perLevel(unsafe.Offsetof(sounding.Level{}.ElapsedS), asIs), want(kindFloat64)
	case "latitude_displacement_deg":
		return perLevel(unsafe.Offsetof(sounding.Level{}.LatDisplacementDeg), asIs), want(kindFloat64)
	case "longitude_displacement_deg":
		return perLevel(unsafe.Offsetof(sounding.Level{}.LonDisplacementDeg), asIs), want(kindFloat64)
	case "pressure_hpa":
		return perLevel(unsafe.Offsetof(sounding.Level{}.PressurePa), toHPa), want(kindFloat64)
	case "temperature_c":
		return perLevel(unsafe.Offsetof(sounding.Level{}.TemperatureK), toDegC), want(kindFloat64)
	case "dewpoint_c":
		return perLevel(unsafe.Offsetof(sounding.Level{}.DewpointK), toDegC), want(kindFloat64)
	case "relative_humidity_pct":
		return perLevel(unsafe.Offsetof(sounding.Level{}.RelHumidityPct), asIs), want(kindFloat64)
	case "wind_direction_deg":
		return perLevel(unsafe.Offsetof(sounding.Level{}.WindDirectionDeg), asIs), want(kindFloat64)
	case "wind_speed_ms":
		return perLevel(unsafe.Offsetof(sounding.Level{}.WindSpeedMS), asIs), want(kindFloat64)
	case "height_m":
		return derived(func(res *analyze.Result) []float64 { return res.HeightM }, 1), want(kindFloat64)
	case "height_agl_m":
		return derived(func(res *analyze.Result) []float64 { return res.HeightAGLM }, 1), want(kindFloat64)
	case "theta_k":
		return derived(func(res *analyze.Result) []float64 { return res.ThetaK }, 1), want(kindFloat64)
	case "mixing_ratio_gkg":
		return derived(func(res *analyze.Result) []float64 { return res.MixingRatioKgKg }, gPerKg), want(kindFloat64)
	case "height_derived":
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, res *analyze.Result, _ time.Time, _ int32, base int) error {
			for k, d := range res.HeightDerived[:len(s.Levels)] {
				if d {
					b.bits[(base+k)/8] |= 1 << ((base + k) % 8)
				}
			}
			return nil
		}, want(kindBool)
	case "temperature_status":
		return status(sounding.VarTemperature)
	case "humidity_status":
		return status(sounding.VarDewpointDepression)
	case "height_status":
		tab, err := enumTable[sounding.Status](c)
		return func(c *Column, b *colBuf, s *sounding.Sounding, _ qc.Report, res *analyze.Result, _ time.Time, _ int32, base int) error {
			levels, derived, tab := s.Levels, res.HeightDerived[:len(s.Levels)], tab[:]
			out := b.i16[base : base+len(levels)]
			out = out[:len(levels)]
			var bad int16
			for k := range levels {
				x := tab[heightStatusOf(&levels[k], derived[k])]
				out[k] = x
				bad |= x
			}
			if bad < 0 {
				return unmapped(c, tab, len(levels), func(k int) sounding.Status { return heightStatusOf(&levels[k], derived[k]) })
			}
			return nil
		}, err
	case "pressure_qc":
		return flag(sounding.VarPressure)
	case "height_qc":
		return flag(sounding.VarHeight)
	case "temperature_qc":
		return flag(sounding.VarTemperature)
	case "humidity_qc":
		return flag(sounding.VarDewpointDepression)
	case "wind_qc":
		return flag(sounding.VarWindSpeed)
	}
	return nil, fmt.Errorf("schema: levels column %s has no filler in levelFillerOf", c.Name)
}

// unitConv is the conversion of a level's float field to its column's
// display unit (hPa, degC).
type unitConv uint8

const (
	asIs unitConv = iota
	toHPa
	toDegC
)

// putLevelFloats stores, at positions base… of a float column, the
// float64 field at byte offset off (unsafe.Offsetof) of each level,
// converted by conv, NaN as null. One loop per column instead of two
// calls per value (the field's reader and putFloat) is what makes it
// worth the offset.
//
// The values go 64 at a time, each NaN setting its bit of a mask that
// marks the 64 rows' nulls at once (validity.nullMask): no branch per
// value, which a test per value and a bitmap write per null were (some
// 40 % of the levels' values are missing).
func putLevelFloats(b *colBuf, base int, levels []sounding.Level, off uintptr, conv unitConv) {
	f := b.f64[base : base+len(levels)]
	for lo := 0; lo < len(f); lo += 64 {
		out := f[lo:min(lo+64, len(f))]
		b.valid.nullMask(base+lo, putLevelChunk(out, levels[lo:lo+len(out)], off, conv))
	}
}

// putLevelChunk stores the field at offset off of each of the (at most
// 64) levels in out, converted by conv, and returns the mask of the NaN
// ones (bit k: out[k]).
func putLevelChunk(out []float64, levels []sounding.Level, off uintptr, conv unitConv) uint64 {
	levels = levels[:len(out)] // tells the compiler they are as long
	field := func(k int) float64 { return *(*float64)(unsafe.Add(unsafe.Pointer(&levels[k]), off)) }
	var nan uint64
	// One loop per conversion, so that none decides it per value.
	switch conv {
	case toHPa:
		for k := range out {
			x := hPa(field(k))
			out[k] = x
			nan |= nanBit(x) << (uint(k) % 64)
		}
	case toDegC:
		for k := range out {
			x := degC(field(k))
			out[k] = x
			nan |= nanBit(x) << (uint(k) % 64)
		}
	default:
		for k := range out {
			x := field(k)
			out[k] = x
			nan |= nanBit(x) << (uint(k) % 64)
		}
	}
	return nan
}

// putFloats stores x, each value times scale (unless scale is 1), at
// positions base… of a float column, NaN as null, as putLevelFloats does.
func putFloats(b *colBuf, base int, x []float64, scale float64) {
	f := b.f64[base : base+len(x)]
	for lo := 0; lo < len(f); lo += 64 {
		out := f[lo:min(lo+64, len(f))]
		in := x[lo : lo+len(out)]
		in = in[:len(out)]
		var nan uint64
		if scale == 1 {
			for k, v := range in {
				out[k] = v
				nan |= nanBit(v) << (uint(k) % 64)
			}
		} else {
			for k, v := range in {
				v *= scale
				out[k] = v
				nan |= nanBit(v) << (uint(k) % 64)
			}
		}
		b.valid.nullMask(base+lo, nan)
	}
}

// nanBit is 1 when x is NaN, else 0, without a branch: the bits of |x|
// exceed those of +Inf only for a NaN.
func nanBit(x float64) uint64 {
	return (0x7ff0000000000000 - math.Float64bits(x)&(1<<63-1)) >> 63
}

// uint8Enum is a typed enum whose String names its values in a column's
// vocabulary.
type uint8Enum interface {
	~uint8
	fmt.Stringer
}

// enumTable maps every value of the enum type E to its index in the
// dictionary of column c, -1 for a value whose name is not in it.
func enumTable[E uint8Enum](c *Column) (*[256]int16, error) {
	if c.kind != kindEnum {
		return nil, fmt.Errorf("schema: levels column %s is not a dictionary column", c.Name)
	}
	var tab [256]int16
	for v := range 256 {
		tab[v] = -1
		if i, ok := c.enum[E(v).String()]; ok {
			tab[v] = int16(i)
		}
	}
	return &tab, nil
}

// unmapped returns the error of the first of the n values value(k) whose
// entry in tab is -1 (nil if there is none): the enum fillers store every
// value's entry and test them together, then look for the culprit.
func unmapped[E uint8Enum](c *Column, tab []int16, n int, value func(k int) E) error {
	for k := range n {
		if x := value(k); tab[x] < 0 {
			return enumError(c, x)
		}
	}
	return nil
}

// enumError is the error of a value outside an enum column's list, as
// fillColumn reports it.
func enumError(c *Column, v fmt.Stringer) error {
	return fmt.Errorf("column %s: value %q is not one of its enum values", c.Name, v.String())
}
