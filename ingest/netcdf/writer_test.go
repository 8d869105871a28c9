package netcdf

import (
	"bytes"
	"encoding/binary"
	"math"
)

// This file holds a minimal netCDF classic writer used only to build tiny
// test files; it follows the same published format specification as the
// reader but shares no code with it.

type tDim struct {
	name string
	len  int // 0 = record dimension
}

type tAttr struct {
	name string
	typ  Type
	text string
	vals []float64
}

type tVar struct {
	name  string
	dims  []int
	attrs []tAttr
	typ   Type
	data  []float64 // all values, row-major (records first)
}

type tFile struct {
	version   byte
	numrecs   uint32
	dims      []tDim
	gatts     []tAttr
	vars      []tVar
	streaming bool // write numrecs as 0xFFFFFFFF
}

type wbuf struct{ bytes.Buffer }

func (w *wbuf) u32(x uint32) { binary.Write(&w.Buffer, binary.BigEndian, x) }
func (w *wbuf) pad() {
	for w.Len()%4 != 0 {
		w.WriteByte(0)
	}
}
func (w *wbuf) name(s string) { w.u32(uint32(len(s))); w.WriteString(s); w.pad() }

func (w *wbuf) values(t Type, v []float64) {
	for _, x := range v {
		switch t {
		case Byte, Char:
			w.WriteByte(byte(int8(x)))
		case Short:
			binary.Write(&w.Buffer, binary.BigEndian, int16(x))
		case Int:
			binary.Write(&w.Buffer, binary.BigEndian, int32(x))
		case Float:
			binary.Write(&w.Buffer, binary.BigEndian, math.Float32bits(float32(x)))
		case Double:
			binary.Write(&w.Buffer, binary.BigEndian, math.Float64bits(x))
		}
	}
}

func (w *wbuf) attrs(as []tAttr) {
	if len(as) == 0 {
		w.u32(0)
		w.u32(0)
		return
	}
	w.u32(tagAttribute)
	w.u32(uint32(len(as)))
	for _, a := range as {
		w.name(a.name)
		w.u32(uint32(a.typ))
		if a.typ == Char {
			w.u32(uint32(len(a.text)))
			w.WriteString(a.text)
		} else {
			w.u32(uint32(len(a.vals)))
			w.values(a.typ, a.vals)
		}
		w.pad()
	}
}

func (f *tFile) isRec(v tVar) bool { return len(v.dims) > 0 && f.dims[v.dims[0]].len == 0 }

// slabBytes is the unpadded size of one record (record variable) or of
// the whole variable (fixed).
func (f *tFile) slabBytes(v tVar) int {
	n := 1
	for i, d := range v.dims {
		if i == 0 && f.isRec(v) {
			continue
		}
		n *= f.dims[d].len
	}
	return n * int(v.typ.Size())
}

func (f *tFile) header(begins []int64) []byte {
	var w wbuf
	w.WriteString("CDF")
	w.WriteByte(f.version)
	if f.streaming {
		w.u32(0xFFFFFFFF)
	} else {
		w.u32(f.numrecs)
	}
	if len(f.dims) == 0 {
		w.u32(0)
		w.u32(0)
	} else {
		w.u32(tagDimension)
		w.u32(uint32(len(f.dims)))
		for _, d := range f.dims {
			w.name(d.name)
			w.u32(uint32(d.len))
		}
	}
	w.attrs(f.gatts)
	if len(f.vars) == 0 {
		w.u32(0)
		w.u32(0)
	} else {
		w.u32(tagVariable)
		w.u32(uint32(len(f.vars)))
		for i, v := range f.vars {
			w.name(v.name)
			w.u32(uint32(len(v.dims)))
			for _, d := range v.dims {
				w.u32(uint32(d))
			}
			w.attrs(v.attrs)
			w.u32(uint32(v.typ))
			w.u32(uint32((f.slabBytes(v) + 3) &^ 3))
			if f.version == 2 {
				w.u32(uint32(begins[i] >> 32))
			}
			w.u32(uint32(begins[i]))
		}
	}
	return w.Bytes()
}

// bytes lays out and encodes the file.
func (f *tFile) bytes() []byte {
	begins := make([]int64, len(f.vars))
	hlen := int64(len(f.header(begins)))
	off := hlen
	nrec := 0
	for i, v := range f.vars {
		if !f.isRec(v) {
			begins[i] = off
			off += int64((f.slabBytes(v) + 3) &^ 3)
		} else {
			nrec++
		}
	}
	recSize := 0
	for i, v := range f.vars {
		if f.isRec(v) {
			begins[i] = off + int64(recSize)
			if nrec == 1 {
				recSize += f.slabBytes(v)
			} else {
				recSize += (f.slabBytes(v) + 3) &^ 3
			}
		}
	}
	var w wbuf
	w.Write(f.header(begins))
	for _, v := range f.vars {
		if !f.isRec(v) {
			w.values(v.typ, v.data)
			w.pad()
		}
	}
	for r := 0; r < int(f.numrecs); r++ {
		for _, v := range f.vars {
			if !f.isRec(v) {
				continue
			}
			per := f.slabBytes(v) / int(v.typ.Size())
			w.values(v.typ, v.data[r*per:(r+1)*per])
			if nrec > 1 {
				w.pad()
			}
		}
	}
	return w.Bytes()
}
