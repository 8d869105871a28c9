package synth

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
)

// Config selects what [Write] generates.
type Config struct {
	// Seed seeds the random generator; the same Config always gives the
	// same output.
	Seed uint64
	// StartYear is the first calendar year; soundings run from 1 January
	// of StartYear, 00 UTC, to 31 December of StartYear+Years−1, 12 UTC.
	StartYear int
	// Years is the number of calendar years, ≥ 1.
	Years int
	// StationIndex selects the invented station (see [StationAt]); 0 is
	// the default station.
	StationIndex int
}

// DefaultConfig returns five years (2001–2005) for the default station
// with seed 1.
func DefaultConfig() Config {
	return Config{Seed: 1, StartYear: 2001, Years: 5}
}

// Station returns the station the configuration generates.
func (c Config) Station() Info { return StationAt(c.StationIndex) }

func (c Config) validate() error {
	switch {
	case c.Years < 1 || c.Years > 1000:
		return fmt.Errorf("synth: Years = %d, want 1 to 1000", c.Years)
	case c.StartYear < 1 || c.StartYear+c.Years > 10000:
		return fmt.Errorf("synth: StartYear = %d with Years = %d, want years 1 to 9999", c.StartYear, c.Years)
	case c.StationIndex < 0 || c.StationIndex > MaxStationIndex:
		return fmt.Errorf("synth: StationIndex = %d, want 0 to %d", c.StationIndex, MaxStationIndex)
	}
	return nil
}

// Write writes the configured station's soundings, two a day (00 and
// 12 UTC) in time order, to w in the archive's version-2 station-file
// format, and returns the number of soundings written. It returns an
// error for an invalid Config or a failed write.
func Write(w io.Writer, cfg Config) (n int, err error) {
	if err := cfg.validate(); err != nil {
		return 0, err
	}
	g := newGenerator(cfg)
	bw := bufio.NewWriterSize(w, 64<<10)
	day := time.Date(cfg.StartYear, 1, 1, 0, 0, 0, 0, time.UTC)
	end := time.Date(cfg.StartYear+cfg.Years, 1, 1, 0, 0, 0, 0, time.UTC)
	for ; day.Before(end); day = day.AddDate(0, 0, 1) {
		for _, hour := range [2]time.Duration{0, 12} {
			t := day.Add(hour * time.Hour)
			g.sounding(t)
			buf, err := g.appendSounding(g.buf[:0], t)
			if err != nil {
				return n, fmt.Errorf("synth: sounding %s: %w", t.Format("2006-01-02T15Z"), err)
			}
			g.buf = buf
			if _, err := bw.Write(buf); err != nil {
				return n, fmt.Errorf("synth: write: %w", err)
			}
			n++
		}
	}
	if err := bw.Flush(); err != nil {
		return n, fmt.Errorf("synth: write: %w", err)
	}
	return n, nil
}

// WriteFile writes the configured station's archive to
// <dir>/<station id>-data.txt (see [Write]) and returns the path and the
// number of soundings written.
func WriteFile(dir string, cfg Config) (path string, n int, err error) {
	if err := cfg.validate(); err != nil {
		return "", 0, err
	}
	path = filepath.Join(dir, cfg.Station().ID+"-data.txt")
	f, err := os.Create(path)
	if err != nil {
		return "", 0, fmt.Errorf("synth: %w", err)
	}
	n, err = Write(f, cfg)
	if cerr := f.Close(); err == nil && cerr != nil {
		err = fmt.Errorf("synth: close %s: %w", path, cerr)
	}
	if err != nil {
		return path, n, fmt.Errorf("%w (writing %s)", err, path)
	}
	return path, n, nil
}

// standardPa are the standard pressure levels reported up to the top of
// the sounding (archive format description, level type 1).
var standardPa = [...]float64{100000, 92500, 85000, 70000, 50000, 40000, 30000, 25000, 20000, 15000, 10000}

// level is one output record, already at reporting resolution.
type level struct {
	typ1, typ2 byte // level type digits
	etime      int  // elapsed time MMMSS, or missing
	pPa        int  // pressure, Pa, or missing
	gph        int  // reported height, gpm, or missing
	t10        int  // temperature, 0.1 °C
	dpd10      int  // dewpoint depression, 0.1 K
	wdir       int  // wind direction, degrees
	wspd10     int  // wind speed, 0.1 m/s
	zM         float64
}

const missing = -9999

type generator struct {
	rng         *rand.Rand
	st          Info
	cl          climate
	anomK       float64 // synoptic temperature anomaly, K
	anomPa      float64 // synoptic surface-pressure anomaly, Pa
	pr          profile
	levels      []level
	buf         []byte
	releaseHHMM int
	// dayMixedM is the afternoon mixed-layer depth drawn with a morning
	// sounding, used by the next afternoon sounding (the same local day),
	// so that the morning's residual layer and the afternoon's mixed layer
	// agree; NaN when none is pending.
	dayMixedM float64
	started   bool // the anomalies have been drawn once
	// poolDays is how many more local days (this one included) a winter
	// cold-air pool lasts; 0 when none (see poolStart).
	poolDays int
}

func newGenerator(cfg Config) *generator {
	st := cfg.Station()
	return &generator{
		rng: rand.New(rand.NewPCG(cfg.Seed, uint64(cfg.StationIndex)^0x9e3779b97f4a7c15)),
		st:  st,
		cl:  climateOf(st),

		dayMixedM: math.NaN(),
	}
}

// season returns 0 in mid-winter (20 January) and 1 in mid-summer, from the
// local solar date of t.
func (g *generator) season(t time.Time) float64 {
	local := t.Add(time.Duration(g.cl.utcOffsetH * float64(time.Hour)))
	doy := float64(local.YearDay()) + float64(local.Hour())/24
	return 0.5 - 0.5*math.Cos(2*math.Pi*(doy-20)/365.25)
}

// sounding designs the sounding nominally at t into g.levels.
func (g *generator) sounding(t time.Time) {
	r := g.rng
	// Synoptic anomalies: AR(1) from one local day to the next with
	// correlation 0.85, standard deviations 3.5 K and 700 Pa (common
	// practice, no source). They change with the morning (12 UTC)
	// sounding, so a day's morning and afternoon share them.
	if t.Hour() != 0 || !g.started {
		const phi = 0.85
		inno := math.Sqrt(1 - phi*phi)
		g.anomK = phi*g.anomK + 3.5*inno*r.NormFloat64()
		g.anomPa = phi*g.anomPa + 700*inno*r.NormFloat64()
		g.started = true
	}
	s := g.season(t)
	if t.Hour() == 12 {
		g.poolStart(s)
	}
	pool := g.poolDays > 0
	pSfc := math.Round(g.cl.surfacePa + g.anomPa)
	var ztrop float64
	if t.Hour() == 0 {
		h := g.dayMixedM
		if math.IsNaN(h) {
			h = mixedDepth(r, s)
		}
		g.dayMixedM = math.NaN()
		// The release is on the previous UTC day at 23:00–23:40, near
		// 16:15–16:55 local mean solar time: before sunset from March to
		// October, near or after it in winter (package documentation).
		g.releaseHHMM = 2300 + r.IntN(41)
		release := t.Add(-time.Duration(60-g.releaseHHMM%100) * time.Minute)
		sunDeg := sun.ElevationDeg(release, g.st.LatitudeDeg, g.st.LongitudeDeg)
		ztrop = g.pr.afternoon(r, g.cl, s, g.anomK, pSfc, g.st.ElevationM, h, pool, sunDeg)
	} else {
		// 12 UTC is before dawn (near sunrise in June and July); 00 UTC
		// next comes the same local day's late afternoon (package
		// documentation).
		g.dayMixedM = mixedDepth(r, s)
		ztrop = g.pr.morning(r, g.cl, s, g.anomK, pSfc, g.st.ElevationM, g.dayMixedM, pool)
		g.releaseHHMM = 1100 + r.IntN(41)
	}
	g.assemble()
	g.heights()
	g.winds(s, ztrop, t.Hour() == 12)
}

// poolStart advances the winter cold-air pool by one local day (called
// with the morning sounding): a running pool loses a day; otherwise, in
// the cold half of winter (season below 0.25) under high pressure (surface
// pressure anomaly above +300 Pa), one starts with probability 0.3 and
// lasts 2–7 days. While it lasts, the valley keeps a surface-based
// inversion through the day (the scenario's own choice, after the
// multi-day persistent cold-air pools of western basins, Whiteman et al.
// 2001 as summarised by Lareau et al. 2013; no summer pools).
func (g *generator) poolStart(s float64) {
	if g.poolDays > 0 {
		g.poolDays--
		return
	}
	if s < 0.25 && g.anomPa > 300 && g.rng.Float64() < 0.3 {
		g.poolDays = 2 + g.rng.IntN(6)
	}
}

// assemble turns the knots into records at reporting resolution and
// inserts the standard levels, interpolating T and Td linearly in ln p.
func (g *generator) assemble() {
	k := g.pr.k
	g.levels = g.levels[:0]
	sfc := toLevel(k[0])
	sfc.typ1, sfc.typ2 = 2, 1
	g.levels = append(g.levels, sfc)
	si := 0
	for si < len(standardPa) && standardPa[si] > float64(sfc.pPa)-150 {
		si++ // below ground or within ~13 m of the surface: not reported
	}
	for i := 1; i < len(k); i++ {
		for si < len(standardPa) && standardPa[si] > k[i].pPa+30 {
			a, b := k[i-1], k[i]
			f := math.Log(a.pPa/standardPa[si]) / math.Log(a.pPa/b.pPa)
			l := toLevel(knot{pPa: standardPa[si], tK: lerp(a.tK, b.tK, f), tdK: lerp(a.tdK, b.tdK, f)})
			l.typ1 = 1
			g.levels = append(g.levels, l)
			si++
		}
		l := toLevel(k[i])
		l.typ1 = 2
		if si < len(standardPa) && math.Abs(k[i].pPa-standardPa[si]) <= 30 {
			l.pPa, l.typ1 = int(standardPa[si]), 1
			si++
		}
		if k[i].trop {
			l.typ2 = 2
		}
		g.levels = append(g.levels, l)
	}
}

func toLevel(k knot) level {
	return level{
		etime:  missing,
		pPa:    int(math.Round(k.pPa)),
		gph:    missing,
		t10:    int(math.Round((k.tK - zeroCK) * 10)),
		dpd10:  int(math.Round(max(k.tK-k.tdK, 0) * 10)),
		wdir:   missing,
		wspd10: missing,
	}
}

// heights integrates the hypsometric equation from the station elevation
// through every record, with the mean of the end-point virtual temperatures
// of each layer computed from the reported (rounded) values (METHODS §1.6),
// and reports the height at the surface and standard levels.
func (g *generator) heights() {
	ls := g.levels
	z := math.Round(g.st.ElevationM)
	tvPrev := levelTv(ls[0])
	ls[0].zM, ls[0].gph = z, int(z)
	for i := 1; i < len(ls); i++ {
		tv := levelTv(ls[i])
		z += rdJPerKgK / g0MPerS2 * 0.5 * (tvPrev + tv) * math.Log(float64(ls[i-1].pPa)/float64(ls[i].pPa))
		ls[i].zM = z
		if ls[i].typ1 == 1 {
			ls[i].gph = int(math.Round(z))
		}
		tvPrev = tv
	}
}

func levelTv(l level) float64 {
	tK := float64(l.t10)/10 + zeroCK
	tdK := tK - float64(l.dpd10)/10
	return virtualTemperatureW(tK, mixingRatio(tdK, float64(l.pPa)))
}

// winds fills wind and elapsed time on every record and appends the
// wind-only height levels every 300 m up to 3000 m above ground. Speeds
// grow from the surface to a jet at the tropopause (stronger in winter)
// and fall off above; directions veer from a southerly surface wind
// towards westerly aloft.
func (g *generator) winds(s, ztropAGLM float64, morning bool) {
	r := g.rng
	s0 := uniform(r, 2, 6)
	if morning {
		s0 = uniform(r, 0.5, 3)
	}
	sj := lerp(38, 24, s) * math.Exp(0.25*r.NormFloat64())
	d0 := uniform(r, 140, 260)
	dAloft := 265 + 15*r.NormFloat64()
	ascentMS := uniform(r, 4.6, 5.4)
	elev := g.levels[0].zM
	wind := func(zAGL float64) (dir, spd10 int) {
		sp := sj * (1 - 0.5*min((zAGL-ztropAGLM)/4000, 1))
		if zAGL < ztropAGLM {
			x := max(zAGL, 0) / ztropAGLM
			sp = s0 + (sj-s0)*x*(1.2-0.2*x) // rises fastest near the ground
		}
		sp = max(sp+0.8*r.NormFloat64(), 0)
		d := d0 + (dAloft-d0)*min(zAGL/3000, 1) + 4*r.NormFloat64()
		d = math.Mod(math.Round(d)+720, 360)
		spd10 = int(math.Round(sp * 10))
		if spd10 == 0 {
			return 0, 0
		}
		if d == 0 {
			d = 360
		}
		return int(d), spd10
	}
	etime := func(zAGL float64) int {
		sec := int(math.Round(max(zAGL, 0) / ascentMS))
		return sec/60*100 + sec%60
	}
	for i := range g.levels {
		l := &g.levels[i]
		zAGL := l.zM - elev
		l.wdir, l.wspd10 = wind(zAGL)
		l.etime = etime(zAGL)
	}
	for h := 300.0; h <= 3000; h += 300 {
		l := level{typ1: 3, pPa: missing, t10: missing, dpd10: missing, zM: elev + h}
		l.gph = int(math.Round(elev + h))
		l.wdir, l.wspd10 = wind(h)
		l.etime = etime(h)
		g.levels = append(g.levels, l)
	}
}

// Source code written in the header for pressure and non-pressure levels.
const sourceCode = "synth-v1"

var errWidth = errors.New("value does not fit its columns")

// appendSounding appends the header and records of the current sounding,
// nominally at t, in the version-2 column layout.
func (g *generator) appendSounding(b []byte, t time.Time) ([]byte, error) {
	ok := true
	b = append(b, '#')
	b = append(b, g.st.ID...)
	b = append(b, ' ')
	b = appendZero(b, t.Year(), 4)
	b = append(b, ' ')
	b = appendZero(b, int(t.Month()), 2)
	b = append(b, ' ')
	b = appendZero(b, t.Day(), 2)
	b = append(b, ' ')
	b = appendZero(b, t.Hour(), 2)
	b = append(b, ' ')
	b = appendZero(b, g.releaseHHMM, 4)
	b = append(b, ' ')
	b = appendRight(b, len(g.levels), 4, &ok)
	b = append(b, ' ')
	b = append(b, sourceCode...)
	b = append(b, ' ')
	b = append(b, sourceCode...)
	b = append(b, ' ')
	b = appendRight(b, int(math.Round(g.st.LatitudeDeg*1e4)), 7, &ok)
	b = append(b, ' ')
	b = appendRight(b, int(math.Round(g.st.LongitudeDeg*1e4)), 8, &ok)
	b = append(b, '\n')
	for i := range g.levels {
		b = appendLevel(b, &g.levels[i], &ok)
	}
	if !ok {
		return b, errWidth
	}
	return b, nil
}

// appendLevel appends one 52-character data record and a newline.
func appendLevel(b []byte, l *level, ok *bool) []byte {
	pflag, zflag, tflag := byte(' '), byte(' '), byte(' ')
	switch {
	case l.typ1 == 3:
	case l.typ2 == 1:
		pflag, tflag = 'B', 'B'
	case l.typ1 == 1:
		zflag, tflag = 'B', 'B'
	default:
		tflag = 'B'
	}
	b = append(b, '0'+l.typ1, '0'+l.typ2, ' ')
	b = appendRight(b, l.etime, 5, ok)
	b = append(b, ' ')
	b = appendRight(b, l.pPa, 6, ok)
	b = append(b, pflag)
	b = appendRight(b, l.gph, 5, ok)
	b = append(b, zflag)
	b = appendRight(b, l.t10, 5, ok)
	b = append(b, tflag)
	b = appendRight(b, missing, 5, ok) // relative humidity: not reported
	b = append(b, ' ')
	b = appendRight(b, l.dpd10, 5, ok)
	b = append(b, ' ')
	b = appendRight(b, l.wdir, 5, ok)
	b = append(b, ' ')
	b = appendRight(b, l.wspd10, 5, ok)
	return append(b, ' ', '\n')
}

// appendRight appends v right-aligned in width columns; it clears *ok when
// v needs more columns.
func appendRight(b []byte, v, width int, ok *bool) []byte {
	var tmp [20]byte
	d := strconv.AppendInt(tmp[:0], int64(v), 10)
	if len(d) > width {
		*ok = false
	}
	for i := len(d); i < width; i++ {
		b = append(b, ' ')
	}
	return append(b, d...)
}

// appendZero appends v zero-padded to width digits (v ≥ 0).
func appendZero(b []byte, v, width int) []byte {
	var tmp [20]byte
	d := strconv.AppendInt(tmp[:0], int64(v), 10)
	for i := len(d); i < width; i++ {
		b = append(b, '0')
	}
	return append(b, d...)
}
