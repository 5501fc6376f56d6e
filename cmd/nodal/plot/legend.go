package plot

import (
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// legendInset is how far the legend sits inside the data area's corner.
var legendInset = vg.Points(4)

// legendClearance is the free margin kept around the legend box when
// looking for data under it; it also covers the few points by which
// gonum's glyph padding makes the data area smaller than the area the
// legend is drawn in.
var legendClearance = vg.Points(6)

// legendCorner is one place for a legend inside the data area.
type legendCorner struct {
	top, left bool
}

// legendCorners are the candidate places in order of preference: top
// right, bottom right, top left, bottom left.
var legendCorners = [...]legendCorner{{true, false}, {false, false}, {true, true}, {false, true}}

// addLegend adds an entry to the panel's legend and records its text
// (gonum keeps the entries private; placement needs their size).
func (pn *panel) addLegend(text string, thumbs ...gplot.Thumbnailer) {
	pn.legend = append(pn.legend, text)
	pn.p.Legend.Add(text, thumbs...)
}

// legendBox is the extent of the legend on the data area da when placed
// in corner k, as gonum's Legend.Draw lays it out (entries one under the
// other, the thumbnail on the side of the corner).
func (pn *panel) legendBox(da draw.Canvas, k legendCorner) vg.Rectangle {
	l := &pn.p.Legend
	sty := l.TextStyle
	var textW vg.Length
	for _, s := range pn.legend {
		r := sty.Rectangle(s)
		textW = max(textW, r.Max.X-r.Min.X)
	}
	w := l.ThumbnailWidth + sty.Rectangle(" ").Max.X + textW
	h := pn.legendHeight()
	var r vg.Rectangle
	if k.left {
		r.Min.X = da.Min.X + legendInset
		r.Max.X = r.Min.X + w
	} else {
		r.Max.X = da.Max.X - legendInset
		r.Min.X = r.Max.X - w
	}
	if k.top {
		r.Max.Y = da.Max.Y - sty.FontExtents().Descent - legendInset
		r.Min.Y = r.Max.Y - h
	} else {
		r.Min.Y = da.Min.Y + legendInset
		r.Max.Y = r.Min.Y + h
	}
	return r
}

// legendInside undoes legendAbove, so that every layout starts from the
// panel as built.
func (pn *panel) legendInside() {
	pn.p.Title.Text, pn.p.Title.Padding = pn.baseTitle, pn.basePad
	pn.legendOut = false
}

// legendAbove moves the legend out of the data area to just above its
// top right corner, making room for it under the title (a panel without
// a title gets a blank one so that gonum keeps the padding). Used when
// every corner covers data.
func (pn *panel) legendAbove() {
	h := pn.legendHeight()
	if pn.p.Title.Text == "" {
		pn.p.Title.Text = " "
	}
	pn.p.Title.Padding = pn.basePad + h + 2*legendInset
	l := &pn.p.Legend
	l.Top, l.Left = true, false
	l.XOffs = -legendInset
	l.YOffs = legendInset + h + l.TextStyle.FontExtents().Descent
	pn.legendOut = true
}

// aboveBox is the legend box that legendAbove gives on data area da.
func (pn *panel) aboveBox(da draw.Canvas) vg.Rectangle {
	r := pn.legendBox(da, legendCorner{top: true})
	h := r.Max.Y - r.Min.Y
	r.Min.Y = da.Max.Y + legendInset
	r.Max.Y = r.Min.Y + h
	return r
}

// legendHeight is the height of the legend's entries stacked.
func (pn *panel) legendHeight() vg.Length {
	var enth vg.Length
	for _, s := range pn.legend {
		enth = max(enth, pn.p.Legend.TextStyle.Rectangle(s).Max.Y)
	}
	n := vg.Length(len(pn.legend))
	return n*enth + (n-1)*pn.p.Legend.Padding
}

// setLegendCorner puts the gonum legend in corner k.
func (pn *panel) setLegendCorner(k legendCorner) {
	l := &pn.p.Legend
	l.Top, l.Left = k.top, k.left
	l.XOffs, l.YOffs = -legendInset, -legendInset
	if k.left {
		l.XOffs = legendInset
	}
	if !k.top {
		l.YOffs = legendInset
	}
}

// placeLegend puts the legend in the corner of the data area da where it
// covers the fewest data: plotted points, the segments of joined series
// and the area filled between band edges, all counted within
// legendClearance of the box. Ties go to the earlier corner of
// legendCorners, so a free top right is kept. It returns the box chosen
// (in page coordinates) and the number of data hits under it; when every
// corner is covered the legend is left in the least covered one (layout
// then moves it above the data area).
func (pn *panel) placeLegend(da draw.Canvas) (vg.Rectangle, int) {
	if len(pn.legend) == 0 {
		return vg.Rectangle{}, 0
	}
	best, bestHits := legendCorners[0], math.MaxInt
	var bestBox vg.Rectangle
	for _, k := range legendCorners {
		box := pn.legendBox(da, k)
		if hits := pn.dataUnder(da, box); hits < bestHits {
			best, bestHits, bestBox = k, hits, box
		}
	}
	pn.setLegendCorner(best)
	return bestBox, bestHits
}

// dataUnder counts the data of the panel drawn inside box widened by
// legendClearance.
func (pn *panel) dataUnder(da draw.Canvas, box vg.Rectangle) int {
	box.Min.X -= legendClearance
	box.Min.Y -= legendClearance
	box.Max.X += legendClearance
	box.Max.Y += legendClearance
	trX, trY := pn.p.Transforms(&da)
	at := func(q [2]float64) vg.Point { return vg.Point{X: trX(q[0]), Y: trY(q[1])} }
	hits := 0
	for _, s := range pn.series {
		for i, q := range s.xy {
			p := at(q)
			switch {
			case inRect(box, p):
				hits++
			case s.joined && i > 0 && segmentHitsRect(at(s.xy[i-1]), p, box):
				hits++
			}
		}
	}
	for _, b := range pn.fills {
		lo, hi := pn.series[b[0]].xy, pn.series[b[1]].xy
		for i := range min(len(lo), len(hi)) {
			x := trX(lo[i][0])
			y0, y1 := trY(lo[i][1]), trY(hi[i][1])
			if x >= box.Min.X && x <= box.Max.X && min(y0, y1) <= box.Max.Y && max(y0, y1) >= box.Min.Y {
				hits++
			}
		}
	}
	return hits
}

// inRect reports whether p lies in r (edges included).
func inRect(r vg.Rectangle, p vg.Point) bool {
	return p.X >= r.Min.X && p.X <= r.Max.X && p.Y >= r.Min.Y && p.Y <= r.Max.Y
}

// segmentHitsRect reports whether the segment a–b meets rectangle r
// (Liang–Barsky clipping: Liang & Barsky, "A new concept and method for
// line clipping", ACM TOG 3(1), 1984).
func segmentHitsRect(a, b vg.Point, r vg.Rectangle) bool {
	t0, t1 := 0.0, 1.0
	dx, dy := float64(b.X-a.X), float64(b.Y-a.Y)
	for _, e := range [4][2]float64{
		{-dx, float64(a.X - r.Min.X)},
		{dx, float64(r.Max.X - a.X)},
		{-dy, float64(a.Y - r.Min.Y)},
		{dy, float64(r.Max.Y - a.Y)},
	} {
		p, q := e[0], e[1]
		if p == 0 {
			if q < 0 {
				return false
			}
			continue
		}
		t := q / p
		if p < 0 {
			t0 = math.Max(t0, t)
		} else {
			t1 = math.Min(t1, t)
		}
		if t0 > t1 {
			return false
		}
	}
	return true
}
