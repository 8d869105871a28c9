package bufr

import (
	"bytes"
	"fmt"
	"io"
)

// maxMessage is the largest message Section 0 can announce (a 24-bit
// length).
const maxMessage = 1<<24 - 1

// Scanner finds BUFR messages in a byte stream: bare messages one after
// another, or messages inside GTS bulletins (SOH, sequence number,
// abbreviated heading, the message, ETX) with anything between one
// message's 7777 and the next "BUFR". It holds at most one message (and a
// read buffer) in memory.
type Scanner struct {
	r   io.Reader
	buf []byte // unread input; buf[0] is at offset off
	off int64
	eof bool
	err error
}

// NewScanner returns a scanner reading r.
func NewScanner(r io.Reader) *Scanner { return &Scanner{r: r} }

// fill makes at least n bytes available unless the input ends first.
func (s *Scanner) fill(n int) bool {
	for len(s.buf) < n && !s.eof {
		if cap(s.buf)-len(s.buf) < 1<<15 || cap(s.buf) < n {
			c := 2 * cap(s.buf)
			if c < n {
				c = n
			}
			if c < 1<<16 {
				c = 1 << 16
			}
			nb := make([]byte, len(s.buf), c)
			copy(nb, s.buf)
			s.buf = nb
		}
		k, err := s.r.Read(s.buf[len(s.buf):cap(s.buf)])
		s.buf = s.buf[:len(s.buf)+k]
		if err == io.EOF {
			s.eof = true
		} else if err != nil {
			s.eof, s.err = true, err
		}
	}
	return len(s.buf) >= n
}

func (s *Scanner) discard(n int) {
	s.buf = s.buf[n:]
	s.off += int64(n)
	if len(s.buf) == 0 && cap(s.buf) > 1<<20 {
		s.buf = nil // drop the room a large message needed
	}
}

// Next returns the next message's bytes (valid until the following call)
// and its byte offset in the stream. A damaged message (length beyond the
// input, no 7777 where Section 0 says it ends, an edition without a total
// length) gives a *FrameError and the scanner resumes after its "BUFR";
// io.EOF ends the stream.
func (s *Scanner) Next() ([]byte, int64, error) {
	for {
		i := bytes.Index(s.buf, []byte("BUFR"))
		if i < 0 {
			if s.eof {
				s.discard(len(s.buf))
				if s.err != nil {
					return nil, s.off, s.err
				}
				return nil, s.off, io.EOF
			}
			if len(s.buf) > 3 {
				s.discard(len(s.buf) - 3)
			}
			s.fill(len(s.buf) + 1<<15)
			continue
		}
		s.discard(i)
		at := s.off
		if !s.fill(8) {
			s.discard(4)
			return nil, at, &FrameError{at, fmt.Errorf("%w: input ends inside Section 0", ErrTruncated)}
		}
		ed := s.buf[7]
		if ed < 2 {
			s.discard(4)
			return nil, at, &FrameError{at, fmt.Errorf("%w: edition %d has no total length", ErrEdition, ed)}
		}
		n := u24(s.buf[4:])
		if n < 12 {
			s.discard(4)
			return nil, at, &FrameError{at, fmt.Errorf("%w: Section 0 gives a length of %d octets", ErrBadSection, n)}
		}
		if !s.fill(n) {
			s.discard(4)
			return nil, at, &FrameError{at, fmt.Errorf("%w: Section 0 gives %d octets, the input ends after %d", ErrTruncated, n, len(s.buf))}
		}
		if string(s.buf[n-4:n]) != "7777" {
			s.discard(4)
			return nil, at, &FrameError{at, fmt.Errorf("%w: no 7777 where Section 0 says the message ends (%d octets)", ErrTruncated, n)}
		}
		msg := s.buf[:n]
		s.discard(n)
		return msg, at, nil
	}
}

// FrameError is a message the scanner could not delimit.
type FrameError struct {
	Offset int64
	Err    error
}

func (e *FrameError) Error() string { return fmt.Sprintf("byte %d: %v", e.Offset, e.Err) }
func (e *FrameError) Unwrap() error { return e.Err }

// Sniff reports whether prefix holds the start of a BUFR message: the
// indicator "BUFR" followed by a total length and edition 2, 3 or 4 (after
// anything, such as a GTS heading).
func Sniff(prefix []byte) bool {
	p := prefix
	for {
		i := bytes.Index(p, []byte("BUFR"))
		if i < 0 {
			return false
		}
		if i+8 <= len(p) {
			ed, n := p[i+7], u24(p[i+4:])
			if ed >= 2 && ed <= 4 && n >= 30 {
				return true
			}
		} else {
			return i+4 <= len(p) && i < 256 // cut right after the indicator
		}
		p = p[i+4:]
	}
}
