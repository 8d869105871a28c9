package bufr

import (
	"errors"
	"fmt"
	"time"
)

// Reasons a message is rejected; wrapped with detail and, by the Reader,
// in an *ingest.ParseError at the message's byte offset.
var (
	ErrTruncated     = errors.New("truncated message")
	ErrBadSection    = errors.New("malformed section")
	ErrEdition       = errors.New("unsupported BUFR edition")
	ErrUnknownDesc   = errors.New("descriptor not in the tables")
	ErrBadOperator   = errors.New("unsupported or malformed operator")
	ErrBitmap        = errors.New("data-present bitmap does not fit")
	ErrTooComplex    = errors.New("message expands beyond the decoder's limits")
	ErrBadData       = errors.New("malformed data section")
	ErrNotRadiosonde = errors.New("message holds no radiosonde profile")
)

// Message is one BUFR message split into its sections (WMO-No. 306
// Vol. I.2, FM 94, Regulations 94.1–94.6). Slices point into the
// message's bytes.
type Message struct {
	Edition          int
	MasterTable      int
	Centre           int
	SubCentre        int
	UpdateSequence   int
	Category         int
	SubCategory      int // international sub-category (edition 4), else the sub-category
	LocalSubCategory int
	MasterVersion    int
	LocalVersion     int
	// Typical time of Section 1 (seconds only in edition 4). Edition 2 and
	// 3 give the year of the century; years 0–49 are taken as 2000–2049
	// and 50–100 as 1950–2000 (WMO's "year of century", 100 = 2000).
	Typical time.Time

	Subsets     int
	Observed    bool
	Compressed  bool
	Descriptors []uint16
	Data        []byte // Section 4 after its 4-octet header
	Length      int    // total length in octets
}

func u24(b []byte) int { return int(b[0])<<16 | int(b[1])<<8 | int(b[2]) }
func u16(b []byte) int { return int(b[0])<<8 | int(b[1]) }

// ParseMessage splits one whole message (from "BUFR" to "7777").
func ParseMessage(b []byte) (*Message, error) {
	if len(b) < 8 || string(b[:4]) != "BUFR" {
		return nil, fmt.Errorf("%w: no BUFR indicator", ErrBadSection)
	}
	m := &Message{Edition: int(b[7])}
	if m.Edition < 2 || m.Edition > 4 {
		return nil, fmt.Errorf("%w: edition %d (2, 3 and 4 are read)", ErrEdition, m.Edition)
	}
	m.Length = u24(b[4:])
	if m.Length > len(b) {
		return nil, fmt.Errorf("%w: Section 0 gives %d octets, %d present", ErrTruncated, m.Length, len(b))
	}
	b = b[:m.Length]
	if m.Length < 8+4 || string(b[len(b)-4:]) != "7777" {
		return nil, fmt.Errorf("%w: no 7777 at the length Section 0 gives (%d octets)", ErrTruncated, m.Length)
	}
	pos := 8
	section := func(n, min int) ([]byte, error) {
		if pos+3 > len(b)-4 {
			return nil, fmt.Errorf("%w: Section %d starts beyond the message", ErrBadSection, n)
		}
		l := u24(b[pos:])
		if l < min || pos+l > len(b)-4 {
			return nil, fmt.Errorf("%w: Section %d length %d does not fit (%d octets left)", ErrBadSection, n, l, len(b)-4-pos)
		}
		s := b[pos : pos+l]
		pos += l
		return s, nil
	}
	var hasSec2 bool
	if m.Edition == 4 {
		s1, err := section(1, 22)
		if err != nil {
			return nil, err
		}
		m.MasterTable = int(s1[3])
		m.Centre, m.SubCentre = u16(s1[4:]), u16(s1[6:])
		m.UpdateSequence = int(s1[8])
		hasSec2 = s1[9]&0x80 != 0
		m.Category, m.SubCategory, m.LocalSubCategory = int(s1[10]), int(s1[11]), int(s1[12])
		m.MasterVersion, m.LocalVersion = int(s1[13]), int(s1[14])
		m.Typical = date(u16(s1[15:]), s1[17], s1[18], s1[19], s1[20], s1[21])
	} else {
		s1, err := section(1, 17)
		if err != nil {
			return nil, err
		}
		m.MasterTable = int(s1[3])
		if m.Edition == 3 {
			m.SubCentre, m.Centre = int(s1[4]), int(s1[5])
		} else {
			m.Centre = u16(s1[4:])
		}
		m.UpdateSequence = int(s1[6])
		hasSec2 = s1[7]&0x80 != 0
		m.Category, m.SubCategory = int(s1[8]), int(s1[9])
		m.MasterVersion, m.LocalVersion = int(s1[10]), int(s1[11])
		y := int(s1[12])
		if y < 50 {
			y += 2000
		} else {
			y += 1900
		}
		m.Typical = date(y, s1[13], s1[14], s1[15], s1[16], 0)
	}
	if hasSec2 {
		if _, err := section(2, 4); err != nil {
			return nil, err
		}
	}
	s3, err := section(3, 9)
	if err != nil {
		return nil, err
	}
	m.Subsets = u16(s3[4:])
	m.Observed = s3[6]&0x80 != 0
	m.Compressed = s3[6]&0x40 != 0
	n := (len(s3) - 7) / 2
	m.Descriptors = make([]uint16, n)
	for i := range n {
		m.Descriptors[i] = uint16(u16(s3[7+2*i:]))
	}
	s4, err := section(4, 4)
	if err != nil {
		return nil, err
	}
	m.Data = s4[4:]
	if m.Subsets == 0 {
		return nil, fmt.Errorf("%w: Section 3 declares no subsets", ErrBadSection)
	}
	return m, nil
}

// date builds a UTC time, or the zero time when a field is out of range.
func date(y int, mo, d, h, mi, s byte) time.Time {
	if mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 59 {
		return time.Time{}
	}
	return time.Date(y, time.Month(mo), int(d), int(h), int(mi), int(s), 0, time.UTC)
}
