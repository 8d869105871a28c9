package figures

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/sondeclim/sondeclim/analyze"
)

// TestLegendClearOfTitle: in the monthly figures the title, the legend,
// the plot and the caption each keep to a band of their own, inside the
// page, for 1 to 8 launch hours (3-hourly launches), every mixing-height method and station
// names up to 60 characters (the built-in station list's names are at
// most about 40). The boxes are those the drawing uses (the text's
// measured extents). The monthly mixing-height legend once met the
// title's corner. Set SONDECLIM_FIGURE_DIR to keep the PNGs for a look.
func TestLegendClearOfTitle(t *testing.T) {
	names := []string{"", "STERLING", "INVENTED FIELD STATION WITH A VERY LONG NAME, MOUNTAIN VALLEY AIRPORT"[:60]}
	methods := append([]string{analyze.HeightConsensus}, analyze.MethodNames()...)
	keep := os.Getenv("SONDECLIM_FIGURE_DIR")
	for n := 1; n <= 8; n++ {
		for _, name := range names {
			for _, method := range methods {
				st := Station{ID: "XLAYOUT0001", Name: name, First: time.Date(1991, 1, 1, 0, 0, 0, 0, time.UTC), Last: time.Date(2020, 12, 31, 0, 0, 0, 0, time.UTC)}
				m := &MonthlyHeights{Station: st, Method: method}
				f := &SBIFrequency{Station: st}
				for month := 1; month <= 12; month++ {
					for i := range n {
						h := 3 * i
						m.Boxes = append(m.Boxes, HeightBox{Month: month, Hour: h, N: 30, P10: 100, P25: 400, P50: 800, P75: 1500, P90: 2900})
						f.Cells = append(f.Cells, FrequencyCell{Month: month, Hour: h, Valid: 30, SBI: 29})
					}
				}
				freq := SBIFrequencyFigure(f, 15)
				checkBarNumbers(t, freq, f, n)
				for _, fig := range []*Figure{MonthlyHeightsFigure(m, 15), freq} {
					what := fmt.Sprintf("%s, %d hours, name %q", fig.Name, n, name)
					checkLayout(t, what, fig, n)
					if keep != "" && n == 8 && name == names[2] && method == methods[0] {
						out, err := os.Create(filepath.Join(keep, fig.Name+".png"))
						if err != nil {
							t.Fatal(err)
						}
						if err := fig.Render(out, "png"); err != nil {
							t.Error(err)
						}
						out.Close()
					}
				}
			}
		}
	}
}

// checkBarNumbers checks that the numbers above the bars of a frequency
// figure do not run into each other: each is narrower than the distance
// between neighbouring bars as drawn (the data area taken from the plot's
// own layout). When they are left out, the caption does not promise them.
func checkBarNumbers(t *testing.T, fig *Figure, f *SBIFrequency, hours int) {
	t.Helper()
	s, _ := frequencyShapes(f, 15, fig.Width)
	cp := fig.captioned
	l := cp.layout(vg.Rectangle{Max: vg.Point{X: fig.Width, Y: fig.Height}})
	data := cp.plot.DataCanvas(draw.Canvas{Rectangle: l.Plot})
	step := vg.Length(0.8/float64(hours)/12) * data.Size().X // points between neighbouring bars
	sty := centred(textStyle(labelPt))
	for _, lb := range s.Labels {
		if w := sty.Width(lb.Text); w > step {
			t.Errorf("%s, %d hours: number %q is %v wide, bars %v apart", fig.Name, hours, lb.Text, w, step)
			break
		}
	}
	promised := strings.Contains(cp.caption, "number above a bar")
	if promised != (len(s.Labels) > 0) {
		t.Errorf("%s, %d hours: %d numbers drawn, caption promises them: %v", fig.Name, hours, len(s.Labels), promised)
	}
	if hours <= 2 && len(s.Labels) == 0 {
		t.Errorf("%s, %d hours: no numbers above the bars", fig.Name, hours)
	}
}

// checkLayout checks that the parts of a captioned figure lie on its page
// and do not overlap, and that its legend has one entry per series, each
// inside the legend's box.
func checkLayout(t *testing.T, what string, fig *Figure, series int) {
	t.Helper()
	if fig.captioned == nil {
		t.Fatalf("%s: not drawn withCaption", what)
	}
	page := vg.Rectangle{Max: vg.Point{X: fig.Width, Y: fig.Height}}
	l := fig.captioned.layout(page)
	parts := []struct {
		name string
		r    vg.Rectangle
	}{{"title", l.Title}, {"legend", l.Legend}, {"plot", l.Plot}, {"caption", l.Caption}}
	for i, a := range parts {
		if a.r.Min.X < page.Min.X || a.r.Min.Y < page.Min.Y || a.r.Max.X > page.Max.X || a.r.Max.Y > page.Max.Y {
			t.Errorf("%s: %s %v leaves the page %v", what, a.name, a.r, page)
		}
		for _, b := range parts[i+1:] {
			if overlaps(a.r, b.r) {
				t.Errorf("%s: %s %v overlaps %s %v", what, a.name, a.r, b.name, b.r)
			}
		}
	}
	if l.Plot.Size().Y < fig.Height/2 {
		t.Errorf("%s: the plot keeps only %v of %v", what, l.Plot.Size().Y, fig.Height)
	}
	if len(l.keys) != series {
		t.Errorf("%s: %d legend entries, want %d", what, len(l.keys), series)
	}
	for i, a := range l.keys {
		for _, b := range l.keys[i+1:] {
			if a.Fill == b.Fill {
				t.Errorf("%s: entries %q and %q share a colour", what, a.Label, b.Label)
			}
		}
	}
	for _, k := range l.keys {
		lbl := l.keySt.Rectangle(k.Label).Add(k.At)
		for _, r := range []vg.Rectangle{k.Square, lbl} {
			if r.Min.X < l.Legend.Min.X || r.Max.X > l.Legend.Max.X || r.Min.Y < l.Legend.Min.Y || r.Max.Y > l.Legend.Max.Y {
				t.Errorf("%s: entry %q at %v outside the legend %v", what, k.Label, r, l.Legend)
			}
		}
	}
	if strings.Contains(fig.Title, "\n") {
		t.Errorf("%s: caption title %q has a line break", what, fig.Title)
	}
}

// TestWrapWords: a caption wider than the page is broken at spaces into
// lines that fit, losing no word.
func TestWrapWords(t *testing.T) {
	st := textStyle(captionPt)
	text := strings.Repeat("inversion strength ", 40)
	lines := wrapWords(st, text, 300)
	if len(lines) < 2 {
		t.Fatalf("%d lines", len(lines))
	}
	for _, l := range lines {
		if st.Width(l) > 300 {
			t.Errorf("line %q is %v wide, over 300 pt", l, st.Width(l))
		}
	}
	if strings.Join(lines, " ") != strings.TrimSpace(text) {
		t.Errorf("words lost or changed: %q", strings.Join(lines, " "))
	}
}
