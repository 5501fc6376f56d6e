package plot

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// PoleZeroOptions are the presentation choices of PoleZero.
type PoleZeroOptions struct {
	// Title is printed above the map; empty for none.
	Title string
	// Size is the width and the height of the square figure; zero for 12 cm.
	Size vg.Length
}

// PanelPoleZero is the panel name of the pole-zero map in Series keys.
const PanelPoleZero = "polezero"

// OmegaScale returns the factor and unit used to label an s-plane axis
// whose largest magnitude is maxAbsRad (rad/s): 1 "rad/s" below 10⁴,
// 10³ "krad/s" below 10⁷, 10⁶ "Mrad/s" below 10¹⁰, else 10⁹ "Grad/s".
// Tick values are the plotted rad/s values divided by the factor.
func OmegaScale(maxAbsRad float64) (factor float64, unit string) {
	switch m := math.Abs(maxAbsRad); {
	case !(m >= 1e4): // also NaN
		return 1, "rad/s"
	case m < 1e7:
		return 1e3, "krad/s"
	case m < 1e10:
		return 1e6, "Mrad/s"
	}
	return 1e9, "Grad/s"
}

// PoleZero draws the s-plane map: poles as ×, zeros as ○, with the real
// and imaginary axes through the origin and equal scaling (one rad/s is
// the same length on both axes). Coordinates are in rad/s; the axis
// labels name the unit, scaled by OmegaScale. Coincident roots (equal to
// within 1e-9 of the largest root magnitude) are drawn once and annotated
// with their multiplicity ("×2"). Non-finite roots are an error.
//
// Series keys: "polezero/poles" and "polezero/zeros", one (Re, Im) point
// per root as given, in rad/s.
func PoleZero(poles, zeros []complex128, opt PoleZeroOptions) (*Figure, error) {
	maxAbs := 0.0
	for _, set := range []struct {
		what  string
		roots []complex128
	}{{"pole", poles}, {"zero", zeros}} {
		for i, r := range set.roots {
			if cmplx.IsInf(r) || cmplx.IsNaN(r) {
				return nil, fmt.Errorf("plot: %s %d is %v; roots must be finite", set.what, i+1, r)
			}
			maxAbs = math.Max(maxAbs, math.Max(math.Abs(real(r)), math.Abs(imag(r))))
		}
	}
	size := opt.Size
	if size <= 0 {
		size = 12 * vg.Centimeter
	}
	scale, unit := OmegaScale(maxAbs)
	fig := newFigure(size, size)
	p := newPanel(opt.Title, "σ, real part ("+unit+")", "jω, imaginary part ("+unit+")")
	p.X.Tick.Marker = linearTicks{Scale: scale}
	p.Y.Tick.Marker = linearTicks{Scale: scale}
	p.Add(grid{}, originAxes{})
	pn := fig.add(PanelPoleZero, p)
	pn.equalScale = true

	// requested range: all roots and the origin, padded by 15 % of the
	// larger span (never empty)
	x0, x1, y0, y1 := 0.0, 0.0, 0.0, 0.0
	for _, r := range append(append([]complex128(nil), poles...), zeros...) {
		x0, x1 = math.Min(x0, real(r)), math.Max(x1, real(r))
		y0, y1 = math.Min(y0, imag(r)), math.Max(y1, imag(r))
	}
	span := math.Max(x1-x0, y1-y0)
	if span == 0 {
		span = 1
	}
	pn.xMin, pn.xMax = x0-0.15*span, x1+0.15*span
	pn.yMin, pn.yMax = y0-0.15*span, y1+0.15*span
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = pn.xMin, pn.xMax, pn.yMin, pn.yMax

	tol := 1e-9 * math.Max(maxAbs, 1e-300)
	rootStyles := []struct {
		name   string
		roots  []complex128
		legend string
		glyph  draw.GlyphStyle
	}{
		{"poles", poles, "pole", draw.GlyphStyle{Color: traceColors[0], Radius: vg.Points(4.5), Shape: boldCross{}}},
		{"zeros", zeros, "zero", draw.GlyphStyle{Color: traceColors[1], Radius: vg.Points(4.5), Shape: boldRing{}}},
	}
	for _, rs := range rootStyles {
		pts := make([][2]float64, len(rs.roots))
		for i, r := range rs.roots {
			pts[i] = [2]float64{real(r), imag(r)}
		}
		pn.addSeries(rs.name, pts)
		distinct, counts := groupRoots(rs.roots, tol)
		if len(distinct) == 0 {
			continue
		}
		xys := make(plotter.XYs, len(distinct))
		var notes plotter.XYLabels
		for i, r := range distinct {
			xys[i] = plotter.XY{X: real(r), Y: imag(r)}
			if counts[i] > 1 {
				notes.XYs = append(notes.XYs, xys[i])
				notes.Labels = append(notes.Labels, fmt.Sprintf("×%d", counts[i]))
			}
		}
		sc, err := plotter.NewScatter(xys)
		if err != nil {
			return nil, fmt.Errorf("plot: %s: %w", rs.name, err)
		}
		sc.GlyphStyle = rs.glyph
		p.Add(sc)
		pn.addLegend(rs.legend, sc)
		if len(notes.Labels) > 0 {
			lb, err := plotter.NewLabels(notes)
			if err != nil {
				return nil, fmt.Errorf("plot: %s multiplicity: %w", rs.name, err)
			}
			for i := range lb.TextStyle {
				lb.TextStyle[i] = noteStyle()
			}
			lb.Offset = vg.Point{X: vg.Points(6), Y: vg.Points(3)}
			p.Add(lb)
		}
	}
	// Add widened the ranges to the data; restore the requested ones
	// (layout equalises them)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = pn.xMin, pn.xMax, pn.yMin, pn.yMax
	fig.Layout() // equalises the ranges and places the legend for the default size
	return fig, nil
}

// groupRoots merges roots closer than tol, keeping the first of each
// group and counting its members.
func groupRoots(roots []complex128, tol float64) ([]complex128, []int) {
	var distinct []complex128
	var counts []int
next:
	for _, r := range roots {
		for i, d := range distinct {
			if cmplx.Abs(r-d) <= tol {
				counts[i]++
				continue next
			}
		}
		distinct = append(distinct, r)
		counts = append(counts, 1)
	}
	return distinct, counts
}

// boldCross is a × glyph drawn with a heavier stroke than gonum's.
type boldCross struct{}

func (boldCross) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	ls := draw.LineStyle{Color: sty.Color, Width: vg.Points(1.6)}
	r := sty.Radius
	c.StrokeLine2(ls, pt.X-r, pt.Y-r, pt.X+r, pt.Y+r)
	c.StrokeLine2(ls, pt.X-r, pt.Y+r, pt.X+r, pt.Y-r)
}

// boldRing is a ○ glyph drawn with a heavier stroke than gonum's.
type boldRing struct{}

func (boldRing) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.4)})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}
