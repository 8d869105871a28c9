package input

import (
	"encoding/binary"
	"errors"
	"hash/crc32"
	"math/bits"
	"sync"
)

// ErrGunzip is the error of Gunzip (and Inflate) for input it does not decode: damaged
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

// Inflate decodes src, the compressed data of a zip member stored with
// the deflate method (a raw deflate stream, RFC 1951; PKWARE's APPNOTE.TXT
// §4.4.5 method 8), into dst[len(dst):cap(dst)] and returns dst extended
// by the decoded bytes. size and crc are the member's uncompressed size
// and CRC-32 (APPNOTE §4.4.7, §4.4.9, from its directory entry): output of
// another length or checksum, output that would pass cap(dst), and
// damaged or malformed data fail with ErrGunzip, as Gunzip does. Bytes
// after the stream's final block are ignored.
func Inflate(dst, src []byte, size uint64, crc uint32) ([]byte, error) {
	start := len(dst)
	if uint64(cap(dst)-start) < size {
		return dst, ErrGunzip
	}
	dst, _, err := inflate(dst, src)
	if err != nil {
		return dst, err
	}
	if out := dst[start:]; uint64(len(out)) != size || crc32.ChecksumIEEE(out) != crc {
		return dst, ErrGunzip
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

// A decoding table entry (uint32). The low 6 bits are the bits the entry
// takes from the input: the code's length, plus the extra bits of a length
// or distance (RFC 1951 §3.2.5) read with it; for a link to a subtable,
// the bits indexing the first level. Bits 8-11 are the code's own length,
// so that the extra bits following it are (bits & lowMask[total]) >>
// codeLength, or a link's subtable index bits. The top 16 bits are the
// value: a literal byte, a length (extra bits included when the index
// holds them, entryExtra clear), a length or distance base, or a link's
// subtable offset. Entries with none of the kind flags are literals.
const (
	entryLen   = 1 << 6  // a length
	entryExtra = 1 << 7  // a length base whose extra bits are still to be added
	entryBad   = 1 << 12 // no code: a bit pattern the code does not use, or a symbol not allowed
	entryLink  = 1 << 13
	entryEnd   = 1 << 14
	entryKinds = entryLen | entryExtra | entryBad | entryLink | entryEnd

	litBits  = 10 // bits indexing a literal/length table's first level
	distBits = 8  // and a distance table's
	// The room of a table for its first level and all its subtables. The
	// most a complete code can need is 1334 entries for 288 literal/length
	// symbols with a 10-bit first level and 402 for 32 distance symbols
	// with an 8-bit one (figures of zlib's examples/enough.c, from
	// memory); build refuses a code that would need more than the room.
	litTableLen  = 2048
	distTableLen = 512
	codeTableLen = 1 << 7 // the code length code: codes of at most 7 bits, no subtables
)

// lowMask[k] has the low k bits set.
var lowMask = func() (m [64]uint64) {
	for k := range m {
		m[k] = 1<<k - 1
	}
	return
}()

// The values of the literal/length symbols, of the distance symbols and
// of plain symbols (the code length code), given to build: as entries,
// with bits 8-11 holding the number of extra bits.
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

// entry is the table entry of the symbol of value v (from litVals,
// distVals or symVals) whose code has l bits at a table level indexed by
// lb bits, for the slot of index i. A length's extra bits are folded into
// its value when they lie within the index.
func entry(v uint32, l, lb, i uint) uint32 {
	if v&entryBad != 0 {
		return entryBad
	}
	x := uint(v>>8) & 15
	v &^= 15 << 8
	if v&entryLen != 0 && x > 0 {
		if l+x <= lb {
			return (v + uint32((i>>l)&(1<<x-1))<<16) | uint32(l+x)
		}
		v |= entryExtra
	}
	return v | uint32(l)<<8 | uint32(l+x)
}

// build fills t, a table of fixed room (litTableLen, distTableLen or
// codeTableLen entries), for the canonical Huffman code (RFC 1951 §3.2.2)
// with the given lengths per symbol and a first level of first bits. Like
// Each's decoder it accepts a complete code, a single code of one bit and
// an empty code (which fails when used), and refuses the rest.
func build(t []uint32, lengths []uint8, first uint, vals []uint32) bool {
	if len(lengths) > len(vals) || len(lengths) > 320 || first > litBits || len(t) < 1<<first {
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
	size := 1 << first
	for i := range t {
		t[i] = entryBad
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
	end := size
	for p := 0; p < size; p++ {
		sb := subLen[p]
		if sb == 0 {
			continue
		}
		if end+1<<sb > len(t) {
			return false
		}
		t[p] = uint32(end)<<16 | entryLink | uint32(sb)<<8 | uint32(first)
		end += 1 << sb
	}
	for s, l := range lengths {
		if l == 0 {
			continue
		}
		c := uint(codes[s])
		if int(l) <= int(first) {
			for i := c; i < uint(size); i += 1 << l {
				t[i] = entry(vals[s], uint(l), first, i)
			}
			continue
		}
		link := t[c&uint(size-1)]
		off, sb := uint(link>>16), uint(link>>8)&15
		sl := uint(l) - first
		for i := c >> first; i < 1<<sb; i += 1 << sl {
			t[off+i] = entry(vals[s], sl, sb, i)
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

// blockTables are the tables of a block's two codes, in one array (one
// pointer for the decoding loops to keep): the literal/length table, then
// the distance table at litTableLen.
type blockTables [litTableLen + distTableLen]uint32

// fixedTables are the codes of block type 1 (RFC 1951 §3.2.6).
var fixedTables = sync.OnceValue(func() *blockTables {
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
	t := new(blockTables)
	if !build(t[:litTableLen], l[:], litBits, litVals[:]) || !build(t[litTableLen:], d[:], distBits, distVals[:]) {
		panic("gunzip: fixed codes")
	}
	return t
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

// decode reads one symbol of the code length code's table t (buf must
// hold 7 bits), or -1.
func (br *bitReader) decode(t *[codeTableLen]uint32) int {
	e := t[br.buf&(codeTableLen-1)]
	if e&(entryBad|entryLink) != 0 {
		return -1
	}
	l := uint(e & 63)
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
	var tabs *blockTables
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
			var err error
			if dst, err = inflateBlock(dst, base, br, fixedTables()); err != nil {
				return dst, 0, err
			}
		case 2:
			if tabs == nil {
				tabs = new(blockTables)
			}
			if !readCodes(br, tabs, &lengths) {
				return dst, 0, ErrGunzip
			}
			var err error
			if dst, err = inflateBlock(dst, base, br, tabs); err != nil {
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
func readCodes(br *bitReader, tabs *blockTables, lengths *[320]uint8) bool {
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
	var ct [codeTableLen]uint32
	if !build(ct[:], cl[:], 7, symVals[:]) {
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
	return build(tabs[:litTableLen], all[:nlit], litBits, litVals[:]) && build(tabs[litTableLen:], all[nlit:], distBits, distVals[:])
}

// Room the fast loop of inflateBlock keeps: input for an 8-byte load,
// and output for two literals and the longest match with the overshoot of
// its 16-byte copies.
const (
	fastIn  = 8
	fastOut = 2 + 258 + 16
)

// inflateBlock decodes the compressed data of one Huffman block with the
// tables tabs, to its end-of-block code; the member's output starts at
// dst[base]. The bit reader's state is kept in local variables while the
// block is decoded (held in registers, not memory), and given back at the
// end.
//
// While fastIn bytes of input and fastOut of output remain, a fast loop
// decodes with one test of the room per turn. It keeps only the position
// bp of the next bit: each turn loads the 8 bytes holding it, at least 57
// bits, enough for a length and its distance (48 bits at most) or for two
// literals, and decodes one match, or a literal and the next symbol when
// that is a literal too. It copies matches in 16- or 8-byte words that
// may write past the match (bytes that what follows overwrites). The rest
// of the block is decoded by a careful loop that tests every step.
func inflateBlock(dst []byte, base int, br *bitReader, tabs *blockTables) ([]byte, error) {
	out := dst[base:cap(dst)]
	o := len(dst) - base
	src, pos, buf, n, over := br.src, br.pos, br.buf, br.n, br.over
	if over == 0 && pos <= len(src)-fastIn && o <= len(out)-fastOut {
		tab := tabs[:]
		bp := uint(pos)*8 - n // the bits of buf are the last n bits before pos
		for {
			i := bp >> 3
			if i+fastIn > uint(len(src)) || uint(o+fastOut) > uint(len(out)) {
				break
			}
			buf := binary.LittleEndian.Uint64(src[i:i+8]) >> (bp & 7)
			w := out[o : o+fastOut]
			e := tab[buf&(1<<litBits-1)]
			if e&entryKinds == 0 {
				buf >>= e & 63
				bp += uint(e & 63)
				w[0] = byte(e >> 16)
				o++
				if e = tab[buf&(1<<litBits-1)]; e&entryKinds != 0 {
					continue
				}
				bp += uint(e & 63) // a second literal from the same load
				w[1] = byte(e >> 16)
				o++
				continue
			}
			if e&entryLink != 0 {
				buf >>= litBits
				bp += litBits
				e = tab[(e>>16+uint32(buf&lowMask[(e>>8)&15]))&(litTableLen-1)]
				if e&entryKinds == 0 {
					bp += uint(e & 63)
					w[0] = byte(e >> 16)
					o++
					continue
				}
			}
			if e&entryLen == 0 { // the end of the block, or no code
				err := ErrGunzip
				if e&entryEnd != 0 {
					bp += uint(e & 63)
					err = nil
				}
				br.pos, br.buf, br.n = int(bp>>3), 0, 0
				if k := bp & 7; k != 0 {
					br.refill()
					br.take(k)
				}
				return dst[:base+o], err
			}
			length := int(e >> 16)
			if e&entryExtra != 0 {
				length += int((buf & lowMask[e&63]) >> ((e >> 8) & 63))
			}
			buf >>= e & 63
			bp += uint(e & 63)
			e = tab[litTableLen+buf&(1<<distBits-1)]
			if e&entryLink != 0 {
				buf >>= distBits
				bp += distBits
				e = tab[litTableLen+(e>>16+uint32(buf&lowMask[(e>>8)&15]))&(distTableLen-1)]
			}
			dist := int(e>>16) + int((buf&lowMask[e&63])>>((e>>8)&63))
			bp += uint(e & 63)
			if e&entryBad != 0 || dist > o {
				return dst[:base+o], ErrGunzip
			}
			from := o - dist
			switch {
			case length <= 16 && length <= dist:
				// One 16-byte word: the bytes of the match are read
				// before any is written.
				*(*[16]byte)(w) = *(*[16]byte)(out[from : from+16])
			case dist >= 16:
				// Each 16-byte read lies wholly before the write that
				// follows it, written already.
				for k := 0; k < length; k += 16 {
					*(*[16]byte)(out[o+k : o+k+16]) = *(*[16]byte)(out[from+k : from+k+16])
				}
			case dist >= 8:
				for k := 0; k < length; k += 8 {
					*(*[8]byte)(out[o+k : o+k+8]) = *(*[8]byte)(out[from+k : from+k+8])
				}
			default:
				for k := range length {
					out[o+k] = out[from+k]
				}
			}
			o += length
		}
		pos, buf, n = int(bp>>3), 0, 0
		if k := bp & 7; k != 0 {
			if pos >= len(src) {
				return dst[:base+o], ErrGunzip
			}
			buf, n = uint64(src[pos])>>k, 8-k
			pos++
		}
	}
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
		e := tabs[buf&(1<<litBits-1)]
		if e&entryLink != 0 {
			buf >>= litBits
			n -= litBits
			e = tabs[(e>>16+uint32(buf&lowMask[(e>>8)&15]))&(litTableLen-1)]
		}
		t := uint(e & 63)
		if e&(entryLen|entryEnd|entryBad) == 0 {
			if o >= len(out) {
				break
			}
			buf >>= t
			n -= t
			out[o] = byte(e >> 16)
			o++
			continue
		}
		if e&entryLen == 0 {
			if e&entryEnd != 0 {
				buf >>= t
				n -= t
				err = nil // the end of the block
			}
			break
		}
		length := int(e >> 16)
		if e&entryExtra != 0 {
			length += int((buf & lowMask[t]) >> ((e >> 8) & 15))
		}
		buf >>= t
		n -= t
		e = tabs[litTableLen+buf&(1<<distBits-1)]
		if e&entryLink != 0 {
			buf >>= distBits
			n -= distBits
			e = tabs[litTableLen+(e>>16+uint32(buf&lowMask[(e>>8)&15]))&(distTableLen-1)]
		}
		if e&entryBad != 0 {
			break
		}
		t = uint(e & 63)
		dist := int(e>>16) + int((buf&lowMask[t])>>((e>>8)&15))
		buf >>= t
		n -= t
		if dist > o || length > len(out)-o {
			break
		}
		from := o - dist
		if dist >= length {
			copy(out[o:o+length], out[from:from+length])
		} else {
			for k := range length {
				out[o+k] = out[from+k]
			}
		}
		o += length
	}
	br.pos, br.buf, br.n, br.over = pos, buf, n, over
	return dst[:base+o], err
}
