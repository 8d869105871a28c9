package bufr

import (
	"bytes"
	"io"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// Decoding speed on the real sample files, in messages per second and
// MB/s of input (go test -bench . ./ingest/bufr). Decode is Sections 0–5
// and the data; Reader adds finding the messages in the stream and
// mapping every subset to a sounding. msgs/s is per second of wall time;
// msgs/cpu-s per second of the process's CPU time, the figure to quote on
// a shared machine (it includes the garbage collector's work).
func BenchmarkDecode(b *testing.B) {
	for _, name := range []string{"pdbufr-temp-420.bufr", "IUSK73_AMMC_182300.bufr", "IUSK73_AMMC_040000.bufr", "pdbufr-temp_hires.bufr"} {
		in := realdata.Text(b, "bufr", name)
		var msgs [][]byte
		sc := NewScanner(bytes.NewReader(in))
		for {
			m, _, err := sc.Next()
			if err != nil {
				break
			}
			msgs = append(msgs, m)
		}
		b.Run(name, func(b *testing.B) {
			b.SetBytes(int64(len(in)))
			b.ReportAllocs()
			var dec Decoder
			c0 := cpuSeconds()
			for b.Loop() {
				for _, raw := range msgs {
					m, err := ParseMessage(raw)
					if err != nil {
						b.Fatal(err)
					}
					if _, err := dec.Decode(m); err != nil {
						b.Fatal(err)
					}
				}
			}
			b.ReportMetric(float64(b.N*len(msgs))/b.Elapsed().Seconds(), "msgs/s")
			if c := cpuSeconds() - c0; c > 0 {
				b.ReportMetric(float64(b.N*len(msgs))/c, "msgs/cpu-s")
				b.ReportMetric(float64(b.N*len(in))/c/1e6, "MB/cpu-s")
			}
		})
	}
}

func BenchmarkReader(b *testing.B) {
	for _, name := range []string{"pdbufr-temp-420.bufr", "IUSK73_AMMC_040000.bufr"} {
		in := realdata.Text(b, "bufr", name)
		b.Run(name, func(b *testing.B) {
			b.SetBytes(int64(len(in)))
			b.ReportAllocs()
			n := 0
			c0 := cpuSeconds()
			for b.Loop() {
				r := NewReader(bytes.NewReader(in), name, "")
				for {
					_, err := r.Next()
					if err == io.EOF {
						break
					}
					if err != nil {
						b.Fatal(err)
					}
					n++
				}
			}
			b.ReportMetric(float64(n)/b.Elapsed().Seconds(), "msgs/s")
			if c := cpuSeconds() - c0; c > 0 {
				b.ReportMetric(float64(n)/c, "msgs/cpu-s")
				b.ReportMetric(float64(b.N*len(in))/c/1e6, "MB/cpu-s")
			}
		})
	}
}
