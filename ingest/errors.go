package ingest

import (
	"errors"
	"fmt"
)

// ParseError reports input that could not be read, with its position, in the
// manner of encoding/csv's ParseError. Readers return it from Next for one
// rejected sounding or line and carry on with the rest of the input on the
// following call.
type ParseError struct {
	File   string // input path as given
	Member string // member of a zip archive, or ""
	Line   int    // 1-based line, 0 when the input is not line-oriented
	Offset int64  // byte offset for binary inputs, −1 when Line is used
	Err    error  // what was wrong
}

func (e *ParseError) Error() string {
	name := e.File
	if e.Member != "" {
		name += "!" + e.Member
	}
	switch {
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %v", name, e.Line, e.Err)
	case e.Offset >= 0:
		return fmt.Sprintf("%s@%d: %v", name, e.Offset, e.Err)
	}
	return fmt.Sprintf("%s: %v", name, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

// Reasons a reader gives for skipping input. They are wrapped in a
// ParseError; callers use errors.Is to count skips by reason.
var (
	ErrLevelCount   = errors.New("level count in header does not match the levels present")
	ErrBadHeader    = errors.New("malformed header")
	ErrBadLevel     = errors.New("malformed level record")
	ErrOrphanLevel  = errors.New("level record before any header")
	ErrTooLarge     = errors.New("decompressed input exceeds the size limit")
	ErrUnknownInput = errors.New("input format not recognised")
	ErrNoData       = errors.New("report carries no level data")
	ErrUnsupported  = errors.New("recognised but not supported by this reader")
	// ErrJunk: text where the format has none (lines before a CSV header,
	// words between TEMP reports); reported, and the rest of the input is
	// read.
	ErrJunk = errors.New("text that is not part of the format")
	// ErrNoSoundings: an input read without error that yields no sounding
	// (as a format forced by --format that is not the input's).
	ErrNoSoundings = errors.New("input yields no sounding")
)

// ErrPartlyDecoded is wrapped in a ParseError that accompanies a sounding
// which was read except for some groups the reader does not decode (named
// in the message). The sounding itself is returned separately; callers
// count this as a remark on the input, not as skipped input.
var ErrPartlyDecoded = errors.New("report read in part")
