package sounding_test

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/internal/benchcpu"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/sounding"
)

// referenceEncoding is the sounding encoding as AppendBinary wrote it
// before its levels were written by index (commit b6e3735), appends
// throughout. The staged copies and the sounding_hash column of existing
// stores were made from these bytes, so AppendBinary must give them
// exactly.
func referenceEncoding(b []byte, s *sounding.Sounding, source bool) []byte {
	str := func(b []byte, s string) []byte { return append(binary.AppendUvarint(b, uint64(len(s))), s...) }
	flt := func(b []byte, v float64) []byte { return binary.LittleEndian.AppendUint64(b, math.Float64bits(v)) }
	fl := func(a, b, c bool) byte {
		var f byte
		if a {
			f |= 1
		}
		if b {
			f |= 2
		}
		if c {
			f |= 4
		}
		return f
	}
	b = str(b, s.StationID)
	b = str(b, s.StationName)
	b = flt(b, s.LatitudeDeg)
	b = flt(b, s.LongitudeDeg)
	b = flt(b, s.ElevationM)
	b = binary.AppendVarint(b, s.NominalTime.UnixNano())
	b = binary.AppendVarint(b, s.LaunchTime.UnixNano())
	b = append(b, fl(s.NominalHourInferred, s.LaunchTimeReported, s.Descent))
	b = binary.AppendVarint(b, int64(s.DeclaredLevels))
	b = str(b, s.PressureSource)
	b = str(b, s.HeightSource)
	if source {
		b = append(b, 1)
		b = str(b, s.Source.File)
		b = str(b, s.Source.Member)
		b = binary.AppendVarint(b, int64(s.Source.Line))
		b = str(b, s.Source.Format)
	} else {
		b = append(b, 0)
	}
	b = binary.AppendUvarint(b, uint64(len(s.Levels)))
	for i := range s.Levels {
		l := &s.Levels[i]
		b = append(b, byte(l.Kind), fl(l.Tropopause, false, false))
		vals := [...]float64{l.ElapsedS, l.PressurePa, l.HeightM, l.TemperatureK, l.DewpointK,
			l.DewpointDepressionK, l.RelHumidityPct, l.WindDirectionDeg, l.WindSpeedMS,
			l.LatDisplacementDeg, l.LonDisplacementDeg}
		var present uint16
		for k, v := range vals {
			if !math.IsNaN(v) {
				present |= 1 << k
			}
		}
		b = binary.LittleEndian.AppendUint16(b, present)
		for k, v := range vals {
			if present&(1<<k) != 0 {
				b = flt(b, v)
			}
		}
		for v := range sounding.NumVars {
			b = append(b, byte(l.Status[v]), l.UpstreamTier[v])
		}
		if source {
			b = binary.AppendVarint(b, int64(l.Line))
		}
	}
	return b
}

// checkEncoding fails unless AppendBinary gives the reference bytes, with
// and without source and after a prefix, and decodes back to them.
func checkEncoding(t *testing.T, where string, s *sounding.Sounding) {
	t.Helper()
	for _, source := range []bool{false, true} {
		for _, prefix := range [][]byte{nil, []byte("xyz"), make([]byte, 5, 4096)} {
			want := referenceEncoding(bytes.Clone(prefix), s, source)
			got := sounding.AppendBinary(bytes.Clone(prefix), s, source)
			if !bytes.Equal(got, want) {
				t.Fatalf("%s: source %v, prefix %d bytes: encoding differs from the reference (%d vs %d bytes)",
					where, source, len(prefix), len(got), len(want))
			}
		}
	}
	enc := sounding.AppendBinary(nil, s, true)
	back, rest, err := sounding.DecodeBinary(enc)
	if err != nil || len(rest) != 0 {
		t.Fatalf("%s: decode: %v, %d bytes left", where, err, len(rest))
	}
	if again := sounding.AppendBinary(nil, back, true); !bytes.Equal(again, enc) {
		t.Fatalf("%s: decoding and encoding again changes the bytes", where)
	}
}

// TestEncodingMatchesReference: invented soundings whose values are drawn
// from NaN (quiet, signalling, negative), ±0, ±Inf, the smallest
// subnormal, the largest float and ordinary numbers, with random statuses,
// tiers, lines (negative too), level kinds and counts from 0 to 300.
func TestEncodingMatchesReference(t *testing.T) {
	specials := []float64{math.NaN(), math.Float64frombits(0x7ff0000000000001), math.Float64frombits(0xfff8000000000000),
		0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), math.SmallestNonzeroFloat64, math.MaxFloat64, 101325, -56.5, 273.15}
	rng := rand.New(rand.NewPCG(16, 42))
	val := func() float64 {
		if rng.IntN(3) == 0 {
			return rng.NormFloat64() * 1e4
		}
		return specials[rng.IntN(len(specials))]
	}
	for n := range 200 {
		s := &sounding.Sounding{
			StationID: "QQM00000042", StationName: "invented", LatitudeDeg: val(), LongitudeDeg: val(), ElevationM: val(),
			NominalTime: time.Date(1950+n, 1, 1, 0, 0, 0, 0, time.UTC), LaunchTime: time.Unix(int64(n)*3607, 0).UTC(),
			NominalHourInferred: n%2 == 0, LaunchTimeReported: n%3 == 0, Descent: n%5 == 0, DeclaredLevels: n - 100,
			PressureSource: "p", HeightSource: string(make([]byte, n)),
			Source: sounding.Source{File: "f", Member: "m", Line: n * 1e6, Format: "x"},
		}
		s.Levels = make([]sounding.Level, [...]int{0, 1, 2, 198, 300}[n%5])
		for i := range s.Levels {
			l := &s.Levels[i]
			l.Kind, l.Tropopause, l.Line = sounding.LevelKind(rng.IntN(256)), rng.IntN(2) == 0, rng.IntN(1<<40)-1<<39
			for _, p := range []*float64{&l.ElapsedS, &l.PressurePa, &l.HeightM, &l.TemperatureK, &l.DewpointK,
				&l.DewpointDepressionK, &l.RelHumidityPct, &l.WindDirectionDeg, &l.WindSpeedMS,
				&l.LatDisplacementDeg, &l.LonDisplacementDeg} {
				*p = val()
			}
			for v := range sounding.NumVars {
				l.Status[v], l.UpstreamTier[v] = sounding.Status(rng.IntN(256)), byte(rng.IntN(256))
			}
		}
		checkEncoding(t, "invented", s)
	}
}

// TestEncodingMatchesReferenceReal: every sounding of the real archive-v2
// station files (PROVENANCE.md) encodes to the reference bytes.
func TestEncodingMatchesReferenceReal(t *testing.T) {
	texts := map[string][]byte{}
	for _, name := range []string{"AUM00011035-data.txt.gz", "SWM00002527-data-hour99.txt",
		"USM00070026-data-truncated.txt", "USM00074794-data-1950-portion.txt"} {
		texts[name] = realdata.Text(t, "archive-v2", name)
	}
	texts["sterling"] = realdata.Text(t, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	levels := 0
	for name, text := range texts {
		rd := archivev2.NewReader(bytes.NewReader(text), name, "")
		for {
			s, err := rd.Next()
			if err == io.EOF {
				break
			}
			var pe *ingest.ParseError
			if errors.As(err, &pe) {
				continue
			}
			if err != nil {
				t.Fatal(err)
			}
			levels += len(s.Levels)
			checkEncoding(t, s.Source.String(), s)
		}
	}
	if levels < 131306 {
		t.Fatalf("%d levels read, want at least Sterling's 131,306 (PROVENANCE.md)", levels)
	}
}

// BenchmarkAppendBinarySterling encodes every sounding of the real
// Sterling 2016 file without source, as the ingest does to hash each one.
func BenchmarkAppendBinarySterling(b *testing.B) {
	text := realdata.Text(b, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	var all []*sounding.Sounding
	rd := archivev2.NewReader(bytes.NewReader(text), "sterling", "")
	for {
		s, err := rd.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			b.Fatal(err)
		}
		all = append(all, s)
	}
	levels := benchcpu.Levels(all)
	var enc []byte
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		for _, s := range all {
			enc = sounding.AppendBinary(enc[:0], s, false)
		}
	}
	benchcpu.PerLevel(b, cpu0, levels)
}
