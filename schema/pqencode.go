package schema

import (
	"encoding/binary"
	"math"
	"math/bits"
	"unsafe"
)

// The value and level encodings of the Parquet writer (parquet.go), as
// the Parquet format defines them (apache/parquet-format, Encodings.md:
// "Run Length Encoding / Bit-Packing Hybrid (RLE = 3)", "Delta Encoding
// (DELTA_BINARY_PACKED = 5)", "Byte Stream Split (BYTE_STREAM_SPLIT =
// 9)", "Plain (PLAIN = 0)").

// packer appends values of up to 32 bits each to a byte slice, least
// significant bit first, as Parquet's bit-packing does.
type packer struct {
	b   []byte
	acc uint64
	nb  uint // bits held in acc (< 8 between calls)
}

func (p *packer) put32(v uint64, width uint) {
	p.acc |= v << p.nb
	p.nb += width
	for p.nb >= 8 {
		p.b = append(p.b, byte(p.acc))
		p.acc >>= 8
		p.nb -= 8
	}
}

// flush writes the bits still held, padded with zeros to a whole byte.
func (p *packer) flush() []byte {
	if p.nb > 0 {
		p.b = append(p.b, byte(p.acc))
	}
	p.acc, p.nb = 0, 0
	return p.b
}

// appendHybrid appends v (each value below 1<<width, none negative) in
// the RLE/bit-packing hybrid without its length prefix: a run of 8 or more
// equal values as an RLE run (header count<<1, the value in whole bytes),
// the rest in bit-packed runs of groups of 8 values (header groups<<1 | 1),
// the last group padded with zeros.
func appendHybrid[E uint32 | int32 | int16](b []byte, v []E, width uint) []byte {
	vbytes := int(width+7) / 8
	n := len(v)
	for i := 0; i < n; {
		j := runEnd(v, i)
		if j-i >= 8 {
			b = binary.AppendUvarint(b, uint64(j-i)<<1)
			for k := range vbytes {
				b = append(b, byte(uint32(v[i])>>(8*k)))
			}
			i = j
			continue
		}
		start := i
		for {
			i += 8
			if i >= n {
				i = n
				break
			}
			k := i + 1
			for k < n && k-i < 8 && v[k] == v[i] {
				k++
			}
			if k-i >= 8 {
				break
			}
		}
		groups := (i - start + 7) / 8
		b = binary.AppendUvarint(b, uint64(groups)<<1|1)
		full := start + (i-start)/8*8
		b = packGroups(b, v[start:full], width)
		if full < i {
			var last [8]E // the last group, padded with zeros
			copy(last[:], v[full:i])
			b = packGroups(b, last[:], width)
		}
	}
	return b
}

// runEnd returns the end of the run of values equal to v[i] from i: eight
// values at a time compared as the two or four machine words they fill
// (against x repeated in a word), then one at a time.
func runEnd[E uint32 | int32 | int16](v []E, i int) int {
	x, w := v[i], v[i+1:]
	k := 0
	if len(w) >= 8 {
		size := int(unsafe.Sizeof(x))
		b := unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(w))), len(w)*size)
		le := binary.LittleEndian
		if size == 2 {
			pat := uint64(uint16(x)) * 0x0001000100010001
			for ; k+8 <= len(w); k += 8 {
				g := b[2*k : 2*k+16 : 2*k+16]
				if (le.Uint64(g)^pat)|(le.Uint64(g[8:])^pat) != 0 {
					break
				}
			}
		} else {
			pat := uint64(uint32(x)) * 0x0000000100000001
			for ; k+8 <= len(w); k += 8 {
				g := b[4*k : 4*k+32 : 4*k+32]
				if (le.Uint64(g)^pat)|(le.Uint64(g[8:])^pat)|(le.Uint64(g[16:])^pat)|(le.Uint64(g[24:])^pat) != 0 {
					break
				}
			}
		}
	}
	for k < len(w) && w[k] == x {
		k++
	}
	return i + 1 + k
}

// packGroups appends v (a multiple of 8 values, each below 1<<width,
// width at most 32) bit-packed, least significant bit first: width bytes
// per group of 8 (packInto).
func packGroups[E uint32 | int32 | int16](b []byte, v []E, width uint) []byte {
	at := len(b)
	b = extend(b, at+len(v)/8*int(width))
	packInto(b[at:], v, width)
	return b
}

// packInto writes v bit-packed into out (len(v)/8·width bytes), eight
// bytes at a time. Four values of up to 15 bits (two of up to 31) are
// joined into one word first and packed as one value of four (two) times
// the width: a dictionary's indices go at some 7 instructions a value
// instead of 20. With no call in it and shift counts masked to 63 (which
// they never exceed, so that none is tested for 64 or more), the loop
// keeps its state in registers; inlined in appendHybrid and appending, it
// took some 30 instructions a value.
//
//go:noinline
func packInto[E uint32 | int32 | int16](out []byte, v []E, width uint) {
	var acc uint64
	var nb uint // bits held in acc, < 64
	p := 0
	// put adds the w bits of y (below 1<<w, w at most 62).
	put := func(y uint64, w uint) {
		acc |= y << (nb & 63)
		nb += w
		if nb >= 64 {
			binary.LittleEndian.PutUint64(out[p:], acc)
			p += 8
			nb -= 64
			acc = y >> ((w - nb) & 63) // its bits that did not fit (none when nb is 0)
		}
	}
	switch w1, w2, w3 := width&63, (2*width)&63, (3*width)&63; {
	case width <= 15:
		for i := 0; i+4 <= len(v); i += 4 {
			q := v[i : i+4 : i+4]
			put(uint64(uint32(q[0]))|uint64(uint32(q[1]))<<w1|uint64(uint32(q[2]))<<w2|uint64(uint32(q[3]))<<w3, 4*width)
		}
	case width <= 31:
		for i := 0; i+2 <= len(v); i += 2 {
			q := v[i : i+2 : i+2]
			put(uint64(uint32(q[0]))|uint64(uint32(q[1]))<<w1, 2*width)
		}
	default:
		for _, e := range v {
			put(uint64(uint32(e)), width)
		}
	}
	for ; nb > 0; nb -= 8 { // 8·width bits a group: whole bytes
		out[p] = byte(acc)
		p++
		acc >>= 8
	}
}

// appendDefLevels appends the definition levels of rows lo..hi of a
// nullable column whose validity bitmap is valid (bit set: a value,
// definition level 1; clear: null), lo a multiple of 8, in the hybrid
// encoding of bit width 1 with its 4-byte little-endian length in front,
// as data pages of version 1 store them: runs of 8 or more equal levels
// as RLE runs, the rest bit-packed, which the bitmap already is (a
// bitmap copied whole in one bit-packed run made zstd's fastest level
// compress the page behind it up to a third worse).
func appendDefLevels(b, valid []byte, lo, hi int) []byte {
	at := len(b)
	b = append(b, 0, 0, 0, 0)
	bs := valid[lo/8:]
	n := hi - lo
	bit := func(i int) byte { return bs[i/8] >> (i % 8) & 1 }
	// runEnd returns the end of the run of equal levels starting at i.
	runEnd := func(i int) int {
		v := bit(i)
		j := i + 1
		for j < n && j%8 != 0 && bit(j) == v {
			j++
		}
		if j < n && j%8 == 0 && bit(j) == v {
			full := byte(0)
			if v == 1 {
				full = 0xff
			}
			for full64 := uint64(full) * 0x0101010101010101; j+64 <= n && binary.LittleEndian.Uint64(bs[j/8:]) == full64; {
				j += 64 // 64 levels at a time
			}
			for j+8 <= n && bs[j/8] == full {
				j += 8
			}
			for j < n && bit(j) == v {
				j++
			}
		}
		return j
	}
	// group returns the 8 levels from i, zeros past n, packed.
	group := func(i int) byte {
		w := uint16(bs[i/8])
		if i/8+1 < len(bs) {
			w |= uint16(bs[i/8+1]) << 8
		}
		g := byte(w >> (i % 8))
		if r := n - i; r < 8 {
			g &= 1<<r - 1
		}
		return g
	}
	for i := 0; i < n; {
		if j := runEnd(i); j-i >= 8 {
			b = binary.AppendUvarint(b, uint64(j-i)<<1)
			b = append(b, bit(i))
			i = j
			continue
		}
		start := i
		for {
			i += 8
			if i >= n || runEnd(i)-i >= 8 {
				break
			}
		}
		i = min(i, n)
		groups := (i - start + 7) / 8
		b = binary.AppendUvarint(b, uint64(groups)<<1|1)
		for g := range groups {
			b = append(b, group(start+8*g))
		}
	}
	binary.LittleEndian.PutUint32(b[at:], uint32(len(b)-at-4))
	return b
}

// onesIn counts the set bits of rows lo..hi of a bitmap, lo a multiple of 8.
func onesIn(bitmap []byte, lo, hi int) int {
	bs := bitmap[lo/8:]
	n := 0
	full, rem := (hi-lo)/8, (hi-lo)%8
	k := 0
	for ; k+8 <= full; k += 8 {
		n += bits.OnesCount64(binary.LittleEndian.Uint64(bs[k:]))
	}
	for ; k < full; k++ {
		n += bits.OnesCount8(bs[k])
	}
	if rem > 0 {
		n += bits.OnesCount8(bs[full] & (1<<rem - 1))
	}
	return n
}

// isSet reports bit i of a bitmap.
func isSet(bitmap []byte, i int) bool { return bitmap[i/8]&(1<<(i%8)) != 0 }

// appendSplitFloats appends the values of x whose validity bit is set
// (all of them when valid is nil), x[0] being row lo, byte-stream split:
// the first bytes of all values, then the second bytes, and so on, each
// value little-endian (BYTE_STREAM_SPLIT). scratch holds the gathered
// values.
func appendSplitFloats(b []byte, x []float64, valid []byte, lo int, scratch *[]float64) []byte {
	if valid != nil {
		x = gatherValid(scratch, x, valid, lo)
	}
	at := len(b)
	b = extend(b, at+8*len(x))
	split8(b[at:], x)
	return b
}

// gatherValid returns the values of x whose validity bit is set, x[0]
// being row lo (a multiple of 8), in *scratch: whole bytes of the bitmap
// at a time where all eight rows are valid or all null.
func gatherValid[E any](scratch *[]E, x []E, valid []byte, lo int) []E {
	out := (*scratch)[:0]
	bs := valid[lo/8:]
	i := 0
	for ; i+8 <= len(x); i += 8 {
		switch m := bs[i/8]; m {
		case 0xff:
			out = append(out, x[i:i+8]...)
		case 0:
		default:
			for k := range 8 {
				if m&(1<<k) != 0 {
					out = append(out, x[i+k])
				}
			}
		}
	}
	for ; i < len(x); i++ {
		if isSet(bs, i) {
			out = append(out, x[i])
		}
	}
	*scratch = out
	return out
}

// split8 writes all of x byte-stream split into out (8·len(x) bytes):
// eight values at a time transposed (splitGroup), the rest byte by byte.
// splitGroup stores words in the machine's byte order, and runEnd reads
// them so: right on little-endian machines (amd64, arm64), as columns.go's
// Arrow buffers already assume; a big-endian build would need swaps.
func split8(out []byte, x []float64) {
	n := len(x)
	if n == 0 {
		return
	}
	out = out[:8*n]
	u := unsafe.Slice((*uint64)(unsafe.Pointer(&x[0])), n)
	i := 0
	for ; i+8 <= n; i += 8 {
		splitGroup(unsafe.Pointer(&out[i]), n, (*[8]uint64)(u[i:i+8]))
	}
	for ; i < n; i++ {
		for k := range 8 {
			out[k*n+i] = byte(u[i] >> (8 * k))
		}
	}
}

// splitGroup writes the eight values of a byte-stream split: byte k of
// a[j] at dst + k·n + j. The 8×8 bytes are transposed in registers, by
// swapping their 4×4, 2×2 and 1×1 blocks off the diagonal, so that value
// k holds the eight bytes k, each stored at once.
func splitGroup(dst unsafe.Pointer, n int, a *[8]uint64) {
	const m32, m16, m8 = 0x00000000FFFFFFFF, 0x0000FFFF0000FFFF, 0x00FF00FF00FF00FF
	a0, a1, a2, a3, a4, a5, a6, a7 := a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7]
	t := (a0>>32 ^ a4) & m32
	a0, a4 = a0^t<<32, a4^t
	t = (a1>>32 ^ a5) & m32
	a1, a5 = a1^t<<32, a5^t
	t = (a2>>32 ^ a6) & m32
	a2, a6 = a2^t<<32, a6^t
	t = (a3>>32 ^ a7) & m32
	a3, a7 = a3^t<<32, a7^t

	t = (a0>>16 ^ a2) & m16
	a0, a2 = a0^t<<16, a2^t
	t = (a1>>16 ^ a3) & m16
	a1, a3 = a1^t<<16, a3^t
	t = (a4>>16 ^ a6) & m16
	a4, a6 = a4^t<<16, a6^t
	t = (a5>>16 ^ a7) & m16
	a5, a7 = a5^t<<16, a7^t

	t = (a0>>8 ^ a1) & m8
	a0, a1 = a0^t<<8, a1^t
	t = (a2>>8 ^ a3) & m8
	a2, a3 = a2^t<<8, a3^t
	t = (a4>>8 ^ a5) & m8
	a4, a5 = a4^t<<8, a5^t
	t = (a6>>8 ^ a7) & m8
	a6, a7 = a6^t<<8, a7^t

	*(*uint64)(dst) = a0
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a1
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a2
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a3
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a4
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a5
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a6
	dst = unsafe.Add(dst, n)
	*(*uint64)(dst) = a7
}

// appendDelta appends v in DELTA_BINARY_PACKED: a header (block size 128,
// 4 miniblocks of 32 values, the count, the first value as a zigzag
// varint), then per block of 128 deltas the smallest delta (zigzag
// varint), the bit width of each miniblock (one byte each) and the
// miniblocks, each delta less the smallest bit-packed in the miniblock's
// width. Deltas wrap around in the values' own width, as the format allows.
func appendDelta[T int32 | int64](b []byte, v []T) []byte {
	const block, miniblocks, mini = 128, 4, 32
	b = binary.AppendUvarint(b, block)
	b = binary.AppendUvarint(b, miniblocks)
	b = binary.AppendUvarint(b, uint64(len(v)))
	if len(v) == 0 {
		return binary.AppendUvarint(b, 0)
	}
	b = binary.AppendUvarint(b, zigzag(int64(v[0])))
	mask := uint64(math.MaxUint64)
	var zero T
	if unsafe.Sizeof(zero) == 4 {
		mask = math.MaxUint32
	}
	var d [block]T
	var u [block]uint64
	for i := 1; i < len(v); i += block {
		m := min(block, len(v)-i)
		minD := v[i] - v[i-1]
		for k := range m {
			d[k] = v[i+k] - v[i+k-1]
			minD = min(minD, d[k])
		}
		b = binary.AppendUvarint(b, zigzag(int64(minD)))
		for k := range m {
			u[k] = uint64(d[k]-minD) & mask
		}
		for k := m; k < block; k++ {
			u[k] = 0
		}
		wat := len(b)
		b = append(b, 0, 0, 0, 0)
		for mb := range miniblocks {
			if mb*mini >= m {
				break
			}
			var or uint64
			for _, x := range u[mb*mini : (mb+1)*mini] {
				or |= x
			}
			w := uint(bits.Len64(or))
			b[wat+mb] = byte(w)
			if w > 0 {
				b = pack64(b, u[mb*mini:(mb+1)*mini], w)
			}
		}
	}
	return b
}

// pack64 appends the 32 values of u (each below 1<<width, width 1..64)
// bit-packed, least significant bit first, eight bytes written at a time:
// 4·width bytes.
func pack64(b []byte, u []uint64, width uint) []byte {
	var acc uint64
	var nb uint // bits held in acc, < 64
	for _, x := range u[:32] {
		acc |= x << nb
		if nb+width < 64 {
			nb += width
			continue
		}
		b = binary.LittleEndian.AppendUint64(b, acc)
		nb = nb + width - 64
		acc = x >> (width - nb) // its bits that did not fit (none when nb is 0: a shift by 64 gives 0)
	}
	for ; nb > 0; nb -= 8 { // 32·width bits: whole bytes
		b = append(b, byte(acc))
		acc >>= 8
	}
	return b
}

// appendPlainBools appends the booleans of rows lo..hi whose validity bit
// is set (all when valid is nil), one bit each, least significant first.
func appendPlainBools(b, values, valid []byte, lo, hi int) []byte {
	if valid == nil && lo%8 == 0 {
		n := hi - lo
		b = append(b, values[lo/8:lo/8+n/8]...)
		if n%8 > 0 {
			b = append(b, values[lo/8+n/8]&(1<<(n%8)-1))
		}
		return b
	}
	p := packer{b: b}
	for i := lo; i < hi; i++ {
		if valid != nil && !isSet(valid, i) {
			continue
		}
		v := uint64(0)
		if isSet(values, i) {
			v = 1
		}
		p.put32(v, 1)
	}
	return p.flush()
}
