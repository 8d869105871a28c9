package main

import (
	"bytes"
	"context"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// chromium returns the path of a headless Chromium, or skips the test when
// there is none and CI is not set (CI must have it: .ci/run installs it).
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "/usr/bin/chromium"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") != "" {
		t.Fatal("chromium not found but CI is set: .ci/run should have installed it (apt-get install -y chromium)")
	}
	t.Skip("chromium not found; install it (apt-get install -y chromium) to render the report in a browser")
	return ""
}

// runChromium runs headless Chromium offline-minded on url with extra
// flags and returns stdout.
func runChromium(t *testing.T, bin, url string, extra ...string) string {
	t.Helper()
	args := append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir(), "--virtual-time-budget=10000"}, extra...)
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	var out, errb bytes.Buffer
	cmd := exec.CommandContext(ctx, bin, append(args, url)...)
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %v: %v\n%s", extra, err, errb.String())
	}
	return out.String()
}

// probe is added to a copy of the report: it sets the title to a marker
// only when every image has loaded with a size and no error occurred
// (scripts or resources).
const probe = `<script>
var failed = false;
window.addEventListener('error', function () { failed = true; }, true);
window.addEventListener('load', function () {
  var imgs = document.querySelectorAll('img'), ok = imgs.length > 0 && !failed;
  for (var i = 0; i < imgs.length; i++) {
    if (!imgs[i].complete || imgs[i].naturalWidth === 0) { ok = false; }
  }
  document.title = ok ? 'FIGURES-LOADED ' + imgs.length : 'FIGURES-FAILED';
});
</script>
</body>`

// TestReportInBrowser writes the report of the demo store and renders it
// in headless Chromium: every figure must load, the page must not be
// blank, and nothing may be fetched from elsewhere.
func TestReportInBrowser(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "1", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	page := filepath.Join(dir, "report.html")
	code, out, errs := runCmd(t, "report", "--store", filepath.Join(dir, "store"), "--out", page)
	if code != exitOK || !strings.Contains(out, "3 figures") {
		t.Fatalf("report: exit %d, %q\n%s", code, out, errs)
	}
	b, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	html := string(b)
	// Self-contained: no URL-loaded script, style, font or image.
	if m := regexp.MustCompile(`(?i)(src|href)\s*=\s*"(https?:|//)|@import|url\(\s*['"]?https?:`).FindString(html); m != "" {
		t.Errorf("report refers to something outside the page: %q", m)
	}
	for _, want := range []string{"ZZXSYN00001", "Caution.", "defer to local regulations and licensed meteorological practice",
		"Holzworth", "Heffter", "Vogelezang", "Seidel", "Liu, S.", "Kahl", "Bolton", "Data coverage", "Seasonal climatology"} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	// Coverage of the invented year: 365 days × 2 soundings, all valid.
	if !regexp.MustCompile(`<td>ZZXSYN00001</td><td>2001</td><td>730</td><td>730</td><td>0</td>`).MatchString(html) {
		t.Errorf("coverage row for 2001 not found")
	}
	if n := strings.Count(html, `<img src="data:image/png;base64,`); n != 3 {
		t.Errorf("%d embedded PNG figures, want 3", n)
	}

	bin := chromium(t)
	probed := filepath.Join(dir, "probed.html")
	if err := os.WriteFile(probed, []byte(strings.Replace(html, "</body>", probe, 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	dom := runChromium(t, bin, "file://"+probed, "--dump-dom")
	if !strings.Contains(dom, "<title>FIGURES-LOADED 3</title>") {
		title := regexp.MustCompile(`<title>[^<]*</title>`).FindString(dom)
		t.Errorf("figures did not all load in Chromium: %s", title)
	}
	shot := filepath.Join(dir, "shot.png")
	runChromium(t, bin, "file://"+page, "--window-size=1200,1600", "--screenshot="+shot)
	sb, err := os.ReadFile(shot)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(sb))
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	// Not blank: the rendered page has text and coloured boxes, so it
	// holds many distinct colours (a blank page has one).
	colours := map[uint32]bool{}
	r := img.Bounds()
	for y := r.Min.Y; y < r.Max.Y; y += 4 {
		for x := r.Min.X; x < r.Max.X; x += 4 {
			cr, cg, cb, _ := img.At(x, y).RGBA()
			colours[cr>>8<<16|cg>>8<<8|cb>>8] = true
		}
	}
	if len(colours) < 20 {
		t.Errorf("screenshot looks blank: %d distinct colours", len(colours))
	}
}

// TestReportStation writes the report of one real station
// (../shared/validation: Sterling, 662 soundings per PROVENANCE.md).
func TestReportStation(t *testing.T) {
	v := sharedDir(t)
	store := t.TempDir()
	zip := filepath.Join(v, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, zip); code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	page := filepath.Join(t.TempDir(), "sterling.html")
	if code, _, errs := runCmd(t, "report", "--store", store, "--out", page, "--station", "USM00072403"); code != exitOK {
		t.Fatalf("report: exit %d\n%s", code, errs)
	}
	b, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	// PROVENANCE.md: 662 soundings in 2016 for Sterling.
	if !regexp.MustCompile(`<td>USM00072403</td><td>2016</td><td>662</td>`).Match(b) {
		t.Errorf("coverage row for Sterling 2016 with 662 soundings not found")
	}
	if code, _, errs := runCmd(t, "report", "--store", store, "--out", page, "--station", "NOPE"); code != exitFailure || !strings.Contains(errs, "USM00072403") {
		t.Errorf("unknown station: exit %d, stderr %q", code, errs)
	}
	if code, _, _ := runCmd(t, "report", "--store", store); code != exitUsage {
		t.Errorf("report without --out: exit %d", code)
	}
}
