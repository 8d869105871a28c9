package engine

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"context"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/internal/realdata"

	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/ingest/synth"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema/store"
	"github.com/sondeclim/sondeclim/sounding"
)

// realSoundings reads a real archive file from ../shared/validation, or
// skips when it is absent.
func realSoundings(tb testing.TB, name string) []*sounding.Sounding {
	tb.Helper()
	path := filepath.Join(realdata.Dir(tb, "archive-v2"), name)
	f, err := os.Open(path)
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	r := archivev2.NewReader(f, path, "")
	var out []*sounding.Sounding
	for {
		s, err := r.Next()
		if err != nil {
			break
		}
		out = append(out, s)
	}
	return out
}

// TestCodecRoundTrip: staging must give back exactly what the reader
// decoded (every float bit, status, tier and source position), on the real
// Cape Kennedy 1950 and Barrow files (PROVENANCE.md), whose levels carry
// −9999 and −8888 codes, A/B tiers and wind-only levels.
func TestCodecRoundTrip(t *testing.T) {
	all := append(realSoundings(t, "USM00074794-data-1950-portion.txt"), realSoundings(t, "USM00070026-data-truncated.txt")...)
	if len(all) != 16 {
		t.Fatalf("read %d soundings, PROVENANCE.md gives 14 + 2 whole", len(all))
	}
	var buf []byte
	for _, s := range all {
		buf = sounding.AppendBinary(buf, s, true)
	}
	rest := buf
	for i, want := range all {
		got, tail, err := sounding.DecodeBinary(rest)
		if err != nil {
			t.Fatalf("sounding %d: %v", i, err)
		}
		rest = tail
		if !sameSounding(got, want) {
			t.Errorf("sounding %d (%s) changed in the round trip", i, want.Source)
		}
	}
	if len(rest) != 0 {
		t.Errorf("%d bytes left over", len(rest))
	}
	// A sounding cut anywhere is an error, not a panic.
	one := sounding.AppendBinary(nil, all[0], true)
	for _, n := range []int{0, 1, 10, len(one) / 2, len(one) - 1} {
		if _, _, err := sounding.DecodeBinary(one[:n]); err == nil {
			t.Errorf("decoding %d of %d bytes gave no error", n, len(one))
		}
	}
}

// sameSounding compares two soundings treating NaN as equal to NaN.
func sameSounding(a, b *sounding.Sounding) bool {
	fa, fb := *a, *b
	fa.Levels, fb.Levels = nil, nil
	for _, p := range []*float64{&fa.LatitudeDeg, &fa.LongitudeDeg, &fa.ElevationM, &fb.LatitudeDeg, &fb.LongitudeDeg, &fb.ElevationM} {
		if math.IsNaN(*p) {
			*p = -1e300
		}
	}
	if !fa.NominalTime.Equal(fb.NominalTime) || !fa.LaunchTime.Equal(fb.LaunchTime) {
		return false
	}
	fa.NominalTime, fb.NominalTime, fa.LaunchTime, fb.LaunchTime = time.Time{}, time.Time{}, time.Time{}, time.Time{}
	if !reflect.DeepEqual(fa, fb) || len(a.Levels) != len(b.Levels) {
		return false
	}
	for i := range a.Levels {
		la, lb := a.Levels[i], b.Levels[i]
		for _, p := range [][2]*float64{{&la.ElapsedS, &lb.ElapsedS}, {&la.PressurePa, &lb.PressurePa}, {&la.HeightM, &lb.HeightM},
			{&la.TemperatureK, &lb.TemperatureK}, {&la.DewpointK, &lb.DewpointK}, {&la.DewpointDepressionK, &lb.DewpointDepressionK},
			{&la.RelHumidityPct, &lb.RelHumidityPct}, {&la.WindDirectionDeg, &lb.WindDirectionDeg}, {&la.WindSpeedMS, &lb.WindSpeedMS},
			{&la.LatDisplacementDeg, &lb.LatDisplacementDeg}, {&la.LonDisplacementDeg, &lb.LonDisplacementDeg}} {
			if math.Float64bits(*p[0]) != math.Float64bits(*p[1]) {
				return false
			}
			*p[0], *p[1] = 0, 0
		}
		if !reflect.DeepEqual(la, lb) {
			return false
		}
	}
	return true
}

// TestDeduplicateOrderFree: the copy kept among duplicates does not depend
// on the order they arrive in (real Göteborg file, PROVENANCE.md: five
// soundings that are two ascents).
func TestDeduplicateOrderFree(t *testing.T) {
	ss := realSoundings(t, "SWM00002527-data-hour99.txt")
	if len(ss) != 5 {
		t.Fatalf("%d soundings, want 5", len(ss))
	}
	reports := map[*sounding.Sounding]qc.Report{}
	for _, s := range ss {
		reports[s] = qc.Check(s, qc.DefaultConfig())
	}
	fwd, n1 := deduplicate(append([]*sounding.Sounding{}, ss...), reports)
	rev := []*sounding.Sounding{ss[4], ss[3], ss[2], ss[1], ss[0]}
	bwd, n2 := deduplicate(rev, reports)
	if n1 != 3 || n2 != 3 || len(fwd) != 2 || len(bwd) != 2 {
		t.Fatalf("kept %d and %d, merged %d and %d; want 2 kept, 3 merged", len(fwd), len(bwd), n1, n2)
	}
	for i := range fwd {
		if fwd[i].s != bwd[i].s || fwd[i].reason != bwd[i].reason {
			t.Errorf("ascent %d: kept %s (%s) in file order, %s (%s) reversed", i,
				fwd[i].s.Source, fwd[i].reason, bwd[i].s.Source, bwd[i].reason)
		}
	}
}

// BenchmarkIngest measures end-to-end ingest (read, stage, QC, analysis,
// Parquet) of an invented archive of 2 stations x 2 years (2,920
// soundings) into a fresh store, for 1 and 2 workers. The soundings/s
// metric is what the README's Performance section reports at scale with
// `sondeclim bench`.
func BenchmarkIngest(b *testing.B) {
	dir := b.TempDir()
	n := 0
	for i := range 2 {
		cfg := synth.DefaultConfig()
		cfg.StationIndex, cfg.Years = i, 2
		_, k, err := synth.WriteFile(dir, cfg)
		if err != nil {
			b.Fatal(err)
		}
		n += k
	}
	for _, w := range []int{1, 2} {
		b.Run(map[int]string{1: "workers=1", 2: "workers=2"}[w], func(b *testing.B) {
			for i := 0; b.Loop(); i++ {
				store := filepath.Join(b.TempDir(), "store")
				if _, err := Run(context.Background(), store, []string{dir}, Options{Workers: w}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(n*b.N)/b.Elapsed().Seconds(), "soundings/s")
		})
	}
}

// TestSameAsIndexed: an input read in place that grows after it was
// indexed is refused, not decoded from shifted byte ranges; one that was
// replaced by rename is still read through the open handle. (Invented
// file content; unit scaffolding.)
func TestSameAsIndexed(t *testing.T) {
	path := filepath.Join(t.TempDir(), "in.txt")
	if err := os.WriteFile(path, []byte("first\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	stamp := store.Input{SizeBytes: fi.Size(), ModTime: fi.ModTime().UTC()}
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	if err := sameAsIndexed(fh, stamp); err != nil {
		t.Fatalf("unchanged file refused: %v", err)
	}
	// Replaced by rename: the open handle still sees the indexed file.
	tmp := path + ".new"
	if err := os.WriteFile(tmp, []byte("second, longer\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(tmp, path); err != nil {
		t.Fatal(err)
	}
	if err := sameAsIndexed(fh, stamp); err != nil {
		t.Fatalf("renamed-over file refused through its old handle: %v", err)
	}
	// Grown in place: refused.
	fh2, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer fh2.Close()
	fi2, _ := fh2.Stat()
	stamp2 := store.Input{SizeBytes: fi2.Size(), ModTime: fi2.ModTime().UTC()}
	if _, err := fh2.WriteAt([]byte("appended line\n"), fi2.Size()); err != nil {
		t.Fatal(err)
	}
	if err := sameAsIndexed(fh2, stamp2); err == nil || !strings.Contains(err.Error(), "changed while it was being ingested") {
		t.Errorf("grown file: got %v, want a refusal", err)
	}
}

// TestInPlaceEqualsDecoded: archive-v2 input indexed and read in place
// (plain file, gzip copy, zip members) stages exactly the soundings the
// decoding path stages: every partition's content hash (which covers each
// copy's observation and its file, member and line) and every skipped item
// agree. Real files of ../shared/validation (PROVENANCE.md): Barrow cut
// short, Göteborg with hour 99, Omaha 1950 portion, Wien; the zip holds two
// members so that member names and per-member line numbers are exercised.
func TestInPlaceEqualsDecoded(t *testing.T) {
	read := func(name string) []byte { return realdata.Text(t, "archive-v2", name) }
	first := append(read("USM00070026-data-truncated.txt"), read("SWM00002527-data-hour99.txt")...)
	second := append(read("USM00074794-data-1950-portion.txt"), read("AUM00011035-data.txt.gz")...)
	in := t.TempDir()
	write := func(name string, b []byte) {
		if err := os.WriteFile(filepath.Join(in, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("plain.txt", first)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(second)
	zw.Close()
	write("second.txt.gz", gz.Bytes())
	var zb bytes.Buffer
	za := zip.NewWriter(&zb)
	for name, b := range map[string][]byte{"a/first.txt": first, "b/second.txt": second} {
		w, err := za.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(b)
	}
	za.Close()
	write("both.zip", zb.Bytes())

	run := func(decodeAll bool) (map[string]string, []Skip, *Summary) {
		o := ingestOutcome(t, []string{in}, Options{Workers: 2, decodeAll: decodeAll})
		return o.hashes, o.skips, o.sum
	}
	inPlace, skipsA, sumA := run(false)
	decoded, skipsB, sumB := run(true)
	if len(inPlace) != 4 || !reflect.DeepEqual(inPlace, decoded) {
		t.Errorf("partition hashes differ or are not the 4 station-years:\nin place %v\ndecoded  %v", inPlace, decoded)
	}
	if !reflect.DeepEqual(skipsA, skipsB) || len(skipsA) != 2 {
		t.Errorf("skips differ or are not the truncated sounding twice (plain file and zip member):\n%v\n%v", skipsA, skipsB)
	}
	// Each text is read twice (file and zip member): Barrow 2 of its 3
	// soundings (the third is cut short), Göteborg 5, Omaha 14, Wien 321.
	if want := 2 * (2 + 5 + 14 + 321); sumA.SoundingsRead != want || sumB.SoundingsRead != want || sumA.Members != 4 || sumB.Members != 4 {
		t.Errorf("soundings read %d / %d, members %d / %d", sumA.SoundingsRead, sumB.SoundingsRead, sumA.Members, sumB.Members)
	}
}

// TestWriteFailureStopsRun: when a partition cannot be written (here the
// levels table's folder is a file), the run returns the error naming the
// partition, commits nothing, and does not hang with analysed partitions
// waiting for writers. Invented archive (unit scaffolding), 2 years so that
// several partitions are in the pipeline; with 1 and 2 workers.
func TestWriteFailureStopsRun(t *testing.T) {
	in := t.TempDir()
	cfg := synth.DefaultConfig()
	cfg.Years = 3
	if _, _, err := synth.WriteFile(in, cfg); err != nil {
		t.Fatal(err)
	}
	for _, workers := range []int{1, 2} {
		storeDir := t.TempDir()
		if err := os.WriteFile(filepath.Join(storeDir, "levels"), []byte("not a folder"), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Run(context.Background(), storeDir, []string{in}, Options{Workers: workers})
		if err == nil || !strings.Contains(err.Error(), "partition ") {
			t.Fatalf("workers %d: got %v, want a partition's write error", workers, err)
		}
		t.Logf("workers %d: %v", workers, err)
		m, err := store.ReadManifest(storeDir, store.Shard{})
		if err != nil {
			t.Fatal(err)
		}
		if len(m.Partitions) != 0 {
			t.Errorf("workers %d: %d partitions committed after a failed run", workers, len(m.Partitions))
		}
	}
}
