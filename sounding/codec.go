package sounding

import (
	"encoding/binary"
	"errors"
	"math"
	"slices"
	"time"
)

// The binary codec turns a sounding into bytes and back, exactly (float
// bits, statuses and source position included; numbers little-endian
// whatever the platform). The ingestion engine stages decoded soundings on
// disk with it between reading and analysis, so that memory does not grow
// with the archive, and hashes it to recognise unchanged partitions: a
// change of the encoding changes those hashes.

// ErrCorrupt is returned by DecodeBinary for bytes that are not a whole
// encoded sounding.
var ErrCorrupt = errors.New("encoded sounding is corrupt")

// AppendBinary appends the encoding of s to b. With source false the
// source position is left out (for a hash of the observation alone).
func AppendBinary(b []byte, s *Sounding, source bool) []byte {
	b = appendString(b, s.StationID)
	b = appendString(b, s.StationName)
	b = appendFloat(b, s.LatitudeDeg)
	b = appendFloat(b, s.LongitudeDeg)
	b = appendFloat(b, s.ElevationM)
	b = binary.AppendVarint(b, s.NominalTime.UnixNano())
	b = binary.AppendVarint(b, s.LaunchTime.UnixNano())
	// The descent flag took the third bit, unused before, so an ascent is
	// encoded (and hashed) as before descents existed.
	b = append(b, flags(s.NominalHourInferred, s.LaunchTimeReported, s.Descent))
	b = binary.AppendVarint(b, int64(s.DeclaredLevels))
	b = appendString(b, s.PressureSource)
	b = appendString(b, s.HeightSource)
	if source {
		b = append(b, 1)
		b = appendString(b, s.Source.File)
		b = appendString(b, s.Source.Member)
		b = binary.AppendVarint(b, int64(s.Source.Line))
		b = appendString(b, s.Source.Format)
	} else {
		b = append(b, 0)
	}
	b = binary.AppendUvarint(b, uint64(len(s.Levels)))
	// Room for every level at its longest, reserved once; each level is
	// then written by index into the reserved bytes instead of by a chain
	// of appends (AppendBinary ran about a third of a microsecond per
	// level, each level hashed once per ingest).
	b = slices.Grow(b, len(s.Levels)*maxLevelBytes)
	for i := range s.Levels {
		b = appendLevel(b, &s.Levels[i], source)
	}
	return b
}

// maxLevelBytes bounds the encoding of one level: kind and flags, the
// bitmap, eleven values, status and tier of each variable, and the line
// as a varint.
const maxLevelBytes = 2 + 2 + 11*8 + 2*int(NumVars) + binary.MaxVarintLen64

// appendLevel appends the encoding of one level: kind, flags, a bitmap of
// the eleven values present (not NaN), those values, the status and tier
// of each variable, and with source the line.
//
// A bitmap says which of the eleven values are present; only those
// follow, since archive levels miss many of them. The displacements came
// last, so a level without them is encoded as before they existed (and
// its hash is unchanged).
func appendLevel(b []byte, l *Level, source bool) []byte {
	n := len(b)
	b = slices.Grow(b, maxLevelBytes)[:n+maxLevelBytes]
	e := b[n : n+maxLevelBytes]
	e[0], e[1] = byte(l.Kind), flags(l.Tropopause, false, false)
	// Every value's bits are written at the next free place; the place
	// advances past them only when the value is present (not NaN), so an
	// absent value is overwritten by the next one or left beyond the end.
	at, present := 4, uint16(0)
	at, present = putValue(e, at, present, 0, l.ElapsedS)
	at, present = putValue(e, at, present, 1, l.PressurePa)
	at, present = putValue(e, at, present, 2, l.HeightM)
	at, present = putValue(e, at, present, 3, l.TemperatureK)
	at, present = putValue(e, at, present, 4, l.DewpointK)
	at, present = putValue(e, at, present, 5, l.DewpointDepressionK)
	at, present = putValue(e, at, present, 6, l.RelHumidityPct)
	at, present = putValue(e, at, present, 7, l.WindDirectionDeg)
	at, present = putValue(e, at, present, 8, l.WindSpeedMS)
	at, present = putValue(e, at, present, 9, l.LatDisplacementDeg)
	at, present = putValue(e, at, present, 10, l.LonDisplacementDeg)
	binary.LittleEndian.PutUint16(e[2:4], present)
	// Status and tier of each variable, interleaved: the eight statuses
	// and the eight tiers are each read as one word, spread to every
	// other byte and or-ed (a loop over the variables took a third of
	// the level's encoding).
	st := (*[2 * NumVars]byte)(e[at : at+2*int(NumVars)])
	status, tier := eightBytes(&l.Status), binary.LittleEndian.Uint64(l.UpstreamTier[:])
	binary.LittleEndian.PutUint64(st[:8], spreadBytes(uint32(status))|spreadBytes(uint32(tier))<<8)
	binary.LittleEndian.PutUint64(st[8:], spreadBytes(uint32(status>>32))|spreadBytes(uint32(tier>>32))<<8)
	at += 2 * int(NumVars)
	if source {
		at += binary.PutVarint(e[at:], int64(l.Line))
	}
	return b[:n+at]
}

// The interleaving of statuses and tiers in appendLevel reads eight of
// each: a change of NumVars fails to compile here.
const _ = (8 - NumVars) + (NumVars - 8)

// eightBytes returns the eight statuses of st as one little-endian word.
func eightBytes(st *[NumVars]Status) uint64 {
	return uint64(st[0]) | uint64(st[1])<<8 | uint64(st[2])<<16 | uint64(st[3])<<24 |
		uint64(st[4])<<32 | uint64(st[5])<<40 | uint64(st[6])<<48 | uint64(st[7])<<56
}

// spreadBytes puts byte i of x at byte 2i of the result, zeros between.
func spreadBytes(x uint32) uint64 {
	v := uint64(x)
	v = (v | v<<16) & 0x0000ffff0000ffff
	return (v | v<<8) & 0x00ff00ff00ff00ff
}

// AppendSourceBinary appends the source position of s and of its levels:
// what AppendBinary(b, s, true) holds beyond AppendBinary(b, s, false).
func AppendSourceBinary(b []byte, s *Sounding) []byte {
	b = appendString(b, s.Source.File)
	b = appendString(b, s.Source.Member)
	b = binary.AppendVarint(b, int64(s.Source.Line))
	b = appendString(b, s.Source.Format)
	// Room for every line at its longest, reserved once, as AppendBinary
	// does for the levels.
	n := len(b)
	b = slices.Grow(b, len(s.Levels)*binary.MaxVarintLen64)[:n+len(s.Levels)*binary.MaxVarintLen64]
	for i := range s.Levels {
		n += binary.PutVarint(b[n:], int64(s.Levels[i].Line))
	}
	return b[:n]
}

// putValue writes the bits of v at e[at:] and returns the place after it
// with bit k of present set when v is present (not NaN), or at and present
// unchanged otherwise.
func putValue(e []byte, at int, present uint16, k uint, v float64) (int, uint16) {
	binary.LittleEndian.PutUint64(e[at:], math.Float64bits(v))
	var p int
	if v == v {
		p = 1
	}
	return at + 8*p, present | uint16(p)<<k
}

func flags(a, b, c bool) byte {
	var f byte
	if a {
		f |= 1
	}
	if b {
		f |= 2
	}
	if c {
		f |= 4
	}
	return f
}

func appendString(b []byte, s string) []byte {
	b = binary.AppendUvarint(b, uint64(len(s)))
	return append(b, s...)
}

func appendFloat(b []byte, v float64) []byte {
	return binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
}

// decoder reads what AppendBinary wrote.
type decoder struct {
	b   []byte
	err error
}

func (d *decoder) fail() { d.err = ErrCorrupt; d.b = nil }

func (d *decoder) uvarint() uint64 {
	v, n := binary.Uvarint(d.b)
	if n <= 0 {
		d.fail()
		return 0
	}
	d.b = d.b[n:]
	return v
}

func (d *decoder) varint() int64 {
	v, n := binary.Varint(d.b)
	if n <= 0 {
		d.fail()
		return 0
	}
	d.b = d.b[n:]
	return v
}

func (d *decoder) byte() byte {
	if len(d.b) < 1 {
		d.fail()
		return 0
	}
	c := d.b[0]
	d.b = d.b[1:]
	return c
}

func (d *decoder) string() string {
	n := d.uvarint()
	if n > uint64(len(d.b)) {
		d.fail()
		return ""
	}
	s := string(d.b[:n])
	d.b = d.b[n:]
	return s
}

func (d *decoder) uint16() uint16 {
	if len(d.b) < 2 {
		d.fail()
		return 0
	}
	v := binary.LittleEndian.Uint16(d.b)
	d.b = d.b[2:]
	return v
}

func (d *decoder) float() float64 {
	if len(d.b) < 8 {
		d.fail()
		return 0
	}
	v := math.Float64frombits(binary.LittleEndian.Uint64(d.b))
	d.b = d.b[8:]
	return v
}

// DecodeBinary decodes one sounding written by AppendBinary with source
// true and returns the rest of b.
func DecodeBinary(b []byte) (*Sounding, []byte, error) {
	d := &decoder{b: b}
	s := &Sounding{}
	s.StationID = d.string()
	s.StationName = d.string()
	s.LatitudeDeg, s.LongitudeDeg, s.ElevationM = d.float(), d.float(), d.float()
	s.NominalTime = time.Unix(0, d.varint()).UTC()
	s.LaunchTime = time.Unix(0, d.varint()).UTC()
	f := d.byte()
	s.NominalHourInferred, s.LaunchTimeReported, s.Descent = f&1 != 0, f&2 != 0, f&4 != 0
	s.DeclaredLevels = int(d.varint())
	s.PressureSource = d.string()
	s.HeightSource = d.string()
	source := d.byte() == 1
	if source {
		s.Source.File = d.string()
		s.Source.Member = d.string()
		s.Source.Line = int(d.varint())
		s.Source.Format = d.string()
	}
	n := d.uvarint()
	// Each level takes at least 2 + 2 + 2·NumVars bytes: bound n by the
	// bytes left before allocating.
	if n > uint64(len(d.b))/uint64(4+2*int(NumVars)) {
		return nil, nil, ErrCorrupt
	}
	s.Levels = make([]Level, n)
	for i := range s.Levels {
		l := &s.Levels[i]
		l.Kind = LevelKind(d.byte())
		l.Tropopause = d.byte()&1 != 0
		present := d.uint16()
		for k, p := range [...]*float64{&l.ElapsedS, &l.PressurePa, &l.HeightM, &l.TemperatureK, &l.DewpointK,
			&l.DewpointDepressionK, &l.RelHumidityPct, &l.WindDirectionDeg, &l.WindSpeedMS,
			&l.LatDisplacementDeg, &l.LonDisplacementDeg} {
			if present&(1<<k) != 0 {
				*p = d.float()
			} else {
				*p = math.NaN()
			}
		}
		for v := range NumVars {
			l.Status[v] = Status(d.byte())
			l.UpstreamTier[v] = d.byte()
		}
		if source {
			l.Line = int(d.varint())
		}
	}
	if d.err != nil {
		return nil, nil, d.err
	}
	return s, d.b, nil
}
