// Package plot draws nodal's figures — Bode plots, Monte Carlo bands,
// pole-zero maps, step responses and histograms — with gonum.org/v1/plot
// and writes them as SVG or PNG. Its inputs are plain slices and small
// structs of its own, so it does not depend on the analysis layer.
//
// Every figure keeps the numbers it plots; (*Figure).Series returns them
// so tests can check the data without looking at the picture.
package plot

import (
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strings"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Supported output formats, as returned by FormatFromPath and accepted by
// (*Figure).Encode.
const (
	FormatSVG = "svg"
	FormatPNG = "png"
)

// pngDPI is the raster resolution of PNG output (dots per inch).
const pngDPI = 144

// Figure is one drawing: one or more panels stacked vertically in a
// single column, all of the same width, with aligned data areas.
//
// A Figure is built by Bode, Band, PoleZero, Step, Histogram or Stack and
// is not safe for concurrent use: laying it out adjusts the axis ranges of
// equal-scaled panels and the place of each legend (idempotently, for the
// figure's current size).
type Figure struct {
	width, height vg.Length
	panels        []*panel
	// laidOut caches the last layout: the page rectangle it was made for
	// and each panel's tile on it. The panels do not change after
	// construction, so a layout depends only on the rectangle.
	laidOut *pageLayout
}

// pageLayout is a cached layout of a figure.
type pageLayout struct {
	page  vg.Rectangle
	tiles []vg.Rectangle
}

// panel is one gonum plot plus the data series it shows.
type panel struct {
	name string
	p    *gplot.Plot
	// equalScale makes one data unit the same length on both axes
	// (the range below is widened on one axis to achieve it).
	equalScale             bool
	xMin, xMax, yMin, yMax float64 // requested range before equalising
	series                 []series
	// legend holds the texts of the legend entries, in order.
	legend []string
	// fills lists pairs of series indexes (lower edge, upper edge, on the
	// same x grid) whose area between is shaded.
	fills [][2]int
	// legendAt and legendHits are the legend box (page coordinates) and
	// the data under it from the last layout.
	legendAt   vg.Rectangle
	legendHits int
	legendOut  bool // legend drawn above the data area
	// legendOutside keeps the legend above the data area always: on a
	// pole-zero map a legend symbol inside the plane reads as a root.
	legendOutside bool
	// baseTitle and basePad are the title and its padding as built,
	// before a legend above the data area makes room for itself.
	baseTitle string
	basePad   vg.Length
	// notes places the panel's annotations (addNotes); nil for none.
	notes *notePlotter
}

// series is a named list of plotted (x, y) points in data units;
// joined series are drawn as a line through the points.
type series struct {
	name   string
	xy     [][2]float64
	joined bool
}

// addSeries records pts under name and returns them as plotter.XYs.
func (pn *panel) addSeries(name string, pts [][2]float64) plotter.XYs {
	pn.series = append(pn.series, series{name: name, xy: pts})
	xys := make(plotter.XYs, len(pts))
	for i, q := range pts {
		xys[i] = plotter.XY{X: q[0], Y: q[1]}
	}
	return xys
}

// addLineSeries is addSeries for points drawn joined by a line.
func (pn *panel) addLineSeries(name string, pts [][2]float64) plotter.XYs {
	xys := pn.addSeries(name, pts)
	pn.series[len(pn.series)-1].joined = true
	return xys
}

// newFigure returns an empty figure of the given size.
func newFigure(w, h vg.Length) *Figure { return &Figure{width: w, height: h} }

// add appends a panel showing p.
func (f *Figure) add(name string, p *gplot.Plot) *panel {
	pn := &panel{name: name, p: p, baseTitle: p.Title.Text, basePad: p.Title.Padding}
	f.panels = append(f.panels, pn)
	return pn
}

// Size returns the figure's width and height.
func (f *Figure) Size() (w, h vg.Length) { return f.width, f.height }

// SetSize changes the figure's width and height; both must be positive.
func (f *Figure) SetSize(w, h vg.Length) error {
	if !(w > 0 && h > 0) {
		return fmt.Errorf("plot: figure size %v × %v must be positive", w, h)
	}
	f.width, f.height = w, h
	return nil
}

// Series returns every plotted data series keyed "PANEL/NAME" in data
// units (Hz, dB, degrees, rad/s, seconds, counts as the panel says); see
// the constructors for the names. The slices are copies.
func (f *Figure) Series() map[string][][2]float64 {
	m := make(map[string][][2]float64)
	for _, pn := range f.panels {
		for _, s := range pn.series {
			m[pn.name+"/"+s.name] = append([][2]float64(nil), s.xy...)
		}
	}
	return m
}

// PanelLayout describes where a panel's data ended up on the page.
type PanelLayout struct {
	Name                   string
	Title, XLabel, YLabel  string
	XMin, XMax, YMin, YMax float64   // final axis ranges in data units
	LogX                   bool      // x axis is logarithmic
	Width, Height          vg.Length // size of the data area
	// Legend is the legend's box relative to the lower-left corner of the
	// data area (zero when the panel has no legend). Inside the data area
	// it sits in the corner with the fewest data; LegendHits counts the
	// plotted points, line segments and shaded band columns within 6 pt
	// of it. When every corner has data the legend goes above the data
	// area (LegendAbove, Legend.Min.Y ≥ Height) and LegendHits is 0.
	Legend      vg.Rectangle
	LegendHits  int
	LegendAbove bool
}

// Layout lays the figure out at its size and returns each panel's final
// axis ranges and data-area size (the same layout Encode draws).
func (f *Figure) Layout() []PanelLayout {
	dc := draw.Canvas{Rectangle: vg.Rectangle{Max: vg.Point{X: f.width, Y: f.height}}}
	tiles := f.layout(dc)
	out := make([]PanelLayout, len(f.panels))
	for i, pn := range f.panels {
		da := pn.p.DataCanvas(tiles[i][0])
		_, logX := pn.p.X.Scale.(gplot.LogScale)
		out[i] = PanelLayout{
			Name: pn.name, Title: pn.baseTitle,
			XLabel: pn.p.X.Label.Text, YLabel: pn.p.Y.Label.Text,
			XMin: pn.p.X.Min, XMax: pn.p.X.Max, YMin: pn.p.Y.Min, YMax: pn.p.Y.Max,
			LogX:  logX,
			Width: da.Max.X - da.Min.X, Height: da.Max.Y - da.Min.Y,
			LegendHits: pn.legendHits, LegendAbove: pn.legendOut,
		}
		if len(pn.legend) > 0 {
			out[i].Legend = pn.legendAt.Add(vg.Point{X: -da.Min.X, Y: -da.Min.Y})
		}
	}
	return out
}

// tilesFor is the page grid: one column, a row per panel.
func (f *Figure) tilesFor() draw.Tiles {
	return draw.Tiles{
		Rows: len(f.panels), Cols: 1,
		PadTop: vg.Points(6), PadBottom: vg.Points(4),
		PadLeft: vg.Points(4), PadRight: vg.Points(12),
		PadY: vg.Points(8),
	}
}

// layout aligns the panels on dc, settles the ranges of equal-scaled
// panels and then puts each legend in the corner of its data area with
// no data or, when every corner has some, above the data area (which
// needs a second alignment, as the room taken shrinks the data area).
func (f *Figure) layout(dc draw.Canvas) [][]draw.Canvas {
	if c := f.laidOut; c != nil && c.page == dc.Rectangle && len(c.tiles) == len(f.panels) {
		cs := make([][]draw.Canvas, len(c.tiles))
		for i, r := range c.tiles {
			cs[i] = []draw.Canvas{{Canvas: dc.Canvas, Rectangle: r}}
		}
		return cs
	}
	cs := f.placeLegends(dc)
	f.laidOut = &pageLayout{page: dc.Rectangle}
	for _, row := range cs {
		f.laidOut.tiles = append(f.laidOut.tiles, row[0].Rectangle)
	}
	return cs
}

// placeLegends aligns the panels on dc (see align) and places their
// legends (see layout).
func (f *Figure) placeLegends(dc draw.Canvas) [][]draw.Canvas {
	for _, pn := range f.panels {
		pn.legendInside()
	}
	cs := f.align(dc)
	moved := false
	for i, pn := range f.panels {
		pn.legendAt, pn.legendHits = pn.placeLegend(pn.p.DataCanvas(cs[i][0]))
		if pn.legendHits > 0 || (pn.legendOutside && len(pn.legend) > 0) {
			pn.legendAbove()
			moved = true
		}
	}
	if !moved {
		return cs
	}
	cs = f.align(dc)
	for i, pn := range f.panels {
		if pn.legendOut {
			pn.legendAt, pn.legendHits = pn.aboveBox(pn.p.DataCanvas(cs[i][0])), 0
		}
	}
	return cs
}

// align aligns the panels on dc and settles the ranges of equal-scaled
// panels. Changing a range can change the tick labels and so the data
// area, hence the few rounds.
func (f *Figure) align(dc draw.Canvas) [][]draw.Canvas {
	plots := make([][]*gplot.Plot, len(f.panels))
	for i, pn := range f.panels {
		plots[i] = []*gplot.Plot{pn.p}
	}
	tiles := f.tilesFor()
	for round := 0; round < 6; round++ {
		cs := gplot.Align(plots, tiles, dc)
		settled := true
		for i, pn := range f.panels {
			if pn.equalScale && !pn.equalise(pn.p.DataCanvas(cs[i][0])) {
				settled = false
			}
		}
		if settled {
			return cs
		}
	}
	return gplot.Align(plots, tiles, dc)
}

// equalise sets the axis ranges so that one data unit has the same length
// on both axes of the data area da, widening the requested range about its
// centre on one axis. It reports whether the ranges were already so.
func (pn *panel) equalise(da draw.Canvas) bool {
	w := float64(da.Max.X - da.Min.X)
	h := float64(da.Max.Y - da.Min.Y)
	if w <= 0 || h <= 0 {
		return true
	}
	perLen := math.Max((pn.xMax-pn.xMin)/w, (pn.yMax-pn.yMin)/h)
	xc, yc := (pn.xMin+pn.xMax)/2, (pn.yMin+pn.yMax)/2
	x0, x1 := xc-perLen*w/2, xc+perLen*w/2
	y0, y1 := yc-perLen*h/2, yc+perLen*h/2
	near := func(a, b float64) bool { return math.Abs(a-b) <= 1e-9*perLen*math.Max(w, h) }
	ok := near(pn.p.X.Min, x0) && near(pn.p.X.Max, x1) && near(pn.p.Y.Min, y0) && near(pn.p.Y.Max, y1)
	pn.p.X.Min, pn.p.X.Max, pn.p.Y.Min, pn.p.Y.Max = x0, x1, y0, y1
	return ok
}

// Encode draws the figure and writes it to w in format (FormatSVG or
// FormatPNG; see FormatFromPath).
func (f *Figure) Encode(w io.Writer, format string) error {
	if len(f.panels) == 0 {
		return errors.New("plot: figure has no panels")
	}
	var cw vg.CanvasWriterTo
	switch format {
	case FormatSVG:
		cw = vgsvg.New(f.width, f.height)
	case FormatPNG:
		cw = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(f.width, f.height), vgimg.UseDPI(pngDPI))}
	default:
		return fmt.Errorf("plot: unsupported format %q (supported: %s, %s)", format, FormatSVG, FormatPNG)
	}
	dc := draw.New(cw)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	tiles := f.layout(dc)
	for i, pn := range f.panels {
		pn.p.Draw(tiles[i][0])
	}
	if _, err := cw.WriteTo(w); err != nil {
		return fmt.Errorf("plot: writing %s: %w", format, err)
	}
	return nil
}

// FormatFromPath returns the output format for a file name by its
// extension (case-insensitive): ".svg" → FormatSVG, ".png" → FormatPNG.
// Any other extension is an error naming the supported ones.
func FormatFromPath(path string) (string, error) {
	switch ext := strings.ToLower(filepath.Ext(path)); ext {
	case ".svg":
		return FormatSVG, nil
	case ".png":
		return FormatPNG, nil
	case "":
		return "", fmt.Errorf("plot file %q has no extension; supported: .svg, .png", path)
	default:
		return "", fmt.Errorf("plot file %q: unsupported extension %q; supported: .svg, .png", path, ext)
	}
}

// Stack puts the panels of several figures into one figure, top to
// bottom, as wide as the widest and as tall as all together. Panel names
// must stay unique (for Series); the figures given must not be used
// afterwards.
func Stack(figs ...*Figure) (*Figure, error) {
	out := &Figure{}
	seen := map[string]bool{}
	for _, f := range figs {
		if f == nil {
			continue
		}
		out.width = max(out.width, f.width)
		out.height += f.height
		for _, pn := range f.panels {
			if seen[pn.name] {
				return nil, fmt.Errorf("plot: cannot stack two panels named %q", pn.name)
			}
			seen[pn.name] = true
			out.panels = append(out.panels, pn)
		}
	}
	if len(out.panels) == 0 {
		return nil, errors.New("plot: nothing to stack")
	}
	return out, nil
}
