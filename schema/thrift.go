package schema

import "encoding/binary"

// compact encodes the Thrift structures of a Parquet file (the footer and
// the page headers) in Thrift's compact protocol, as far as those
// structures need it: structs, i8/i32/i64, booleans, binary, lists.
// Source: Apache Thrift, doc/specs/thrift-compact-protocol.md (field
// header "ddddtttt" with the field id delta, or "0000tttt" and a zigzag
// varint id; zigzag varint integers; varint-length binary; list header
// "sssstttt", or "1111tttt" and a varint size from 15 elements).
type compact struct {
	b     []byte
	last  int16   // id of the previous field of the struct being written
	outer []int16 // last of the enclosing structs
}

// Compact protocol type codes (field types; list element types are the
// same for the types used here).
const (
	ctTrue   = 1
	ctFalse  = 2
	ctI8     = 3
	ctI16    = 4
	ctI32    = 5
	ctI64    = 6
	ctBinary = 8
	ctList   = 9
	ctStruct = 12
)

func (c *compact) reset() { c.b, c.last, c.outer = c.b[:0], 0, c.outer[:0] }

func (c *compact) field(id int16, t byte) {
	if d := id - c.last; d > 0 && d <= 15 {
		c.b = append(c.b, byte(d)<<4|t)
	} else {
		c.b = append(c.b, t)
		c.b = binary.AppendUvarint(c.b, zigzag(int64(id)))
	}
	c.last = id
}

func zigzag(v int64) uint64 { return uint64(v<<1) ^ uint64(v>>63) }

func (c *compact) i8(id int16, v int8) {
	c.field(id, ctI8)
	c.b = append(c.b, byte(v))
}

func (c *compact) i16(id int16, v int16) {
	c.field(id, ctI16)
	c.b = binary.AppendUvarint(c.b, zigzag(int64(v)))
}

func (c *compact) i32(id int16, v int32) {
	c.field(id, ctI32)
	c.b = binary.AppendUvarint(c.b, zigzag(int64(v)))
}

func (c *compact) i64(id int16, v int64) {
	c.field(id, ctI64)
	c.b = binary.AppendUvarint(c.b, zigzag(v))
}

func (c *compact) boolean(id int16, v bool) {
	if v {
		c.field(id, ctTrue)
	} else {
		c.field(id, ctFalse)
	}
}

func (c *compact) binary(id int16, v []byte) {
	c.field(id, ctBinary)
	c.elemBinary(v)
}

func (c *compact) str(id int16, v string) {
	c.field(id, ctBinary)
	c.b = binary.AppendUvarint(c.b, uint64(len(v)))
	c.b = append(c.b, v...)
}

// begin opens a struct-valued field (also a union's).
func (c *compact) begin(id int16) {
	c.field(id, ctStruct)
	c.open()
}

// open starts a struct, as a field value or a list element.
func (c *compact) open() {
	c.outer = append(c.outer, c.last)
	c.last = 0
}

// end closes the struct opened last with the stop field.
func (c *compact) end() {
	c.b = append(c.b, 0)
	c.last = c.outer[len(c.outer)-1]
	c.outer = c.outer[:len(c.outer)-1]
}

// empty writes a field holding an empty struct (Parquet's StringType,
// MicroSeconds, TypeDefinedOrder, …).
func (c *compact) empty(id int16) {
	c.field(id, ctStruct)
	c.b = append(c.b, 0)
}

// list starts a list field of n elements of type t; the elements follow.
func (c *compact) list(id int16, t byte, n int) {
	c.field(id, ctList)
	if n < 15 {
		c.b = append(c.b, byte(n)<<4|t)
	} else {
		c.b = append(c.b, 0xf0|t)
		c.b = binary.AppendUvarint(c.b, uint64(n))
	}
}

func (c *compact) elemI32(v int32) { c.b = binary.AppendUvarint(c.b, zigzag(int64(v))) }

func (c *compact) elemBinary(v []byte) {
	c.b = binary.AppendUvarint(c.b, uint64(len(v)))
	c.b = append(c.b, v...)
}

func (c *compact) elemString(v string) {
	c.b = binary.AppendUvarint(c.b, uint64(len(v)))
	c.b = append(c.b, v...)
}
