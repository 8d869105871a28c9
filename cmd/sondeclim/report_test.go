package main

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/ingest/synth"
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

// probe is added to a copy of the report. On load it measures what a
// reader sees and writes it into the title, which --dump-dom returns: the
// window width, the figures loaded, the tables that need a horizontal
// scroll bar (a table wider than its box), the right edge of the
// climatology table's "Median" heading, the page's width, and whether an
// error occurred (scripts or resources).
const probe = `<script>
var failed = false;
window.addEventListener('error', function () { failed = true; }, true);
window.addEventListener('load', function () {
  var imgs = document.querySelectorAll('img'), loaded = 0;
  for (var i = 0; i < imgs.length; i++) {
    if (imgs[i].complete && imgs[i].naturalWidth > 0) { loaded++; }
  }
  var boxes = document.querySelectorAll('div.scroll'), over = 0;
  for (var i = 0; i < boxes.length; i++) {
    if (boxes[i].scrollWidth > boxes[i].clientWidth + 1) { over++; }
  }
  var median = -1, ths = document.querySelectorAll('div.climatology th');
  for (var i = 0; i < ths.length; i++) {
    if (ths[i].textContent.trim() === 'Median') { median = Math.round(ths[i].getBoundingClientRect().right); break; }
  }
  document.title = 'PROBE window=' + window.innerWidth + ' images=' + loaded + '/' + imgs.length +
    ' tables=' + boxes.length + ' overflowing=' + over + ' median_right=' + median +
    ' page=' + document.documentElement.scrollWidth + (failed ? ' ERROR' : '');
});
</script>
</body>`

// probeResult is what the probe wrote.
type probeResult struct {
	window, images, figures, tables, overflowing, medianRight, page int
	failed                                                          bool
}

// runProbe renders html (a report page in dir) with the probe in a
// headless Chromium window of the given size and returns its findings.
func runProbe(t *testing.T, bin, dir, html, size string) probeResult {
	t.Helper()
	probed := filepath.Join(dir, "probed.html")
	if err := os.WriteFile(probed, []byte(strings.Replace(html, "</body>", probe, 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	dom := runChromium(t, bin, "file://"+probed, "--window-size="+size, "--dump-dom")
	title := regexp.MustCompile(`<title>(PROBE [^<]*)</title>`).FindStringSubmatch(dom)
	if title == nil {
		t.Fatalf("the probe did not run in Chromium: %.300s", dom)
	}
	var p probeResult
	if _, err := fmt.Sscanf(title[1], "PROBE window=%d images=%d/%d tables=%d overflowing=%d median_right=%d page=%d",
		&p.window, &p.images, &p.figures, &p.tables, &p.overflowing, &p.medianRight, &p.page); err != nil {
		t.Fatalf("probe %q: %v", title[1], err)
	}
	p.failed = strings.HasSuffix(title[1], "ERROR")
	return p
}

// normaliseReport replaces what changes from run to run in a report page
// (date, program version, store path) by fixed words, for the golden file.
func normaliseReport(html, store string) string {
	html = regexp.MustCompile(`<td id="generated">[^<]*</td>`).ReplaceAllString(html, `<td id="generated">DATE</td>`)
	html = regexp.MustCompile(`sondeclim \d+\.\d+\.\d+[^<.]*`).ReplaceAllString(html, "sondeclim VERSION")
	return strings.ReplaceAll(html, store, "STORE")
}

// TestReport writes the report of the demo store, compares the page with
// its golden file (figures as files: the page holds their names only), and
// renders it in headless Chromium in a 1,400 × 900 px window: every figure
// must load, the climatology table's median column must lie inside the
// window, and no table may need a horizontal scroll bar. The same check in
// a 700 px window must find overflowing tables, so it can fail.
func TestReport(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runCmd(t, "demo", "--dir", dir, "--years", "1", "--workers", "2"); code != exitOK {
		t.Fatalf("demo: exit %d\n%s", code, errs)
	}
	store := filepath.Join(dir, "store")
	page := filepath.Join(dir, "report.html")
	code, out, errs := runCmd(t, "report", "--store", store, "--out", page)
	if code != exitOK || !strings.Contains(out, "1 stations with a section, 0 listed only, 4 figures") {
		t.Fatalf("report: exit %d, %q\n%s", code, out, errs)
	}
	b, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	html := string(b)
	golden(t, "report.html", normaliseReport(html, store))
	// Self-contained: no URL-loaded script, style, font or image.
	if m := regexp.MustCompile(`(?i)(src|href)\s*=\s*"(https?:|//)|@import|url\(\s*['"]?https?:`).FindString(html); m != "" {
		t.Errorf("report refers to something outside the page: %q", m)
	}
	for _, want := range []string{"ZZXSYN00001", "Caution.", "defer to local regulations and licensed meteorological practice",
		"42.37° N, 101.85° W, 560 m above sea level", "Median", "Guidance", "Trends", "Quality control", "Episodes",
		"schema version", "derivation version"} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(html, "from memory") {
		t.Errorf("report still has references given from memory")
	}
	// Coverage of the invented year: 365 days × 2 soundings, all valid.
	if !regexp.MustCompile(`<td>ZZXSYN00001</td><td>2001</td><td>730</td><td>730</td><td>0</td>`).MatchString(html) {
		t.Errorf("coverage row for 2001 not found")
	}
	figs, err := filepath.Glob(filepath.Join(dir, "report-figures", "*.png"))
	if err != nil || len(figs) != 4 {
		t.Errorf("%d figure files beside the page, want 4", len(figs))
	}
	for _, f := range figs {
		fb, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := png.Decode(bytes.NewReader(fb)); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}

	bin := chromium(t)
	p := runProbe(t, bin, dir, html, "1400,900")
	switch {
	case p.window != 1400:
		t.Errorf("Chromium's window is %d px wide, not 1400: the layout checks mean nothing", p.window)
	case p.failed || p.images != 4 || p.figures != 4:
		t.Errorf("figures: %d of %d loaded (error: %v)", p.images, p.figures, p.failed)
	case p.medianRight <= 0 || p.medianRight > p.window:
		t.Errorf("the climatology's median column ends at %d px, outside the %d px window", p.medianRight, p.window)
	case p.overflowing != 0 || p.page > p.window:
		t.Errorf("%d of %d tables need a horizontal scroll bar (page %d px wide)", p.overflowing, p.tables, p.page)
	}
	if narrow := runProbe(t, bin, dir, html, "700,900"); narrow.overflowing == 0 {
		t.Errorf("in a 700 px window no table overflows: the overflow check cannot fail (%+v)", narrow)
	}

	shot := filepath.Join(dir, "shot.png")
	runChromium(t, bin, "file://"+page, "--window-size=1400,1600", "--screenshot="+shot)
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

	// --embed: one file, the same four figures inside it.
	one := filepath.Join(dir, "one.html")
	if code, _, errs := runCmd(t, "report", "--store", store, "--out", one, "--embed"); code != exitOK {
		t.Fatalf("report --embed: exit %d\n%s", code, errs)
	}
	eb, err := os.ReadFile(one)
	if err != nil {
		t.Fatal(err)
	}
	if n := strings.Count(string(eb), `<img src="data:image/png;base64,`); n != 4 {
		t.Errorf("--embed: %d embedded figures, want 4", n)
	}
	if _, err := os.Stat(filepath.Join(dir, "one-figures")); err == nil {
		t.Errorf("--embed wrote a figures folder")
	}
	if code, _, _ := runCmd(t, "report", "--store", store, "--out", one, "--min-soundings", "0"); code != exitUsage {
		t.Errorf("--min-soundings 0: exit %d, want %d", code, exitUsage)
	}
	// A minimum above the station's 730 valid soundings lists it only.
	code, out, errs = runCmd(t, "report", "--store", store, "--out", one, "--min-soundings", "731")
	if code != exitOK || !strings.Contains(out, "0 stations with a section, 1 listed only, 0 figures") {
		t.Errorf("--min-soundings 731: exit %d, %q\n%s", code, out, errs)
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
	if code, _, errs := runCmd(t, "report", "--store", store, "--out", page, "--station", "NOPE"); code != exitNoMatch || !strings.Contains(errs, "USM00072403") {
		t.Errorf("unknown station: exit %d, stderr %q", code, errs)
	}
	if code, _, _ := runCmd(t, "report", "--store", store); code != exitUsage {
		t.Errorf("report without --out: exit %d", code)
	}
}

// TestReportSize checks the size goal of a report of many stations (a
// 100-station store under 5 MB, page and figures, also with --embed) on
// 12 invented stations of one year each: more than
// report.FullFigureStations, so the report is in its compact form. Size
// in bytes is a property of the output, not of the machine, so it may be
// bounded; the bound is the goal's 50 KB per station less room for the
// parts of the page that do not repeat per station.
func TestReportSize(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in")
	if err := os.Mkdir(in, 0o755); err != nil {
		t.Fatal(err)
	}
	const stations = 12
	for i := range stations {
		cfg := synth.DefaultConfig()
		cfg.StationIndex, cfg.Years, cfg.Seed = i, 1, uint64(i+1)
		if _, _, err := synth.WriteFile(in, cfg); err != nil {
			t.Fatal(err)
		}
	}
	store := filepath.Join(dir, "store")
	if code, _, errs := runCmd(t, "ingest", "--quiet", "--store", store, in); code != exitOK {
		t.Fatalf("ingest: exit %d\n%s", code, errs)
	}
	const perStation = 45_000 // bytes
	for _, embed := range []bool{false, true} {
		page := filepath.Join(dir, fmt.Sprintf("r-%v.html", embed))
		args := []string{"report", "--store", store, "--out", page}
		if embed {
			args = append(args, "--embed")
		}
		code, out, errs := runCmd(t, args...)
		if code != exitOK || !strings.Contains(out, fmt.Sprintf("%d stations with a section, 0 listed only, %d figures", stations, stations)) {
			t.Fatalf("report (embed %v): exit %d, %q\n%s", embed, code, out, errs)
		}
		var total int64
		files, _ := filepath.Glob(filepath.Join(dir, fmt.Sprintf("r-%v-figures", embed), "*.png"))
		for _, f := range append(files, page) {
			fi, err := os.Stat(f)
			if err != nil {
				t.Fatal(err)
			}
			total += fi.Size()
		}
		if total > stations*perStation {
			t.Errorf("embed %v: %d bytes for %d stations, more than %d per station: 100 stations would pass 5 MB",
				embed, total, stations, perStation)
		}
		t.Logf("embed %v: %d bytes, %d per station", embed, total, total/stations)
	}
}
