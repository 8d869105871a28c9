package figures

import (
	"image/color"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// legendKey is one entry of a figure's legend: a filled square and its
// label.
type legendKey struct {
	Label string
	Fill  color.Color
}

// Spacing of a captioned figure, in points.
const (
	edgePt       = 5  // between the page's edge and anything drawn
	bandGapPt    = 5  // between the title, legend, plot and caption bands
	keyGapPt     = 14 // between two legend entries of a row
	keyTextGapPt = 4  // between a legend square and its label
	keyRowGapPt  = 3  // between two rows of legend entries
	captionPt    = 8  // caption font size
	minTitlePt   = 8  // smallest title font size when a long title is shrunk to fit
)

// captioned is a plot drawn with its title, legend and caption each in a
// band of its own, top down: the title centred at the top, the legend in
// rows right-aligned with the plot under it, the plot, and the caption
// wrapped into lines at the bottom. gonum plot draws the legend inside
// or over the data area, where (moved up beside the title) it met the
// title's corner; bands cannot overlap, whatever the title's length or
// the number of entries.
type captioned struct {
	plot    *plot.Plot
	title   string
	titleSt draw.TextStyle
	keys    []legendKey
	keySt   draw.TextStyle
	caption string
}

// withCaption returns p to be drawn with its title, the legend keys and a
// caption under it (captioned). It takes over the plot's title: p draws
// none of its own afterwards.
func withCaption(p *plot.Plot, caption string, keys ...legendKey) *captioned {
	c := &captioned{plot: p, title: p.Title.Text, titleSt: p.Title.TextStyle, keys: keys, keySt: p.Legend.TextStyle, caption: caption}
	p.Title.Text = ""
	return c
}

// placedKey is a legend entry as laid out: its square and the anchor of
// its label (left, vertically centred).
type placedKey struct {
	Square vg.Rectangle
	At     vg.Point
	legendKey
}

// captionLayout is where each part of a captioned figure goes on a page.
// Title, Legend and Caption are the boxes of their text and squares;
// Legend is empty (zero size) without keys. Plot is the rectangle the
// plot (axes, their labels and the data area) is drawn in.
type captionLayout struct {
	Page, Title, Legend, Plot, Caption vg.Rectangle

	titleSt      draw.TextStyle
	titleAt      vg.Point
	keySt        draw.TextStyle
	keys         []placedKey
	captionSt    draw.TextStyle
	captionLines []string
	captionAt    []vg.Point
}

// layout places the parts of c on page.
func (c *captioned) layout(page vg.Rectangle) captionLayout {
	l := captionLayout{Page: page}
	left, right := page.Min.X+vg.Points(edgePt), page.Max.X-vg.Points(edgePt)
	width := right - left
	// The plot's right edge leaves room for the last tick label, which
	// gonum centres on the axis end; the legend ends there too.
	plotRight := right - vg.Points(4)

	// Title: centred at the top, shrunk until it fits the width.
	l.titleSt = c.titleSt
	l.titleSt.XAlign, l.titleSt.YAlign = draw.XCenter, draw.YTop
	for l.titleSt.Width(c.title) > width && l.titleSt.Font.Size > vg.Points(minTitlePt) {
		l.titleSt.Font.Size -= vg.Points(0.5)
	}
	top := page.Max.Y - vg.Points(edgePt)
	l.titleAt = vg.Point{X: (left + right) / 2, Y: top}
	l.Title = vg.Rectangle{Min: l.titleAt, Max: l.titleAt}
	if c.title != "" {
		l.Title = l.titleSt.Rectangle(c.title).Add(l.titleAt)
		top = l.Title.Min.Y - vg.Points(bandGapPt)
	}

	// Caption: wrapped at words, lines from the bottom up.
	l.captionSt = textStyle(captionPt)
	l.captionLines = wrapWords(l.captionSt, c.caption, width)
	lineH := l.captionSt.Height("Xg") * 1.15
	bottom := page.Min.Y + vg.Points(edgePt)
	l.Caption = vg.Rectangle{Min: vg.Point{X: left, Y: bottom}, Max: vg.Point{X: left, Y: bottom}}
	for i := range l.captionLines {
		y := bottom + vg.Length(len(l.captionLines)-1-i)*lineH
		l.captionAt = append(l.captionAt, vg.Point{X: left, Y: y})
		r := l.captionSt.Rectangle(l.captionLines[i]).Add(vg.Point{X: left, Y: y})
		l.Caption = union(l.Caption, r, i == 0)
	}
	if len(l.captionLines) > 0 {
		bottom = l.Caption.Max.Y + vg.Points(bandGapPt)
	}

	// Legend: rows of entries right-aligned with the plot, as many a row
	// as fit the width.
	size := c.keySt.Height("Xg")
	keySt := c.keySt
	keySt.XAlign, keySt.YAlign = draw.XLeft, draw.YCenter
	entryW := func(k legendKey) vg.Length { return size + vg.Points(keyTextGapPt) + keySt.Width(k.Label) }
	var rows [][]legendKey
	var rowW vg.Length
	for _, k := range c.keys {
		w := entryW(k)
		if n := len(rows); n > 0 && rowW+vg.Points(keyGapPt)+w <= plotRight-left {
			rows[n-1] = append(rows[n-1], k)
			rowW += vg.Points(keyGapPt) + w
			continue
		}
		rows = append(rows, []legendKey{k})
		rowW = w
	}
	l.Legend = vg.Rectangle{Min: vg.Point{X: plotRight, Y: top}, Max: vg.Point{X: plotRight, Y: top}}
	y := top
	for _, row := range rows {
		var w vg.Length
		for i, k := range row {
			if i > 0 {
				w += vg.Points(keyGapPt)
			}
			w += entryW(k)
		}
		x := plotRight - w
		mid := y - size/2
		for _, k := range row {
			sq := vg.Rectangle{Min: vg.Point{X: x, Y: mid - size/2}, Max: vg.Point{X: x + size, Y: mid + size/2}}
			at := vg.Point{X: x + size + vg.Points(keyTextGapPt), Y: mid}
			l.keys = append(l.keys, placedKey{Square: sq, At: at, legendKey: k})
			l.Legend = union(l.Legend, sq, len(l.keys) == 1)
			l.Legend = union(l.Legend, keySt.Rectangle(k.Label).Add(at), false)
			x += entryW(k) + vg.Points(keyGapPt)
		}
		y -= size + vg.Points(keyRowGapPt)
	}
	if len(l.keys) > 0 {
		top = l.Legend.Min.Y - vg.Points(bandGapPt)
	}

	// The plot takes the rest.
	l.Plot = vg.Rectangle{Min: vg.Point{X: left, Y: bottom}, Max: vg.Point{X: plotRight, Y: top}}
	l.keySt = keySt
	return l
}

// draw draws c on the canvas dc.
func (c *captioned) draw(dc draw.Canvas) {
	l := c.layout(dc.Rectangle)
	if c.title != "" {
		dc.FillText(l.titleSt, l.titleAt, c.title)
	}
	for _, k := range l.keys {
		sq := k.Square
		dc.FillPolygon(k.Fill, []vg.Point{sq.Min, {X: sq.Max.X, Y: sq.Min.Y}, sq.Max, {X: sq.Min.X, Y: sq.Max.Y}})
		dc.FillText(l.keySt, k.At, k.Label)
	}
	c.plot.Draw(draw.Canvas{Canvas: dc.Canvas, Rectangle: l.Plot})
	for i, line := range l.captionLines {
		dc.FillText(l.captionSt, l.captionAt[i], line)
	}
}

// union returns the smallest rectangle holding a and b; with first, b alone.
func union(a, b vg.Rectangle, first bool) vg.Rectangle {
	if first {
		return b
	}
	return vg.Rectangle{
		Min: vg.Point{X: min(a.Min.X, b.Min.X), Y: min(a.Min.Y, b.Min.Y)},
		Max: vg.Point{X: max(a.Max.X, b.Max.X), Y: max(a.Max.Y, b.Max.Y)},
	}
}

// overlaps reports whether two rectangles share more than an edge.
func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}

// wrapWords splits text into lines no wider than width in style st,
// breaking at spaces; a word wider than width gets a line of its own.
func wrapWords(st draw.TextStyle, text string, width vg.Length) []string {
	var lines []string
	line := ""
	for _, w := range strings.Fields(text) {
		if line != "" && st.Width(line+" "+w) > width {
			lines = append(lines, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += w
	}
	if line != "" {
		lines = append(lines, line)
	}
	return lines
}
