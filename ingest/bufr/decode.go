package bufr

import (
	"encoding/binary"
	"fmt"
	"math"
)

// Mark tells data values from the structure markers Decode puts among
// them.
type Mark uint8

const (
	// MarkValue is a data element (Desc is its Table B descriptor, or the
	// operator 2 05 YYY for characters that operator inserts).
	MarkValue Mark = iota
	// MarkIteration starts one iteration of a replication; Depth is the
	// replication's nesting depth (1 = outermost).
	MarkIteration
	// MarkOperator records a quality-information or statistics operator
	// (2 22 000 … 2 37 255) at its place in the data; Desc is the operator.
	MarkOperator
	// MarkStatistic is a value a 2 23/2 24/2 25/2 32 YYY = 255 marker
	// stands for; Desc is the element the data-present bitmap points at.
	MarkStatistic
	// MarkAssociated is the associated field (operator 2 04 YYY) that
	// precedes the element Desc; its meaning is given by the 0 31 021 value
	// after the operator. V is the field's bits as an integer, NaN when
	// all ones.
	MarkAssociated
)

// Value is one decoded item of a subset.
type Value struct {
	V     float64 // in the Table B unit; NaN when missing; code and flag tables as integers
	Desc  uint16
	Mark  Mark
	Depth uint8 // replication nesting depth at the value (0 = outside any replication)
	Str   int32 // index into Subset.Strings for character data, else −1
}

// Subset is the decoded data of one subset, in descriptor order.
type Subset struct {
	Values  []Value
	Strings []string
}

// Limits that keep a hostile message from using unbounded time or memory.
const (
	maxValues = 4 << 20 // values of all subsets of one message
	maxNest   = 64      // nested Table D sequences
	maxDepth  = 32      // nested replications
)

// decodeError carries a rejection out of the recursive interpreter.
type decodeError struct{ err error }

func (d *decoder) fail(reason error, format string, a ...any) {
	panic(decodeError{fmt.Errorf("%w: "+format, append([]any{reason}, a...)...)})
}

// Decode expands the message's descriptors and reads its data, giving
// every subset's values. It implements WMO-No. 306 Vol. I.2 FM 94:
// Table B elements, Table D sequences, fixed and delayed replication
// (0 31 000/001/002) and delayed repetition (0 31 011/012), the operators
// of Table C listed in the package documentation, and compression
// (Regulation 94.6.3).
func (m *Message) Decode() ([]Subset, error) {
	var dec Decoder
	return dec.Decode(m)
}

// Decoder decodes messages reusing its buffers: the subsets one Decode
// returns are valid until the next call. The zero value is ready to use.
type Decoder struct {
	d decoder
}

// Decode is Message.Decode with the decoder's buffers.
func (dec *Decoder) Decode(m *Message) (subs []Subset, err error) {
	t, err := wmoTables()
	if err != nil {
		return nil, err
	}
	d := &dec.d
	d.t, d.data, d.pos, d.end, d.nsub, d.comp = t, m.Data, 0, len(m.Data)*8, m.Subsets, m.Compressed
	d.steps, d.nvals, d.cur = 0, 0, 0
	d.maxSteps = 4*d.end + 1<<16
	if cap(d.out) < m.Subsets {
		d.out = make([]Subset, m.Subsets)
	}
	d.out = d.out[:m.Subsets]
	// Room for the values: an element takes at least one bit and
	// radiosonde elements take 10 on average; in a compressed message each
	// element's data are shared by all subsets.
	per := d.end/10 + 64
	if d.comp {
		per = d.end/(10+6) + 64
	}
	per = min(per, maxValues)
	for i := range d.out {
		if cap(d.out[i].Values) < per || d.nsub > 1 {
			d.out[i].Values = make([]Value, 0, min(per, 1<<12))
			if d.nsub == 1 {
				d.out[i].Values = make([]Value, 0, per)
			}
		}
		d.out[i].Values = d.out[i].Values[:0]
		d.out[i].Strings = d.out[i].Strings[:0]
	}
	defer func() {
		if r := recover(); r != nil {
			de, ok := r.(decodeError)
			if !ok {
				panic(r)
			}
			subs, err = nil, de.err
		}
	}()
	if d.comp {
		d.reset()
		d.run(m.Descriptors)
	} else {
		for s := range d.out {
			d.cur = s
			d.reset()
			d.run(m.Descriptors)
		}
	}
	return d.out, nil
}

type decoder struct {
	t        *tables
	data     []byte
	pos, end int // bit positions in data
	nsub     int
	comp     bool
	out      []Subset
	cur      int // subset being read (uncompressed)
	steps    int
	maxSteps int
	nvals    int

	nest, depth int

	// Table C operator state (reset for each subset)
	dw, ds     int              // 2 01, 2 02: YYY − 128
	inc        int              // 2 07 YYY
	cw         int              // 2 08: character width in bits, 0 = Table B's
	refBits    int              // 2 03 YYY while new reference values are being defined
	newRef     map[uint16]int64 // reference values set by 2 03
	assoc      []int            // 2 04 widths, innermost last
	assocBits  int
	skipLocal  int // 2 06 YYY for the next descriptor
	notPresent int // 2 21 YYY descriptors left

	// data-present bitmaps (2 22–2 37)
	elems      []int32 // index in the first subset's Values of each data element
	elemBase   int     // 2 35 000 cancels references before this element
	frozen     bool    // a quality operator was seen: later elements are not referred to
	collecting bool    // a 2 2x 000 was seen and its bitmap is being read
	bmOp       int     // len(elems) at the operator
	bm         []bool  // bits read (true = data present, bit value 0)
	defineNext bool    // 2 36 000 seen: the next bitmap is kept for reuse
	defined    []int32
	present    []int32 // elements the current bitmap marks present
	next       int
}

func (d *decoder) reset() {
	d.dw, d.ds, d.inc, d.cw, d.refBits = 0, 0, 0, 0, 0
	d.newRef = nil
	d.assoc, d.assocBits = d.assoc[:0], 0
	d.skipLocal, d.notPresent = 0, 0
	d.elems, d.elemBase, d.frozen = d.elems[:0], 0, false
	d.collecting, d.bm, d.defineNext = false, d.bm[:0], false
	d.defined, d.present, d.next = nil, d.present[:0], 0
	d.nest, d.depth = 0, 0
}

// bits reads n ≤ 64 bits, most significant first.
func (d *decoder) bits(n int) uint64 {
	if n == 0 {
		return 0
	}
	if d.pos+n > d.end {
		d.fail(ErrTruncated, "data section ends at bit %d, %d more bits needed at bit %d", d.end, n, d.pos)
	}
	i, off := d.pos>>3, uint(d.pos&7)
	d.pos += n
	if n <= 56 && i+8 <= len(d.data) {
		x := binary.BigEndian.Uint64(d.data[i:])
		return (x << off) >> (64 - uint(n))
	}
	var v uint64
	p := d.pos - n
	for k := 0; k < n; k++ {
		b := d.data[(p+k)>>3] >> (7 - uint((p+k)&7)) & 1
		v = v<<1 | uint64(b)
	}
	return v
}

// text reads n bits of CCITT IA5 characters (n a multiple of 8, else the
// remaining bits are skipped); all-ones octets mean missing.
func (d *decoder) text(n int) (string, bool) {
	if d.pos+n > d.end {
		d.fail(ErrTruncated, "data section ends at bit %d, %d more bits needed at bit %d", d.end, n, d.pos)
	}
	k := n / 8
	buf := make([]byte, k)
	missing := true
	for j := range buf {
		buf[j] = byte(d.bits(8))
		if buf[j] != 0xff {
			missing = false
		}
	}
	d.bits(n - 8*k)
	if missing && k > 0 {
		return "", false
	}
	e := len(buf)
	for e > 0 && (buf[e-1] == ' ' || buf[e-1] == 0) {
		e--
	}
	return string(buf[:e]), true
}

var pow10 = func() (p [64]float64) {
	for i := range p {
		p[i] = math.Pow10(i)
	}
	return
}()

func scaled(x int64, scale int) float64 {
	switch {
	case scale == 0:
		return float64(x)
	case scale > 0 && scale < 64:
		return float64(x) / pow10[scale]
	case scale < 0 && scale > -64:
		return float64(x) * pow10[-scale]
	}
	return float64(x) * math.Pow10(-scale)
}

// emit appends a value to subset s.
func (d *decoder) emit(s int, v Value) {
	d.nvals++
	if d.nvals > maxValues {
		d.fail(ErrTooComplex, "more than %d values", maxValues)
	}
	v.Depth = uint8(d.depth)
	vs := &d.out[s].Values
	*vs = append(*vs, v)
}

// subsets gives the range of subsets one element's data fills.
func (d *decoder) subsets() (first, n int) {
	if d.comp {
		return 0, d.nsub
	}
	return d.cur, 1
}

func (d *decoder) run(ds []uint16) {
	for i := 0; i < len(ds); i++ {
		desc := ds[i]
		d.steps++
		if d.steps > d.maxSteps {
			d.fail(ErrTooComplex, "more than %d descriptor steps", d.maxSteps)
		}
		switch desc >> 14 {
		case 0:
			d.element(desc)
		case 1:
			x, y := int(desc>>8&63), int(desc&255)
			count, repeat := y, false
			if y == 0 {
				if i+1 >= len(ds) {
					d.fail(ErrBadSection, "delayed replication %s without its factor", DescriptorString(desc))
				}
				f := ds[i+1]
				switch f {
				case FXY(0, 31, 0), FXY(0, 31, 1), FXY(0, 31, 2):
				case FXY(0, 31, 11), FXY(0, 31, 12):
					repeat = true
				default:
					d.fail(ErrBadSection, "delayed replication %s followed by %s, not a replication factor", DescriptorString(desc), DescriptorString(f))
				}
				i++
				count = d.count(f)
			}
			if i+1+x > len(ds) {
				d.fail(ErrBadSection, "replication %s of %d descriptors, %d follow", DescriptorString(desc), x, len(ds)-i-1)
			}
			group := ds[i+1 : i+1+x]
			i += x
			d.replicate(group, count, repeat)
		case 2:
			d.operator(desc)
		case 3:
			seq := d.t.d[desc&0x3fff]
			if seq == nil {
				if isLocal(desc) {
					d.fail(ErrUnknownDesc, "local sequence %s: no local Table D", DescriptorString(desc))
				}
				d.fail(ErrUnknownDesc, "sequence %s not in Table D version %s", DescriptorString(desc), TableVersion())
			}
			d.nest++
			if d.nest > maxNest {
				d.fail(ErrTooComplex, "sequences nested deeper than %d", maxNest)
			}
			d.run(seq)
			d.nest--
		}
	}
}

func (d *decoder) replicate(group []uint16, count int, repeat bool) {
	d.depth++
	if d.depth > maxDepth {
		d.fail(ErrTooComplex, "replications nested deeper than %d", maxDepth)
	}
	first, n := d.subsets()
	if !repeat {
		for k := 0; k < count; k++ {
			for s := first; s < first+n; s++ {
				d.emit(s, Value{Mark: MarkIteration, Str: -1})
			}
			d.run(group)
		}
		d.depth--
		return
	}
	// Delayed repetition: the group's data are present once and stand for
	// count iterations.
	start := make([]int, n)
	for s := range n {
		start[s] = len(d.out[first+s].Values)
		d.emit(first+s, Value{Mark: MarkIteration, Str: -1})
	}
	d.run(group)
	for s := range n {
		vs := d.out[first+s].Values
		one := vs[start[s]:]
		if count == 0 {
			d.out[first+s].Values = vs[:start[s]]
			continue
		}
		for k := 1; k < count; k++ {
			d.nvals += len(one)
			if d.nvals > maxValues {
				d.fail(ErrTooComplex, "more than %d values", maxValues)
			}
			vs = append(vs, one...)
		}
		d.out[first+s].Values = vs
	}
	d.depth--
}

// count reads a delayed replication factor; compressed messages must give
// every subset the same factor.
func (d *decoder) count(f uint16) int {
	first, n := d.subsets()
	before := len(d.out[first].Values)
	d.element(f)
	if len(d.out[first].Values) == before {
		d.fail(ErrBadOperator, "replication factor %s gives no value (inside a 2 03 definition or after 2 21)", DescriptorString(f))
	}
	c := -1.0
	for s := first; s < first+n; s++ {
		vs := d.out[s].Values
		v := vs[len(vs)-1].V
		if math.IsNaN(v) {
			d.fail(ErrBadData, "replication factor %s is missing", DescriptorString(f))
		}
		if c >= 0 && v != c {
			d.fail(ErrBadData, "replication factor differs between compressed subsets (%v, %v)", c, v)
		}
		c = v
	}
	return int(c)
}

func (d *decoder) element(desc uint16) {
	e := &d.t.b[desc&0x3fff]
	first, n := d.subsets()
	if !e.known {
		if d.skipLocal > 0 {
			w := d.skipLocal
			d.skipLocal = 0
			d.read(w, 0, 0, false, desc, MarkValue, true)
			return
		}
		if isLocal(desc) {
			d.fail(ErrUnknownDesc, "local descriptor %s without a 2 06 width: no local Table B", DescriptorString(desc))
		}
		d.fail(ErrUnknownDesc, "element %s not in Table B version %s", DescriptorString(desc), TableVersion())
	}
	d.skipLocal = 0
	x := int(desc >> 8 & 63)
	if d.notPresent > 0 {
		d.notPresent--
		if !(x >= 1 && x <= 9 || x == 31) {
			for s := first; s < first+n; s++ {
				d.emit(s, Value{V: math.NaN(), Desc: desc, Str: -1})
			}
			return
		}
	}
	if d.assocBits > 0 && x != 31 {
		d.read(d.assocBits, 0, 0, true, desc, MarkAssociated, false)
	}
	if e.kind == characters {
		w := e.Width
		if d.cw > 0 {
			w = d.cw
		}
		d.chars(w, desc)
		d.note(desc, first)
		return
	}
	w, scale, ref := e.Width, e.Scale, e.Reference
	if e.kind == numeric {
		w += d.dw
		scale += d.ds
		if d.inc > 0 {
			scale += d.inc
			ref *= int64(pow10[d.inc])
			w += (10*d.inc + 2) / 3
		}
	}
	if d.newRef != nil {
		if r, ok := d.newRef[desc]; ok {
			ref = r
		}
	}
	if w <= 0 || w > 64 {
		d.fail(ErrBadOperator, "element %s has width %d bits after operators", DescriptorString(desc), w)
	}
	if d.refBits > 0 {
		// 2 03 YYY: this descriptor's new reference value, YYY bits, the
		// leftmost bit the sign (Table C).
		raw := d.bits(d.refBits)
		if d.comp {
			d.bits(6) // NBINC, 0 for a value common to all subsets
		}
		sign := uint64(1) << (d.refBits - 1)
		r := int64(raw &^ sign)
		if raw&sign != 0 {
			r = -r
		}
		if d.newRef == nil {
			d.newRef = map[uint16]int64{}
		}
		d.newRef[desc] = r
		return
	}
	d.read(w, scale, ref, true, desc, MarkValue, false)
	d.note(desc, first)
}

// note records a data element for back references of bitmaps.
func (d *decoder) note(desc uint16, first int) {
	if d.collecting {
		if desc == FXY(0, 31, 31) {
			vs := d.out[first].Values
			d.bm = append(d.bm, vs[len(vs)-1].V == 0)
			return
		}
		if len(d.bm) > 0 {
			d.endBitmap()
		}
	}
	if !d.frozen {
		d.elems = append(d.elems, int32(len(d.out[first].Values)-1))
	}
}

// read reads one numeric element of w bits (compressed: R0, NBINC and the
// increments) and emits it to every subset it covers, unless discard.
func (d *decoder) read(w, scale int, ref int64, missingOK bool, desc uint16, mark Mark, discard bool) {
	ones := uint64(1)<<w - 1
	if w == 64 {
		ones = math.MaxUint64
	}
	if !d.comp {
		raw := d.bits(w)
		if !discard {
			v := math.NaN()
			if !missingOK || w == 1 || raw != ones {
				v = scaled(int64(raw)+ref, scale)
			}
			d.emit(d.cur, Value{V: v, Desc: desc, Mark: mark, Str: -1})
		}
		return
	}
	r0 := d.bits(w)
	nb := int(d.bits(6))
	if nb > 64 {
		d.fail(ErrBadData, "increment width %d bits", nb)
	}
	if nb == 0 {
		v := math.NaN()
		if !missingOK || w == 1 || r0 != ones {
			v = scaled(int64(r0)+ref, scale)
		}
		for s := range d.nsub {
			if !discard {
				d.emit(s, Value{V: v, Desc: desc, Mark: mark, Str: -1})
			}
		}
		return
	}
	incOnes := uint64(1)<<nb - 1
	if nb == 64 {
		incOnes = math.MaxUint64
	}
	for s := range d.nsub {
		inc := d.bits(nb)
		if discard {
			continue
		}
		v := math.NaN()
		if inc != incOnes || !missingOK {
			v = scaled(int64(r0+inc)+ref, scale)
		}
		d.emit(s, Value{V: v, Desc: desc, Mark: mark, Str: -1})
	}
}

// chars reads a character element of w bits (compressed: R0, NBINC in
// octets and each subset's string).
func (d *decoder) chars(w int, desc uint16) {
	put := func(s int, str string, ok bool) {
		v := Value{V: math.NaN(), Desc: desc, Str: -1}
		if ok {
			v.V = 0
			v.Str = int32(len(d.out[s].Strings))
			d.out[s].Strings = append(d.out[s].Strings, str)
		}
		d.emit(s, v)
	}
	if !d.comp {
		str, ok := d.text(w)
		put(d.cur, str, ok)
		return
	}
	str, ok := d.text(w)
	nb := int(d.bits(6))
	for s := range d.nsub {
		if nb == 0 {
			put(s, str, ok)
			continue
		}
		si, oki := d.text(nb * 8)
		put(s, si, oki)
	}
}

func (d *decoder) operator(desc uint16) {
	x, y := int(desc>>8&63), int(desc&255)
	first, n := d.subsets()
	switch x {
	case 1:
		d.dw = 0
		if y != 0 {
			d.dw = y - 128
		}
	case 2:
		d.ds = 0
		if y != 0 {
			d.ds = y - 128
		}
	case 3:
		switch y {
		case 0:
			d.newRef = nil
		case 255:
			d.refBits = 0
		default:
			d.refBits = y
		}
	case 4:
		if y == 0 {
			if len(d.assoc) > 0 {
				d.assoc = d.assoc[:len(d.assoc)-1]
			}
		} else {
			d.assoc = append(d.assoc, y)
		}
		d.assocBits = 0
		for _, a := range d.assoc {
			d.assocBits += a
		}
		if d.assocBits > 64 {
			d.fail(ErrBadOperator, "associated fields of %d bits", d.assocBits)
		}
	case 5:
		d.chars(8*y, desc)
	case 6:
		d.skipLocal = y
	case 7:
		d.inc = y
		if y > 30 {
			d.fail(ErrBadOperator, "2 07 %03d increases the scale beyond the decoder's range", y)
		}
	case 8:
		d.cw = 8 * y
	case 21:
		d.notPresent = y
	case 22, 23, 24, 25, 32, 35, 36, 37:
		for s := first; s < first+n; s++ {
			d.emit(s, Value{V: math.NaN(), Desc: desc, Mark: MarkOperator, Str: -1})
		}
		d.quality(x, y)
	default:
		d.fail(ErrBadOperator, "operator %s is not supported", DescriptorString(desc))
	}
}

// quality handles the operators 2 22–2 37 (Table C; WMO-No. 306 Vol. I.2,
// Regulation 94.5.5.3 and the notes to Table C): the data-present bitmap
// that follows 2 2x 000 refers to the data elements before the operator,
// counted backwards from it, one bit each (0 = present); each later
// 2 2x 255 stands for a value of the next element the bitmap marks present.
func (d *decoder) quality(x, y int) {
	if d.collecting && len(d.bm) > 0 {
		d.endBitmap()
	}
	switch {
	case x == 35 && y == 0:
		d.elemBase, d.frozen = len(d.elems), false
		d.present, d.defined, d.next = d.present[:0], nil, 0
	case x == 36 && y == 0:
		d.defineNext = true
	case x == 37 && y == 0:
		if d.defined == nil {
			d.fail(ErrBitmap, "2 37 000 reuses a bitmap none was defined")
		}
		d.present, d.next, d.collecting = append(d.present[:0], d.defined...), 0, false
	case x == 37 && y == 255:
		d.defined = nil
	case y == 0:
		d.collecting, d.bm, d.bmOp, d.frozen = true, d.bm[:0], len(d.elems), true
		d.present, d.next = d.present[:0], 0
	case y == 255 && x != 22:
		d.statistic(x)
	default:
		d.fail(ErrBadOperator, "operator 2 %02d %03d is not defined", x, y)
	}
}

func (d *decoder) endBitmap() {
	d.collecting = false
	nb := len(d.bm)
	if nb > d.bmOp-d.elemBase {
		d.fail(ErrBitmap, "bitmap of %d bits refers back over %d data elements", nb, d.bmOp-d.elemBase)
	}
	start := d.bmOp - nb
	d.present = d.present[:0]
	for i, ok := range d.bm {
		if ok {
			d.present = append(d.present, d.elems[start+i])
		}
	}
	d.next = 0
	if d.defineNext {
		d.defined = append([]int32(nil), d.present...)
		d.defineNext = false
	}
}

// statistic reads the value a 2 23/24/25/32 255 marker stands for: it has
// the width, scale and reference of the element the bitmap points at
// (2 25: one bit wider and the reference −2^width, Table C).
func (d *decoder) statistic(x int) {
	if d.next >= len(d.present) {
		d.fail(ErrBitmap, "operator 2 %02d 255 has no data element left in the bitmap", x)
	}
	first, _ := d.subsets()
	ref := d.out[first].Values[d.present[d.next]].Desc
	d.next++
	e := &d.t.b[ref&0x3fff]
	if !e.known {
		d.fail(ErrBitmap, "bitmap points at %s, which has no Table B entry", DescriptorString(ref))
	}
	if e.kind == characters {
		d.chars(e.Width, ref)
		return
	}
	w, r := e.Width, e.Reference
	if x == 25 {
		w++
		r = -(int64(1) << e.Width)
	}
	d.read(w, e.Scale, r, true, ref, MarkStatistic, false)
}
