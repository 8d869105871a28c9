package netcdf

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"

	"github.com/sondeclim/sondeclim/ingest"
)

// Type is a netCDF classic external data type (nc_type).
type Type uint32

// The six classic data types. Values are the tags stored in the file.
const (
	Byte   Type = 1 // signed 8-bit integer
	Char   Type = 2 // 8-bit character, used for text
	Short  Type = 3 // signed 16-bit integer, big-endian
	Int    Type = 4 // signed 32-bit integer, big-endian
	Float  Type = 5 // IEEE 754 binary32, big-endian
	Double Type = 6 // IEEE 754 binary64, big-endian
)

// Size returns the size of one value in bytes, or 0 for an unknown type.
func (t Type) Size() int64 {
	switch t {
	case Byte, Char:
		return 1
	case Short:
		return 2
	case Int, Float:
		return 4
	case Double:
		return 8
	}
	return 0
}

// String returns the type's name as used in CDL ("float", "double", …).
func (t Type) String() string {
	switch t {
	case Byte:
		return "byte"
	case Char:
		return "char"
	case Short:
		return "short"
	case Int:
		return "int"
	case Float:
		return "float"
	case Double:
		return "double"
	}
	return fmt.Sprintf("type(%d)", uint32(t))
}

// Dim is a named dimension. The record (unlimited) dimension has
// Unlimited set and Len equal to the file's number of records.
type Dim struct {
	Name      string
	Len       int64
	Unlimited bool
}

// Attr is a named attribute. Text holds the value of a Char attribute
// (trailing NUL bytes removed); Values holds the values of a numeric
// attribute converted to float64 (exact for every classic type).
type Attr struct {
	Name   string
	Type   Type
	Text   string
	Values []float64
}

// Var describes a variable. Its data are read with File.Float64s.
type Var struct {
	Name  string
	Dims  []int // indices into File.Dims, slowest-varying first
	Attrs []Attr
	Type  Type
	// Begin is the byte offset of the variable's data (of its first
	// record for a record variable).
	Begin int64
	// Record is true when the first dimension is the record dimension:
	// the variable's values are then interleaved with the other record
	// variables, one slab per record.
	Record bool

	slab int64 // values per record (record variable) or in total (fixed)
}

// Attr returns the variable's attribute with the given name.
func (v *Var) Attr(name string) (Attr, bool) { return findAttr(v.Attrs, name) }

// Len returns the number of values the variable holds in the file.
func (v *Var) Len(f *File) int64 {
	if v.Record {
		return v.slab * f.NumRecs
	}
	return v.slab
}

// File is an opened netCDF classic file (CDF-1, or CDF-2 with 64-bit
// offsets). Only the header is decoded by Open; variable data are read on
// demand through the io.ReaderAt.
type File struct {
	Version byte // 1 (classic) or 2 (64-bit offset)
	NumRecs int64
	Dims    []Dim
	Attrs   []Attr // global attributes
	Vars    []Var

	r       io.ReaderAt
	size    int64
	recSize int64 // bytes from one record to the next
}

// Attr returns the global attribute with the given name.
func (f *File) Attr(name string) (Attr, bool) { return findAttr(f.Attrs, name) }

// Var returns the variable with the given name, or nil.
func (f *File) Var(name string) *Var {
	for i := range f.Vars {
		if f.Vars[i].Name == name {
			return &f.Vars[i]
		}
	}
	return nil
}

func findAttr(as []Attr, name string) (Attr, bool) {
	for _, a := range as {
		if a.Name == name {
			return a, true
		}
	}
	return Attr{}, false
}

// FormatError reports a malformed classic file at a byte offset.
type FormatError struct {
	Offset int64
	Err    error
}

func (e *FormatError) Error() string { return fmt.Sprintf("offset %d: %v", e.Offset, e.Err) }
func (e *FormatError) Unwrap() error { return e.Err }

// Reasons for rejecting a file; they are wrapped in a FormatError.
var (
	ErrNotClassic  = errors.New("not a netCDF classic file (magic is not CDF\\x01 or CDF\\x02)")
	ErrTruncated   = errors.New("file ends inside the header or the data it declares")
	ErrMalformed   = errors.New("malformed header")
	ErrUnsupported = errors.New("unsupported netCDF feature")
)

// Sniff reports whether prefix starts with the magic of a netCDF classic
// (CDF\x01) or 64-bit-offset (CDF\x02) file.
func Sniff(prefix []byte) bool {
	return len(prefix) >= 4 && prefix[0] == 'C' && prefix[1] == 'D' && prefix[2] == 'F' &&
		(prefix[3] == 1 || prefix[3] == 2)
}

// Header tags of the classic format.
const (
	tagDimension = 0x0A
	tagVariable  = 0x0B
	tagAttribute = 0x0C
	streaming    = 0xFFFFFFFF // numrecs not yet known (file being written)
)

// cursor reads the header sequentially from an io.ReaderAt through a
// window buffer. Every read is checked against the file size first, so no
// length taken from the file can cause an allocation beyond the file size.
type cursor struct {
	r      io.ReaderAt
	size   int64
	off    int64
	buf    []byte
	bufOff int64
	err    error
}

const window = 64 << 10

func (c *cursor) fail(err error) {
	if c.err == nil {
		c.err = &FormatError{Offset: c.off, Err: err}
	}
}

// bytes returns the next n bytes, or nil after recording an error.
func (c *cursor) bytes(n int64) []byte {
	if c.err != nil {
		return nil
	}
	if n < 0 || n > c.size-c.off {
		c.fail(ErrTruncated)
		return nil
	}
	if c.off < c.bufOff || c.off+n > c.bufOff+int64(len(c.buf)) {
		w := max(n, window)
		w = min(w, c.size-c.off)
		if int64(cap(c.buf)) < w {
			c.buf = make([]byte, w)
		}
		c.buf = c.buf[:w]
		if _, err := c.r.ReadAt(c.buf, c.off); err != nil && err != io.EOF {
			c.buf = c.buf[:0]
			c.fail(fmt.Errorf("read: %w", err))
			return nil
		}
		c.bufOff = c.off
	}
	s := c.buf[c.off-c.bufOff : c.off-c.bufOff+n]
	c.off += n
	return s
}

func (c *cursor) u32() uint32 {
	b := c.bytes(4)
	if b == nil {
		return 0
	}
	return binary.BigEndian.Uint32(b)
}

// count reads a non-negative element count and bounds it: each element
// takes at least minBytes of the remaining file.
func (c *cursor) count(minBytes int64) int64 {
	n := int64(c.u32())
	if c.err == nil && n*minBytes > c.size-c.off {
		c.fail(fmt.Errorf("%w: count %d exceeds what the file can hold", ErrMalformed, n))
		return 0
	}
	return n
}

func pad4(n int64) int64 { return (n + 3) &^ 3 }

func (c *cursor) name() string {
	n := c.count(1)
	b := c.bytes(pad4(n))
	if b == nil {
		return ""
	}
	return string(b[:n])
}

// list reads a list header: either ABSENT (two zero words) or tag + count.
func (c *cursor) list(tag uint32, minBytes int64) int64 {
	t := c.u32()
	if c.err != nil {
		return 0
	}
	if t != tag && t != 0 {
		c.fail(fmt.Errorf("%w: list tag %#x, want %#x or 0", ErrMalformed, t, tag))
		return 0
	}
	n := c.count(minBytes)
	if t == 0 && n != 0 {
		c.fail(fmt.Errorf("%w: absent list with %d elements", ErrMalformed, n))
	}
	return n
}

func (c *cursor) attrs() []Attr {
	n := c.list(tagAttribute, 12)
	var as []Attr
	for i := int64(0); i < n && c.err == nil; i++ {
		a := Attr{Name: c.name(), Type: Type(c.u32())}
		sz := a.Type.Size()
		if c.err == nil && sz == 0 {
			c.fail(fmt.Errorf("%w: attribute %s has type %d", ErrMalformed, ingest.Quote(a.Name), uint32(a.Type)))
		}
		k := c.count(max(sz, 1))
		raw := c.bytes(pad4(k * sz))
		if raw == nil {
			break
		}
		raw = raw[:k*sz]
		if a.Type == Char {
			end := len(raw)
			for end > 0 && raw[end-1] == 0 {
				end--
			}
			a.Text = string(raw[:end])
		} else {
			a.Values = make([]float64, k)
			decode(a.Values, raw, a.Type)
		}
		as = append(as, a)
	}
	return as
}

// decode converts big-endian values of type t in raw into dst.
func decode(dst []float64, raw []byte, t Type) {
	be := binary.BigEndian
	switch t {
	case Byte, Char:
		for i := range dst {
			dst[i] = float64(int8(raw[i]))
		}
	case Short:
		for i := range dst {
			dst[i] = float64(int16(be.Uint16(raw[2*i:])))
		}
	case Int:
		for i := range dst {
			dst[i] = float64(int32(be.Uint32(raw[4*i:])))
		}
	case Float:
		for i := range dst {
			dst[i] = float64(math.Float32frombits(be.Uint32(raw[4*i:])))
		}
	case Double:
		for i := range dst {
			dst[i] = math.Float64frombits(be.Uint64(raw[8*i:]))
		}
	}
}

// Open decodes the header of the netCDF classic file held by r, whose size
// in bytes is size. Every count, length and offset in the header is
// checked against size before use. Errors are *FormatError values wrapping
// ErrNotClassic, ErrTruncated, ErrMalformed or ErrUnsupported.
//
// A numrecs of 0xFFFFFFFF ("streaming", a file still being written) is
// replaced by the number of whole records the file holds.
func Open(r io.ReaderAt, size int64) (*File, error) {
	c := &cursor{r: r, size: size}
	magic := c.bytes(4)
	if magic == nil || !Sniff(magic) {
		return nil, &FormatError{Offset: 0, Err: ErrNotClassic}
	}
	f := &File{Version: magic[3], r: r, size: size}
	nrecOff := c.off
	nrec := c.u32()

	nd := c.list(tagDimension, 8)
	recDim := -1
	for i := int64(0); i < nd && c.err == nil; i++ {
		d := Dim{Name: c.name(), Len: int64(c.u32())}
		if d.Len == 0 && c.err == nil {
			if recDim >= 0 {
				c.fail(fmt.Errorf("%w: more than one record dimension", ErrMalformed))
			}
			d.Unlimited, recDim = true, int(i)
		}
		f.Dims = append(f.Dims, d)
	}
	f.Attrs = c.attrs()
	nv := c.list(tagVariable, 24)
	for i := int64(0); i < nv && c.err == nil; i++ {
		f.Vars = append(f.Vars, c.variable(f, recDim))
	}
	if c.err != nil {
		return nil, c.err
	}
	if err := f.layout(nrec, nrecOff); err != nil {
		return nil, err
	}
	return f, nil
}

func (c *cursor) variable(f *File, recDim int) Var {
	v := Var{Name: c.name()}
	n := c.count(4)
	for j := int64(0); j < n && c.err == nil; j++ {
		id := c.u32()
		if int64(id) >= int64(len(f.Dims)) {
			c.fail(fmt.Errorf("%w: variable %s uses dimension %d of %d", ErrMalformed, ingest.Quote(v.Name), id, len(f.Dims)))
			break
		}
		if int(id) == recDim && j != 0 {
			c.fail(fmt.Errorf("%w: variable %s has the record dimension in position %d", ErrMalformed, ingest.Quote(v.Name), j))
		}
		v.Dims = append(v.Dims, int(id))
	}
	v.Attrs = c.attrs()
	v.Type = Type(c.u32())
	if c.err == nil && v.Type.Size() == 0 {
		c.fail(fmt.Errorf("%w: variable %s has type %d", ErrMalformed, ingest.Quote(v.Name), uint32(v.Type)))
	}
	c.u32() // vsize: recomputed from the dimensions, as it may be clipped for large variables
	if f.Version == 2 {
		hi, lo := c.u32(), c.u32()
		v.Begin = int64(hi)<<32 | int64(lo)
	} else {
		v.Begin = int64(c.u32())
	}
	if c.err == nil && (v.Begin < c.off || v.Begin < 0) {
		c.fail(fmt.Errorf("%w: variable %s begins at %d, inside the header", ErrMalformed, ingest.Quote(v.Name), v.Begin))
	}
	v.Record = len(v.Dims) > 0 && v.Dims[0] == recDim
	return v
}

// layout computes value counts and the record size, resolves a streaming
// numrecs and checks that all declared data lie inside the file.
func (f *File) layout(nrec uint32, nrecOff int64) error {
	bad := func(off int64, err error) error { return &FormatError{Offset: off, Err: err} }
	var nRecVars int
	var recBegin int64 = -1
	for i := range f.Vars {
		v := &f.Vars[i]
		v.slab = 1
		for j, d := range v.Dims {
			if v.Record && j == 0 {
				continue
			}
			l := f.Dims[d].Len
			if l != 0 && v.slab > f.size/l {
				return bad(v.Begin, fmt.Errorf("%w: variable %s is larger than the file", ErrTruncated, ingest.Quote(v.Name)))
			}
			v.slab *= l
		}
		if v.Record {
			nRecVars++
			if recBegin < 0 || v.Begin < recBegin {
				recBegin = v.Begin
			}
			f.recSize += pad4(v.slab * v.Type.Size())
		} else if end := v.Begin + v.slab*v.Type.Size(); v.slab*v.Type.Size() > f.size-v.Begin {
			return bad(v.Begin, fmt.Errorf("%w: variable %s ends at %d, file size %d", ErrTruncated, ingest.Quote(v.Name), end, f.size))
		}
	}
	if nRecVars == 1 {
		// A lone record variable is stored without padding between records.
		for i := range f.Vars {
			if f.Vars[i].Record {
				f.recSize = f.Vars[i].slab * f.Vars[i].Type.Size()
			}
		}
	}
	switch {
	case nrec == streaming && f.recSize > 0:
		f.NumRecs = max(0, (f.size-recBegin)/f.recSize)
	case nrec == streaming:
		f.NumRecs = 0
	default:
		f.NumRecs = int64(nrec)
	}
	for i := range f.Dims {
		if f.Dims[i].Unlimited {
			f.Dims[i].Len = f.NumRecs
		}
	}
	if nRecVars == 0 || f.NumRecs == 0 {
		return nil
	}
	for i := range f.Vars {
		v := &f.Vars[i]
		if !v.Record {
			continue
		}
		if f.recSize != 0 && f.NumRecs-1 > (f.size-v.Begin)/f.recSize {
			return bad(nrecOff, fmt.Errorf("%w: %d records of %d bytes do not fit in %d bytes", ErrTruncated, f.NumRecs, f.recSize, f.size))
		}
		last := v.Begin + (f.NumRecs-1)*f.recSize
		if v.slab*v.Type.Size() > f.size-last {
			return bad(nrecOff, fmt.Errorf("%w: record variable %s runs past the end of the file", ErrTruncated, ingest.Quote(v.Name)))
		}
	}
	return nil
}

// Float64s reads all values of v, converted to float64, in row-major
// order (records first for a record variable). Char variables are returned
// as their byte values. No fill or missing values are interpreted: that is
// the caller's choice (see the variable's _FillValue and missing_value
// attributes).
func (f *File) Float64s(v *Var) ([]float64, error) {
	sz := v.Type.Size()
	if sz == 0 {
		return nil, fmt.Errorf("variable %s: %w: type %d", ingest.Quote(v.Name), ErrMalformed, uint32(v.Type))
	}
	out := make([]float64, v.Len(f))
	if !v.Record {
		raw := make([]byte, v.slab*sz)
		if _, err := f.r.ReadAt(raw, v.Begin); err != nil && !(err == io.EOF && len(raw) == 0) {
			return nil, &FormatError{Offset: v.Begin, Err: fmt.Errorf("read variable %s: %w", ingest.Quote(v.Name), err)}
		}
		decode(out, raw, v.Type)
		return out, nil
	}
	// Read whole records in chunks of about one window and pick out v's
	// slab from each.
	if f.NumRecs == 0 {
		return out, nil
	}
	per := max(1, window/max(f.recSize, 1))
	slabBytes := v.slab * sz
	// The buffer never exceeds one window or one slab, both within the
	// file size checked by Open.
	buf := make([]byte, (min(per, f.NumRecs)-1)*f.recSize+slabBytes)
	for r0 := int64(0); r0 < f.NumRecs; r0 += per {
		n := min(per, f.NumRecs-r0)
		start := v.Begin + r0*f.recSize
		span := (n-1)*f.recSize + slabBytes
		chunk := buf[:span]
		if _, err := f.r.ReadAt(chunk, start); err != nil && !(err == io.EOF) {
			return nil, &FormatError{Offset: start, Err: fmt.Errorf("read variable %s: %w", ingest.Quote(v.Name), err)}
		}
		for k := int64(0); k < n; k++ {
			i := (r0 + k) * v.slab
			decode(out[i:i+v.slab], chunk[k*f.recSize:k*f.recSize+slabBytes], v.Type)
		}
	}
	return out, nil
}
