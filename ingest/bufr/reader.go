package bufr

import (
	"errors"
	"fmt"
	"io"
	"iter"
	"math"
	"slices"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Format is the reader name recorded in sounding.Source.Format.
const Format = "bufr"

// Reader reads radiosonde soundings from a stream of BUFR messages, one
// sounding per subset, in the manner of encoding/csv: Next returns the
// next sounding, a *ingest.ParseError for a message or subset it rejects
// (after which it carries on with the rest), or io.EOF.
type Reader struct {
	sc           *Scanner
	file, member string
	queue        []*sounding.Sounding
	errs         []error
	dec          Decoder
	messages     int // messages found, good or bad
}

// NewReader returns a reader of r; file (and member, for a zip member)
// name the input in messages and in sounding.Source.
func NewReader(r io.Reader, file, member string) *Reader {
	return &Reader{sc: NewScanner(r), file: file, member: member}
}

func (r *Reader) errAt(off int64, err error) error {
	return &ingest.ParseError{File: r.file, Member: r.member, Offset: off, Err: err}
}

// Next returns the next sounding.
func (r *Reader) Next() (*sounding.Sounding, error) {
	for {
		if len(r.errs) > 0 {
			e := r.errs[0]
			r.errs = r.errs[1:]
			return nil, e
		}
		if len(r.queue) > 0 {
			s := r.queue[0]
			r.queue[0] = nil
			r.queue = r.queue[1:]
			return s, nil
		}
		b, off, err := r.sc.Next()
		if err == io.EOF {
			if r.messages == 0 {
				// Never silent: an input forced to this format that holds
				// no message at all is named once.
				r.messages = -1
				return nil, r.errAt(0, fmt.Errorf("%w: no BUFR message in the input", ingest.ErrUnknownInput))
			}
			return nil, io.EOF
		}
		r.messages++
		if err != nil {
			var fe *FrameError
			if errors.As(err, &fe) {
				return nil, r.errAt(off, fe.Err)
			}
			return nil, err // the input could not be read
		}
		m, err := ParseMessage(b)
		if err != nil {
			return nil, r.errAt(off, err)
		}
		subs, err := r.dec.Decode(m)
		if err != nil {
			return nil, r.errAt(off, err)
		}
		descent := slices.Contains(m.Descriptors, dDescent)
		for k := range subs {
			s, err := toSounding(m, &subs[k], descent)
			if err != nil && m.Category != 2 && errors.Is(err, ingest.ErrNoData) {
				// Table A category 2 is "vertical soundings (other than
				// satellite)"; other messages are not for this reader.
				err = fmt.Errorf("%w: %w: data category %d (Table A), not a vertical sounding", ingest.ErrUnsupported, ErrNotRadiosonde, m.Category)
			}
			if err != nil {
				if len(subs) > 1 {
					err = fmt.Errorf("subset %d of %d: %w", k+1, len(subs), err)
				}
				r.errs = append(r.errs, r.errAt(off, err))
				continue
			}
			s.Source = sounding.Source{File: r.file, Member: r.member, Format: Format}
			r.queue = append(r.queue, s)
		}
		subs = nil
	}
}

// Descriptors the mapping reads (Table B, version in tables/VERSION).
var (
	dDescent    = FXY(3, 9, 56) // Table D: radiosonde descent
	dBlock      = FXY(0, 1, 1)
	dStation    = FXY(0, 1, 2)
	dCallSign   = FXY(0, 1, 11)
	dYear       = FXY(0, 4, 1)
	dMonth      = FXY(0, 4, 2)
	dDay        = FXY(0, 4, 3)
	dHour       = FXY(0, 4, 4)
	dMinute     = FXY(0, 4, 5)
	dSecond     = FXY(0, 4, 6)
	dTimeSig    = FXY(0, 8, 21)
	dLatHigh    = FXY(0, 5, 1)
	dLatLow     = FXY(0, 5, 2)
	dLonHigh    = FXY(0, 6, 1)
	dLonLow     = FXY(0, 6, 2)
	dHeightStn  = FXY(0, 7, 1)
	dHeightGrnd = FXY(0, 7, 30)

	dTimeDisp  = FXY(0, 4, 86)
	dSigExt    = FXY(0, 8, 42)
	dSigOld    = FXY(0, 8, 1)
	dPressure  = FXY(0, 7, 4)
	dGeopotH   = FXY(0, 10, 9)
	dGeopot    = FXY(0, 10, 3)
	dHeight    = FXY(0, 7, 9) // geopotential height as a vertical coordinate
	dTemp      = FXY(0, 12, 101)
	dTempOld   = FXY(0, 12, 1)
	dDew       = FXY(0, 12, 103)
	dDewOld    = FXY(0, 12, 3)
	dWindDir   = FXY(0, 11, 1)
	dWindSpd   = FXY(0, 11, 2)
	dLatDisp   = FXY(0, 5, 15)
	dLonDisp   = FXY(0, 6, 15)
	dShearBelo = FXY(0, 11, 61)
	dShearAbov = FXY(0, 11, 62)
)

// standardGravity converts geopotential (m² s⁻², 0 10 003) to
// geopotential height (gpm): 9.80665 m s⁻² (WMO-No. 8, the standard
// acceleration of gravity that defines the geopotential metre).
const standardGravity = 9.80665

// level collects one iteration of a replicated level group.
type level struct {
	l       sounding.Level
	sig     float64 // flag-table value, NaN if absent
	sigBits int     // width of the flag table: 18 for 0 08 042, 7 for 0 08 001
	shear   bool
	any     bool
}

// toSounding maps one subset to a sounding, a descent when descent is
// set; see the package documentation for the rules.
func toSounding(m *Message, sub *Subset, descent bool) (*sounding.Sounding, error) {
	s := &sounding.Sounding{
		LatitudeDeg: math.NaN(), LongitudeDeg: math.NaN(), ElevationM: math.NaN(),
		DeclaredLevels: -1,
	}
	block, station := math.NaN(), math.NaN()
	callSign := ""
	var tm [6]float64
	for i := range tm {
		tm[i] = math.NaN()
	}
	timeSig := math.NaN()
	var launch, obs time.Time
	haveLaunch := false
	elevGround, elevStn := math.NaN(), math.NaN()

	var cur *level
	var buf level
	flush := func() {
		if cur == nil {
			return
		}
		c := cur
		cur = nil
		if c.shear || !c.any {
			return
		}
		l := c.l
		if math.IsNaN(l.PressurePa) && math.IsNaN(l.HeightM) {
			return
		}
		l.Kind = sounding.KindSignificant
		if !math.IsNaN(c.sig) {
			bit := func(n int) bool { return uint64(c.sig)>>(c.sigBits-n)&1 == 1 }
			switch {
			case bit(1):
				l.Kind = sounding.KindSurface
			case bit(2):
				l.Kind = sounding.KindStandard
			}
			l.Tropopause = bit(3)
		}
		if math.IsNaN(l.PressurePa) {
			l.Kind = sounding.KindWindOnly
		}
		if !math.IsNaN(l.TemperatureK) && !math.IsNaN(l.DewpointK) {
			l.DewpointDepressionK = l.TemperatureK - l.DewpointK
			l.Status[sounding.VarDewpointDepression] = sounding.Derived
		}
		s.Levels = append(s.Levels, l)
	}
	set := func(l *sounding.Level, v sounding.Var, dst *float64, x float64) {
		if math.IsNaN(x) {
			return
		}
		*dst = x
		l.Status[v] = sounding.Reported
	}
	vs := sub.Values
	n := 0
	for i := range vs {
		if vs[i].Mark == MarkOperator {
			break
		}
		if vs[i].Mark == MarkIteration && vs[i].Depth == 1 {
			n++
		}
	}
	s.Levels = make([]sounding.Level, 0, n)
	for i := range vs {
		v := &vs[i]
		if v.Mark == MarkOperator {
			break // quality information and statistics follow
		}
		if v.Mark == MarkIteration {
			if v.Depth == 1 {
				flush()
				buf = level{l: sounding.NewLevel(), sig: math.NaN()}
				cur = &buf
			}
			continue
		}
		if v.Mark != MarkValue {
			continue
		}
		if v.Depth == 0 {
			flush()
			x := v.V
			switch v.Desc {
			case dBlock:
				if math.IsNaN(block) {
					block = x
				}
			case dStation:
				if math.IsNaN(station) {
					station = x
				}
			case dCallSign:
				if v.Str >= 0 && callSign == "" {
					callSign = sub.Strings[v.Str]
				}
			case dTimeSig:
				timeSig = x
			case dYear, dMonth, dDay, dHour, dMinute, dSecond:
				k := int(v.Desc - dYear)
				tm[k] = x
				if (v.Desc == dMinute || v.Desc == dSecond) && !math.IsNaN(tm[0]+tm[1]+tm[2]+tm[3]+tm[4]) {
					sec := 0.0
					if !math.IsNaN(tm[5]) && v.Desc == dSecond {
						sec = tm[5]
					}
					t, ok := mkTime(tm[0], tm[1], tm[2], tm[3], tm[4], sec)
					if ok {
						if timeSig == 18 {
							if !haveLaunch || v.Desc == dSecond {
								launch, haveLaunch = t, true
							}
						} else if obs.IsZero() || v.Desc == dSecond {
							obs = t
						}
					}
				}
				if v.Desc == dYear {
					tm[5] = math.NaN()
				}
			case dLatHigh, dLatLow:
				if math.IsNaN(s.LatitudeDeg) && x >= -90 && x <= 90 {
					s.LatitudeDeg = x
				}
			case dLonHigh, dLonLow:
				if math.IsNaN(s.LongitudeDeg) && x >= -180 && x <= 180 {
					s.LongitudeDeg = x
				}
			case dHeightGrnd:
				if math.IsNaN(elevGround) {
					elevGround = x
				}
			case dHeightStn:
				if math.IsNaN(elevStn) {
					elevStn = x
				}
			}
			continue
		}
		if cur == nil {
			continue
		}
		l := &cur.l
		x := v.V
		switch v.Desc {
		case dPressure:
			set(l, sounding.VarPressure, &l.PressurePa, x)
		case dGeopotH, dHeight:
			set(l, sounding.VarHeight, &l.HeightM, x)
		case dGeopot:
			set(l, sounding.VarHeight, &l.HeightM, x/standardGravity)
		case dTemp, dTempOld:
			set(l, sounding.VarTemperature, &l.TemperatureK, x)
		case dDew, dDewOld:
			l.DewpointK = x
		case dWindDir:
			set(l, sounding.VarWindDirection, &l.WindDirectionDeg, x)
		case dWindSpd:
			set(l, sounding.VarWindSpeed, &l.WindSpeedMS, x)
		case dTimeDisp:
			set(l, sounding.VarElapsedTime, &l.ElapsedS, x)
		case dLatDisp:
			if x >= -90 && x <= 90 {
				l.LatDisplacementDeg = x
			}
		case dLonDisp:
			if x >= -360 && x <= 360 {
				l.LonDisplacementDeg = x
			}
		case dSigExt:
			cur.sig, cur.sigBits = x, 18
		case dSigOld:
			cur.sig, cur.sigBits = x, 7
		case dShearBelo, dShearAbov:
			cur.shear = true
		default:
			continue
		}
		cur.any = true
	}
	flush()
	dropBelowGround(s)
	if descent {
		s.Descent = true
		// Received from the top down: stored lowest first, as an ascent.
		if first, last := firstPressure(slices.All(s.Levels)), firstPressure(slices.Backward(s.Levels)); first < last {
			slices.Reverse(s.Levels)
		}
	}

	switch {
	case !math.IsNaN(block) && !math.IsNaN(station) && block >= 0 && block < 100 && station >= 0 && station < 1000:
		s.StationID = fmt.Sprintf("%02d%03d", int(block), int(station))
	case callSign != "":
		s.StationID = callSign
	default:
		return nil, fmt.Errorf("%w: neither a WMO block and station number nor a call sign", ingest.ErrBadHeader)
	}
	switch {
	case haveLaunch:
		s.LaunchTime, s.LaunchTimeReported = launch, true
		s.NominalTime, s.NominalHourInferred = launch.Round(time.Hour), true
	case !obs.IsZero():
		s.LaunchTime, s.NominalTime = obs, obs.Truncate(time.Hour)
		s.NominalHourInferred = obs.Minute() != 0 || obs.Second() != 0
	case !m.Typical.IsZero():
		s.LaunchTime, s.NominalTime = m.Typical, m.Typical.Round(time.Hour)
		s.NominalHourInferred = true
	default:
		return nil, fmt.Errorf("%w: no date and time", ingest.ErrBadHeader)
	}
	s.ElevationM = elevGround
	if math.IsNaN(s.ElevationM) {
		s.ElevationM = elevStn
	}
	if len(s.Levels) == 0 {
		return nil, fmt.Errorf("%w: station %s %s", ingest.ErrNoData, s.StationID, s.LaunchTime.Format(time.RFC3339))
	}
	return s, nil
}

// firstPressure returns the first pressure of the levels given, NaN when
// none has one.
func firstPressure(levels iter.Seq2[int, sounding.Level]) float64 {
	for _, l := range levels {
		if !math.IsNaN(l.PressurePa) {
			return l.PressurePa
		}
	}
	return math.NaN()
}

func mkTime(y, mo, d, h, mi, sec float64) (time.Time, bool) {
	if y < 1900 || y > 2200 || mo < 1 || mo > 12 || d < 1 || d > 31 || h < 0 || h > 24 || mi < 0 || mi > 59 || sec < 0 || sec >= 61 {
		return time.Time{}, false
	}
	whole := math.Floor(sec)
	return time.Date(int(y), time.Month(mo), int(d), int(h), int(mi), int(whole), int((sec-whole)*1e9), time.UTC), true
}

// dropBelowGround removes standard levels whose pressure is higher than
// the surface level's: the sender extrapolated them below the ground (as
// the TEMP reader does; WMO-No. 306 FM 35 reports them the same way).
func dropBelowGround(s *sounding.Sounding) {
	ps := math.NaN()
	for _, l := range s.Levels {
		if l.Kind == sounding.KindSurface && !math.IsNaN(l.PressurePa) {
			ps = l.PressurePa
			break
		}
	}
	if math.IsNaN(ps) {
		return
	}
	out := s.Levels[:0]
	for _, l := range s.Levels {
		if l.Kind == sounding.KindStandard && l.PressurePa > ps {
			continue
		}
		out = append(out, l)
	}
	s.Levels = out
}
