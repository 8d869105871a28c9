package bufr

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"strconv"
	"strings"
	"sync"
)

// The WMO's BUFR Table B and Table D (version in tables/VERSION), in the
// compact form tables/gen.go writes from the WMO's CSV files; the tables'
// MIT licence is tables/LICENSE.md. DEVELOPERS.md says how to update them.
var (
	//go:embed tables/tableb.txt
	tableBText []byte
	//go:embed tables/tabled.txt
	tableDText []byte
	//go:embed tables/VERSION
	tableVersionText string
)

// unitKind is how a Table B element's bits are read.
type unitKind uint8

const (
	numeric unitKind = iota
	characters
	codeTable
	flagTable
)

// Element is one Table B entry.
type Element struct {
	Scale     int
	Reference int64
	Width     int // bits
	kind      unitKind
	Unit      string
	Name      string
	known     bool
}

// tables holds Table B (element descriptors, F = 0) and Table D
// (sequences, F = 3), indexed by X<<8 | Y.
type tables struct {
	b [1 << 14]Element
	d [1 << 14][]uint16
}

var (
	loadOnce sync.Once
	loaded   *tables
	loadErr  error
)

// wmoTables returns the embedded tables, parsed on first use.
func wmoTables() (*tables, error) {
	loadOnce.Do(func() { loaded, loadErr = parseTables(tableBText, tableDText) })
	return loaded, loadErr
}

// TableVersion is the WMO master-table version of the embedded tables.
func TableVersion() string { return strings.TrimSpace(tableVersionText) }

func parseTables(b, d []byte) (*tables, error) {
	t := new(tables)
	sc := bufio.NewScanner(bytes.NewReader(b))
	for line := 1; sc.Scan(); line++ {
		s := sc.Text()
		if s == "" || s[0] == '#' {
			continue
		}
		f := strings.Split(s, "\t")
		if len(f) != 7 {
			return nil, fmt.Errorf("tableb.txt:%d: %d fields, want 7", line, len(f))
		}
		fxy, err := parseFXY(f[0])
		if err != nil || fxy>>14 != 0 {
			return nil, fmt.Errorf("tableb.txt:%d: bad descriptor %q", line, f[0])
		}
		scale, err1 := strconv.Atoi(f[1])
		ref, err2 := strconv.ParseInt(f[2], 10, 64)
		width, err3 := strconv.Atoi(f[3])
		if err1 != nil || err2 != nil || err3 != nil || width <= 0 {
			return nil, fmt.Errorf("tableb.txt:%d: bad scale, reference or width", line)
		}
		e := Element{Scale: scale, Reference: ref, Width: width, Unit: f[5], Name: f[6], known: true}
		switch f[4] {
		case "n":
		case "c":
			e.kind = characters
		case "t":
			e.kind = codeTable
		case "f":
			e.kind = flagTable
		default:
			return nil, fmt.Errorf("tableb.txt:%d: unknown kind %q", line, f[4])
		}
		t.b[fxy&0x3fff] = e
	}
	sc = bufio.NewScanner(bytes.NewReader(d))
	sc.Buffer(nil, 1<<20)
	for line := 1; sc.Scan(); line++ {
		s := sc.Text()
		if s == "" || s[0] == '#' {
			continue
		}
		head, list, ok := strings.Cut(s, "\t")
		fxy, err := parseFXY(head)
		if !ok || err != nil || fxy>>14 != 3 {
			return nil, fmt.Errorf("tabled.txt:%d: bad sequence line", line)
		}
		var seq []uint16
		for _, m := range strings.Fields(list) {
			x, err := parseFXY(m)
			if err != nil {
				return nil, fmt.Errorf("tabled.txt:%d: %v", line, err)
			}
			seq = append(seq, x)
		}
		t.d[fxy&0x3fff] = seq
	}
	return t, nil
}

// parseFXY reads a descriptor written FXXYYY.
func parseFXY(s string) (uint16, error) {
	if len(s) != 6 {
		return 0, fmt.Errorf("descriptor %q is not 6 digits", s)
	}
	f, err1 := strconv.Atoi(s[:1])
	x, err2 := strconv.Atoi(s[1:3])
	y, err3 := strconv.Atoi(s[3:])
	if err1 != nil || err2 != nil || err3 != nil || f > 3 || x > 63 || y > 255 {
		return 0, fmt.Errorf("bad descriptor %q", s)
	}
	return FXY(f, x, y), nil
}

// FXY packs a descriptor as BUFR does in Section 3: F in 2 bits, X in 6,
// Y in 8.
func FXY(f, x, y int) uint16 { return uint16(f&3)<<14 | uint16(x&63)<<8 | uint16(y&255) }

// DescriptorString formats a descriptor as "F XX YYY".
func DescriptorString(d uint16) string {
	return fmt.Sprintf("%d %02d %03d", d>>14, (d>>8)&63, d&255)
}

// isLocal reports whether an element or sequence descriptor lies in the
// ranges WMO-No. 306 Vol. I.2 reserves for local use (X 48–63 or Y
// 192–255).
func isLocal(d uint16) bool { return (d>>8)&63 >= 48 || d&255 >= 192 }
