package plot

import (
	"image/color"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The nodal plot scheme: dark ink on white, one restrained hue per trace,
// and every trace also told apart by its dash pattern so that a grey-scale
// print stays readable (no marker glyphs on curves: a symbol on a curve
// reads as a marked point).
var (
	inkColor   = color.RGBA{R: 0x22, G: 0x26, B: 0x2e, A: 0xff} // axes and text
	gridMajor  = color.RGBA{R: 0xb8, G: 0xbc, B: 0xc4, A: 0xff}
	gridMinor  = color.RGBA{R: 0xe2, G: 0xe4, B: 0xe8, A: 0xff}
	bandFill   = color.NRGBA{R: 0x9c, G: 0xb4, B: 0xd0, A: 0x99} // Monte Carlo envelope (non-premultiplied)
	bandEdge   = color.RGBA{R: 0x5a, G: 0x74, B: 0x94, A: 0xff}
	limitColor = color.RGBA{R: 0xa8, G: 0x32, B: 0x1e, A: 0xff} // requirement limits
	markColor  = color.RGBA{R: 0x10, G: 0x10, B: 0x10, A: 0xff} // −3 dB, peak, step marks
	histFill   = color.RGBA{R: 0xc6, G: 0xd0, B: 0xdc, A: 0xff}
)

// traceColors are deliberately spread in lightness as well as hue.
var traceColors = []color.RGBA{
	{R: 0x1d, G: 0x4e, B: 0x89, A: 0xff}, // deep blue
	{R: 0xb2, G: 0x4a, B: 0x1b, A: 0xff}, // rust
	{R: 0x2f, G: 0x7d, B: 0x4f, A: 0xff}, // pine
	{R: 0x6e, G: 0x3f, B: 0x8f, A: 0xff}, // plum
	{R: 0x9a, G: 0x7b, B: 0x10, A: 0xff}, // ochre
	{R: 0x11, G: 0x11, B: 0x11, A: 0xff}, // black
}

// traceDashes are the dash patterns in points; nil is a solid line.
var traceDashes = [][]vg.Length{
	nil,
	{vg.Points(6), vg.Points(3)},
	{vg.Points(1.5), vg.Points(2)},
	{vg.Points(8), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)},
	{vg.Points(3), vg.Points(3)},
	{vg.Points(10), vg.Points(4)},
}

// traceStyle is the line style of trace i (cycling).
type traceStyle struct {
	line draw.LineStyle
}

func styleFor(i int) traceStyle {
	c := traceColors[i%len(traceColors)]
	return traceStyle{
		line: draw.LineStyle{
			Color:  c,
			Width:  vg.Points(1.4),
			Dashes: traceDashes[i%len(traceDashes)],
		},
	}
}

// Font sizes in points.
const (
	tickFontPt  = 8.5
	labelFontPt = 10
	titleFontPt = 11
	noteFontPt  = 8
)

// newPanel returns a gonum plot with the nodal look: ink-coloured thin
// axes, small tick labels, legend at the top right.
func newPanel(title, xLabel, yLabel string) *gplot.Plot {
	p := gplot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = sansFont(titleFontPt)
	p.Title.TextStyle.Color = inkColor
	p.Title.Padding = vg.Points(4)
	for _, a := range []*gplot.Axis{&p.X, &p.Y} {
		a.Color = inkColor
		a.Width = vg.Points(0.6)
		a.Tick.Color = inkColor
		a.Tick.Width = vg.Points(0.5)
		a.Tick.Length = vg.Points(4)
		a.Tick.Label.Font = sansFont(tickFontPt)
		a.Tick.Label.Color = inkColor
		a.Label.TextStyle.Font = sansFont(labelFontPt)
		a.Label.TextStyle.Color = inkColor
		a.Padding = vg.Points(2)
		a.Tick.Marker = linearTicks{}
	}
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.Legend.Top = true
	p.Legend.TextStyle.Font = sansFont(tickFontPt)
	p.Legend.TextStyle.Color = inkColor
	p.Legend.ThumbnailWidth = vg.Points(26)
	p.Legend.Padding = vg.Points(3) // entries one font descent apart: their text boxes never touch
	p.Legend.XOffs = -vg.Points(4)
	p.Legend.YOffs = -vg.Points(4)
	return p
}

// noteStyle is the text style of in-plot annotations.
func noteStyle() draw.TextStyle {
	return draw.TextStyle{
		Color:   markColor,
		Font:    sansFont(noteFontPt),
		XAlign:  draw.XLeft,
		YAlign:  draw.YBottom,
		Handler: gplot.DefaultTextHandler,
	}
}

// sansFont is the plots' typeface (Liberation Sans, bundled with gonum
// plot) at size points.
func sansFont(size float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
}
