package input

import (
	"encoding/binary"
	"errors"
	"hash/crc32"
	"math/bits"
	"sync"
)

// ErrGunzip is the error of Gunzip for input it does not decode: damaged
// or malformed gzip data, a member over the limit, or output that does not
// fit the room given. Gunzip says no more; a caller that wants to know why
// reads the data through Each, whose decoder reports it.
var ErrGunzip = errors.New("gunzip: not decoded")

// Gunzip decodes src, a whole gzip file (RFC 1952: one or more members,
// each a deflate stream, RFC 1951, with its CRC-32 and size checked), into
// dst[len(dst):cap(dst)] and returns dst extended by the decoded bytes. It
// fails with ErrGunzip when the output would pass cap(dst) or limit bytes,
// and for anything Each's gzip reader would refuse; it may also refuse
// some unusual but valid files (it is stricter, never laxer). Each member's
// CRC-32 and size are checked, so output it returns is what the file
// holds.
//
// It exists because decoding a file held whole in memory into the memory
// that will hold its text needs neither the sliding window of a stream
// decoder nor the copies out of it: a back-reference is copied from the
// output itself.
func Gunzip(dst, src []byte, limit int64) ([]byte, error) {
	start := len(dst)
	if len(src) == 0 {
		return dst, ErrGunzip
	}
	for len(src) > 0 {
		body, err := gzipHeader(src)
		if err != nil {
			return dst, err
		}
		from := len(dst)
		var used int
		dst, used, err = inflate(dst, src[body:])
		if err != nil {
			return dst, err
		}
		rest := src[body+used:]
		if len(rest) < 8 {
			return dst, ErrGunzip
		}
		out := dst[from:]
		if binary.LittleEndian.Uint32(rest[0:4]) != crc32.ChecksumIEEE(out) || binary.LittleEndian.Uint32(rest[4:8]) != uint32(len(out)) {
			return dst, ErrGunzip
		}
		if int64(len(dst)-start) > limit {
			return dst, ErrGunzip
		}
		src = rest[8:]
	}
	return dst, nil
}

// Flags of a gzip member header (RFC 1952 §2.3.1).
const (
	gzFHCRC    = 1 << 1
	gzFEXTRA   = 1 << 2
	gzFNAME    = 1 << 3
	gzFCOMMENT = 1 << 4
)

// gzipHeader checks the header of the gzip member at the start of src and
// returns its length. The name and the comment must end within 512 bytes,
// as Each's reader requires.
func gzipHeader(src []byte) (int, error) {
	if len(src) < 10 || src[0] != 0x1f || src[1] != 0x8b || src[2] != 8 || src[3]>>5 != 0 {
		return 0, ErrGunzip
	}
	flg := src[3]
	n := 10
	if flg&gzFEXTRA != 0 {
		if len(src) < n+2 {
			return 0, ErrGunzip
		}
		n += 2 + int(binary.LittleEndian.Uint16(src[n:]))
	}
	for _, f := range []byte{gzFNAME, gzFCOMMENT} {
		if flg&f == 0 {
			continue
		}
		k := 0
		for ; k < 512 && n+k < len(src) && src[n+k] != 0; k++ {
		}
		if k == 512 || n+k >= len(src) {
			return 0, ErrGunzip
		}
		n += k + 1
	}
	if flg&gzFHCRC != 0 {
		if len(src) < n+2 || binary.LittleEndian.Uint16(src[n:]) != uint16(crc32.ChecksumIEEE(src[:n])) {
			return 0, ErrGunzip
		}
		n += 2
	}
	if n > len(src) {
		return 0, ErrGunzip
	}
	return n, nil
}

// A decoding table entry (uint32): the low 4 bits are the code's length
// in bits (for a link, the bits indexing its subtable), bit 4 marks a
// link to a subtable, and the top 16 bits are the value: the symbol, a
// literal byte, a length or distance base (then bits 8-11 are the number
// of extra bits), or a link's subtable offset. Bits 5-7 mark a length,
// the end of the block, and no code (a bit pattern the code does not
// use, or a symbol that is not allowed).
const (
	entryLink = 1 << 4
	entryLen  = 1 << 5
	entryEnd  = 1 << 6
	entryBad  = 1 << 7
	litBits   = 10 // bits indexing a literal/length table's first level
	distBits  = 8  // and a distance table's
)

// The values of the literal/length symbols, of the distance symbols and
// of plain symbols (the code length code) in table entries.
var litVals, distVals, symVals = func() (l [288]uint32, d [32]uint32, c [19]uint32) {
	for s := range l {
		switch {
		case s < 256:
			l[s] = uint32(s) << 16
		case s == 256:
			l[s] = entryEnd
		case s <= 285:
			l[s] = uint32(lenBase[s-257])<<16 | uint32(lenExtra[s-257])<<8 | entryLen
		default:
			l[s] = entryBad
		}
	}
	for s := range d {
		if s < 30 {
			d[s] = uint32(distBase[s])<<16 | uint32(distExtra[s])<<8
		} else {
			d[s] = entryBad
		}
	}
	for s := range c {
		c[s] = uint32(s) << 16
	}
	return
}()

// huffTable decodes one canonical Huffman code (RFC 1951 §3.2.2).
type huffTable struct {
	t    []uint32
	bits uint // first-level index bits
}

// build makes the table of the code with the given lengths per symbol.
// Like Each's decoder it accepts a complete code, a single code of one
// bit and an empty code (which fails when used), and refuses the rest.
func (h *huffTable) build(lengths []uint8, first uint, vals []uint32) bool {
	if len(lengths) > len(vals) {
		return false
	}
	var count [16]int
	maxLen := 0
	for _, l := range lengths {
		count[l]++
		if int(l) > maxLen {
			maxLen = int(l)
		}
	}
	count[0] = 0
	h.bits = first
	size := 1 << first
	if cap(h.t) < size {
		h.t = make([]uint32, size, size*4)
	}
	h.t = h.t[:size]
	for i := range h.t {
		h.t[i] = entryBad
	}
	if maxLen == 0 {
		return true
	}
	var next [17]int
	code := 0
	for l := 1; l <= 15; l++ {
		code = (code + count[l-1]) << 1
		next[l] = code
	}
	// Kraft sum: complete, or the single one-bit code.
	left := 1
	for l := 1; l <= 15; l++ {
		left = left<<1 - count[l]
		if left < 0 {
			return false
		}
	}
	if left != 0 && !(maxLen == 1 && count[1] == 1) {
		return false
	}
	// Subtable sizes: for each first-level index of a long code, the
	// bits beyond it of the longest code sharing it.
	var subLen [1 << litBits]uint8
	var codes [320]uint16
	if len(lengths) > len(codes) || first > litBits {
		return false
	}
	nx := next
	for s, l := range lengths {
		if l == 0 {
			continue
		}
		c := int(bits.Reverse16(uint16(nx[l]))) >> (16 - l)
		nx[l]++
		codes[s] = uint16(c)
		if int(l) > int(first) {
			p := c & (size - 1)
			subLen[p] = max(subLen[p], l-uint8(first))
		}
	}
	if maxLen > int(first) {
		for p := 0; p < size; p++ {
			sb := subLen[p]
			if sb == 0 {
				continue
			}
			off := len(h.t)
			if off > 0xffff {
				return false
			}
			for range 1 << sb {
				h.t = append(h.t, entryBad)
			}
			h.t[p] = uint32(off)<<16 | entryLink | uint32(sb)
		}
	}
	for s, l := range lengths {
		if l == 0 {
			continue
		}
		c := int(codes[s])
		if int(l) <= int(first) {
			for i := c; i < size; i += 1 << l {
				h.t[i] = vals[s] | uint32(l)
			}
			continue
		}
		link := h.t[c&(size-1)]
		off, sb := int(link>>16), uint(link&15)
		sl := uint(l) - first
		for i := c >> first; i < 1<<sb; i += 1 << sl {
			h.t[off+i] = vals[s] | uint32(sl)
		}
	}
	return true
}

// Length and distance bases and extra bits (RFC 1951 §3.2.5).
var (
	lenBase   = [29]uint16{3, 4, 5, 6, 7, 8, 9, 10, 11, 13, 15, 17, 19, 23, 27, 31, 35, 43, 51, 59, 67, 83, 99, 115, 131, 163, 195, 227, 258}
	lenExtra  = [29]uint8{0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0}
	distBase  = [30]uint16{1, 2, 3, 4, 5, 7, 9, 13, 17, 25, 33, 49, 65, 97, 129, 193, 257, 385, 513, 769, 1025, 1537, 2049, 3073, 4097, 6145, 8193, 12289, 16385, 24577}
	distExtra = [30]uint8{0, 0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 7, 7, 8, 8, 9, 9, 10, 10, 11, 11, 12, 12, 13, 13}
	// The order of the code length code lengths (RFC 1951 §3.2.7).
	clOrder = [19]uint8{16, 17, 18, 0, 8, 7, 9, 6, 10, 5, 11, 4, 12, 3, 13, 2, 14, 1, 15}
)

// fixedTables are the codes of block type 1 (RFC 1951 §3.2.6).
var fixedTables = sync.OnceValue(func() [2]*huffTable {
	var l [288]uint8
	for i := range l {
		switch {
		case i < 144:
			l[i] = 8
		case i < 256:
			l[i] = 9
		case i < 280:
			l[i] = 7
		default:
			l[i] = 8
		}
	}
	var d [32]uint8 // 30 and 31 complete the code and are refused when read
	for i := range d {
		d[i] = 5
	}
	lt, dt := &huffTable{}, &huffTable{}
	if !lt.build(l[:], litBits, litVals[:]) || !dt.build(d[:], distBits, distVals[:]) {
		panic("gunzip: fixed codes")
	}
	return [2]*huffTable{lt, dt}
})

// bitReader reads src from its least significant bits (RFC 1951 §3.1.1).
// Past the end it reads zeros, counted in over, so that a refill never
// checks for the end; a stream that needs them is refused.
type bitReader struct {
	src  []byte
	pos  int    // next byte of src to load
	buf  uint64 // bits not yet used, the next in bit 0
	n    uint   // bits in buf
	over int    // zero bytes loaded past the end
}

// refill loads whole bytes into buf until it holds at least 56 bits.
func (br *bitReader) refill() {
	if br.pos+8 <= len(br.src) {
		br.buf |= binary.LittleEndian.Uint64(br.src[br.pos:]) << br.n
		br.pos += int(63-br.n) >> 3
		br.n |= 56
		return
	}
	for br.n <= 56 {
		if br.pos < len(br.src) {
			br.buf |= uint64(br.src[br.pos]) << br.n
			br.pos++
		} else {
			br.over++
		}
		br.n += 8
	}
}

// take returns the next k bits (k at most 32; buf must hold them).
func (br *bitReader) take(k uint) uint32 {
	v := uint32(br.buf & (1<<k - 1))
	br.buf >>= k
	br.n -= k
	return v
}

// decode reads one symbol of h (buf must hold 15 bits), or -1.
func (br *bitReader) decode(h *huffTable) int {
	e := h.t[br.buf&(1<<h.bits-1)]
	if e&entryLink != 0 {
		br.buf >>= h.bits
		br.n -= h.bits
		e = h.t[int(e>>16)+int(br.buf&(1<<(e&15)-1))]
	}
	l := uint(e & 15)
	if l == 0 || e&entryBad != 0 {
		return -1
	}
	br.buf >>= l
	br.n -= l
	return int(e >> 16)
}

// consumed is the bytes of src used so far, whole bytes of buf given back;
// false when more than src was used.
func (br *bitReader) consumed() (int, bool) {
	n := br.pos + br.over - int(br.n>>3)
	return n, n <= len(br.src)
}

// inflate decodes the deflate stream at the start of src, appending to
// dst within its capacity, and returns dst and the bytes of src used.
func inflate(dst, src []byte) ([]byte, int, error) {
	base := len(dst) // back-references stay within the member
	br := &bitReader{src: src}
	var lt, dt huffTable
	var lengths [320]uint8
	for {
		br.refill()
		final := br.take(1)
		typ := br.take(2)
		switch typ {
		case 0: // stored (§3.2.4)
			br.take(br.n & 7)
			at, ok := br.consumed()
			if !ok || at+4 > len(src) {
				return dst, 0, ErrGunzip
			}
			n := int(binary.LittleEndian.Uint16(src[at:]))
			if uint16(n) != ^binary.LittleEndian.Uint16(src[at+2:]) || at+4+n > len(src) || len(dst)+n > cap(dst) {
				return dst, 0, ErrGunzip
			}
			dst = append(dst, src[at+4:at+4+n]...)
			*br = bitReader{src: src, pos: at + 4 + n}
		case 1:
			f := fixedTables()
			var err error
			if dst, err = inflateBlock(dst, base, br, f[0], f[1]); err != nil {
				return dst, 0, err
			}
		case 2:
			if !readCodes(br, &lt, &dt, &lengths) {
				return dst, 0, ErrGunzip
			}
			var err error
			if dst, err = inflateBlock(dst, base, br, &lt, &dt); err != nil {
				return dst, 0, err
			}
		default:
			return dst, 0, ErrGunzip
		}
		if br.over > 0 {
			if _, ok := br.consumed(); !ok {
				return dst, 0, ErrGunzip
			}
		}
		if final == 1 {
			br.take(br.n & 7)
			used, ok := br.consumed()
			if !ok {
				return dst, 0, ErrGunzip
			}
			return dst, used, nil
		}
	}
}

// readCodes reads the code lengths of a dynamic block (§3.2.7) and builds
// its tables.
func readCodes(br *bitReader, lt, dt *huffTable, lengths *[320]uint8) bool {
	br.refill()
	nlit := int(br.take(5)) + 257
	ndist := int(br.take(5)) + 1
	ncl := int(br.take(4)) + 4
	if nlit > 286 || ndist > 30 {
		return false
	}
	var cl [19]uint8
	for i := range ncl {
		if br.n < 3 {
			br.refill()
		}
		cl[clOrder[i]] = uint8(br.take(3))
	}
	var ct huffTable
	if !ct.build(cl[:], 7, symVals[:]) {
		return false
	}
	all := lengths[:nlit+ndist]
	for i := 0; i < len(all); {
		br.refill()
		if br.over > 8 {
			return false
		}
		s := br.decode(&ct)
		var rep int
		var val uint8
		switch {
		case s < 0:
			return false
		case s < 16:
			all[i] = uint8(s)
			i++
			continue
		case s == 16:
			if i == 0 {
				return false
			}
			val, rep = all[i-1], 3+int(br.take(2))
		case s == 17:
			rep = 3 + int(br.take(3))
		default:
			rep = 11 + int(br.take(7))
		}
		if i+rep > len(all) {
			return false
		}
		for k := range rep {
			all[i+k] = val
		}
		i += rep
	}
	if all[256] == 0 {
		return false
	}
	return lt.build(all[:nlit], litBits, litVals[:]) && dt.build(all[nlit:], distBits, distVals[:])
}

// inflateBlock decodes the compressed data of one Huffman block with the
// tables lt and dt (of litBits and distBits), to its end-of-block code;
// the member's output starts at dst[base]. The bit reader's state is kept
// in local variables while the block is decoded (held in registers, not
// memory), and given back at the end.
func inflateBlock(dst []byte, base int, br *bitReader, lt, dt *huffTable) ([]byte, error) {
	o := len(dst)
	out := dst[:cap(dst)]
	src, pos, buf, n, over := br.src, br.pos, br.buf, br.n, br.over
	ltab, dtab := lt.t, dt.t
	err := ErrGunzip
	for {
		if n < 48 {
			if pos+8 <= len(src) {
				buf |= binary.LittleEndian.Uint64(src[pos:]) << (n & 63)
				pos += int(63-n) >> 3
				n |= 56
			} else {
				for n <= 56 {
					if pos < len(src) {
						buf |= uint64(src[pos]) << (n & 63)
						pos++
					} else {
						over++
					}
					n += 8
				}
				if over > 8 {
					break
				}
			}
		}
		e := ltab[buf&(1<<litBits-1)]
		if e&entryLink != 0 {
			buf >>= litBits
			n -= litBits
			e = ltab[int(e>>16)+int(buf&(1<<(e&15)-1))]
		}
		l := uint(e & 15)
		buf >>= l
		n -= l
		if e&(entryLen|entryEnd|entryBad) == 0 {
			if o >= len(out) {
				break
			}
			out[o] = byte(e >> 16)
			o++
			continue
		}
		if e&entryLen == 0 {
			if e&entryBad == 0 {
				err = nil // the end of the block
			}
			break
		}
		x := uint(e>>8) & 15
		length := int(e>>16) + int(buf&(1<<x-1))
		buf >>= x
		n -= x
		e = dtab[buf&(1<<distBits-1)]
		if e&entryLink != 0 {
			buf >>= distBits
			n -= distBits
			e = dtab[int(e>>16)+int(buf&(1<<(e&15)-1))]
		}
		l = uint(e & 15)
		buf >>= l
		n -= l
		if e&entryBad != 0 {
			break
		}
		x = uint(e>>8) & 15
		dist := int(e>>16) + int(buf&(1<<x-1))
		buf >>= x
		n -= x
		if dist > o-base || length > len(out)-o {
			break
		}
		from := o - dist
		switch {
		case dist >= 8 && length <= 16 && len(out)-o >= 16:
			// Most matches are short: two 8-byte copies, no loop (the
			// second reads bytes before o+8, written by the first or
			// before it).
			w := out[o : o+16]
			r := out[from : from+16]
			binary.LittleEndian.PutUint64(w, binary.LittleEndian.Uint64(r))
			binary.LittleEndian.PutUint64(w[8:], binary.LittleEndian.Uint64(r[8:]))
		case dist >= 8 && len(out)-o >= length+8:
			// Eight bytes at a time: each read lies wholly before the
			// write that follows it, written already.
			for k := 0; k < length; k += 8 {
				binary.LittleEndian.PutUint64(out[o+k:], binary.LittleEndian.Uint64(out[from+k:]))
			}
		case dist >= length:
			copy(out[o:o+length], out[from:from+length])
		default:
			for k := range length {
				out[o+k] = out[from+k]
			}
		}
		o += length
	}
	br.pos, br.buf, br.n, br.over = pos, buf, n, over
	return out[:o], err
}
