package ingest

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
)

// QuoteLimit is the most bytes of input a message quotes.
const QuoteLimit = 100

// Quote quotes s for a message (Go syntax, so control characters and
// invalid UTF-8 show as escapes), cut to its first QuoteLimit bytes with
// "…" and the full length when longer, so that a hostile token of any size
// (a 200 MB field) gives a message of bounded size. Every reader quotes
// input through it.
func Quote(s string) string {
	if len(s) > QuoteLimit {
		return fmt.Sprintf("%q… (%d bytes)", s[:QuoteLimit], len(s))
	}
	return fmt.Sprintf("%q", s)
}

// QuoteBytes is Quote for a byte slice; it copies at most QuoteLimit bytes.
func QuoteBytes(b []byte) string {
	if len(b) > QuoteLimit {
		return fmt.Sprintf("%q… (%d bytes)", b[:QuoteLimit], len(b))
	}
	return fmt.Sprintf("%q", b)
}

// BOM is the UTF-8 encoding of the byte-order mark U+FEFF, which some
// editors put at the start of a text file (and which concatenating such
// files leaves at the start of a line).
const BOM = "\xef\xbb\xbf"

// TrimBOM returns line without a leading UTF-8 byte-order mark.
func TrimBOM(line []byte) []byte {
	return bytes.TrimPrefix(line, []byte(BOM))
}

// LineEnds returns a reader of r in which every carriage return that is a
// line end of its own (old Macintosh text: CR not followed, through any
// further CRs, by LF) reads as LF. CR LF and CR CR LF are left as they are,
// for readers that take them as one line end. The bytes keep their
// positions, so byte offsets into the result are offsets into r.
func LineEnds(r io.Reader) io.Reader {
	return &lineEnds{br: bufio.NewReaderSize(r, 64<<10)}
}

type lineEnds struct {
	br *bufio.Reader
}

func (l *lineEnds) Read(p []byte) (int, error) {
	n, err := l.br.Read(p)
	q := p[:n]
	for i := 0; i < n; {
		k := bytes.IndexByte(q[i:], '\r')
		if k < 0 {
			break
		}
		i += k
		j := i + 1
		for j < n && q[j] == '\r' {
			j++
		}
		lf := false
		if j < n {
			lf = q[j] == '\n'
		} else {
			// The run of CRs reaches the end of this chunk: look at the
			// bytes that follow without consuming them.
			for m := 1; ; m++ {
				b, _ := l.br.Peek(m)
				if len(b) < m {
					break
				}
				if b[m-1] != '\r' {
					lf = b[m-1] == '\n'
					break
				}
			}
		}
		if !lf {
			for x := i; x < j; x++ {
				q[x] = '\n'
			}
		}
		i = j
	}
	return n, err
}
