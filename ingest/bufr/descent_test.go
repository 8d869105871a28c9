package bufr

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

// The descent message testdata/descent-94461.bufr was encoded by Debian's
// ecCodes tools (bufr_filter) from testdata/descent-94461.rules, which
// lists its invented values and says how; it is the only 3 09 056 message
// the tests have (no real one is among the validation files).

// TestDescentAgainstReferenceDecoder reads the descent with this package
// and with the reference decoder (bufr_filter, the source of every
// expected value) and compares station, position, launch time and every
// level's values as TestAgainstReferenceDecoder does, the levels in
// reverse: the message lists them from the burst down, the sounding
// lowest first.
func TestDescentAgainstReferenceDecoder(t *testing.T) {
	path := filepath.Join("testdata", "descent-94461.bufr")
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	got := readAll(t, path, b)
	if len(got) != 1 || !got[0].Descent {
		t.Fatalf("%d soundings, want one descent", len(got))
	}
	s := got[0]
	// From the rules file: 118 levels from 30,000 gpm (1172 Pa, 6105 s
	// after launch) down to 750 gpm (92,634 Pa, 8451 s).
	lo, hi := s.Levels[0], s.Levels[len(s.Levels)-1]
	if len(s.Levels) != 118 || lo.PressurePa != 92634 || hi.PressurePa != 1172 || lo.ElapsedS != 8451 || hi.ElapsedS != 6105 {
		t.Errorf("levels %d, lowest %.0f Pa at %.0f s, highest %.0f Pa at %.0f s", len(s.Levels), lo.PressurePa, lo.ElapsedS, hi.PressurePa, hi.ElapsedS)
	}
	compareWithReference(t, path)
}

// TestDescentTestdataEncoding checks that the descent message holds what
// the reference encoder makes of its rules today, so the file and the
// values listed in the rules cannot drift apart (compared as decoded
// soundings: header octets may differ between versions of the encoder).
func TestDescentTestdataEncoding(t *testing.T) {
	exe, err := exec.LookPath("bufr_filter")
	if err != nil {
		t.Skip("reference decoder absent: Debian's libeccodes-tools (bufr_filter) is not installed; .ci/run installs it")
	}
	tmpl := "/usr/share/eccodes/samples/BUFR4.tmpl"
	if _, err := os.Stat(tmpl); err != nil {
		t.Skipf("the reference encoder's sample message %s is absent", tmpl)
	}
	out := filepath.Join(t.TempDir(), "descent.bufr")
	if b, err := exec.Command(exe, "-o", out, filepath.Join("testdata", "descent-94461.rules"), tmpl).CombinedOutput(); err != nil {
		t.Fatalf("bufr_filter: %v\n%s", err, b)
	}
	var enc [2][]byte
	for i, p := range []string{out, filepath.Join("testdata", "descent-94461.bufr")} {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		ss := readAll(t, p, b)
		if len(ss) != 1 {
			t.Fatalf("%s: %d soundings", p, len(ss))
		}
		enc[i] = sounding.AppendBinary(nil, ss[0], false)
	}
	if !bytes.Equal(enc[0], enc[1]) {
		t.Errorf("testdata/descent-94461.bufr does not decode to what bufr_filter encodes from its rules")
	}
}
