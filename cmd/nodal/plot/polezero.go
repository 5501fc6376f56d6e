package plot

import (
	"fmt"
	"math"
	"math/cmplx"
	"nodal/cmd/nodal/notation"

	gplot "gonum.org/v1/plot"
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
// whose largest magnitude is maxAbsRad (rad/s), the prefix that keeps the
// tick values between 1 and 999: 1 "rad/s" below 10³, 10³ "krad/s" below
// 10⁶, 10⁶ "Mrad/s" below 10⁹, else 10⁹ "Grad/s" (a map reaching
// 6.3·10⁶ rad/s reads "−6 Mrad/s", not "−6000 krad/s"). Tick values are
// the plotted rad/s values divided by the factor.
func OmegaScale(maxAbsRad float64) (factor float64, unit string) {
	switch m := math.Abs(maxAbsRad); {
	case !(m >= 1e3): // also NaN
		return 1, "rad/s"
	case m < 1e6:
		return 1e3, "krad/s"
	case m < 1e9:
		return 1e6, "Mrad/s"
	}
	return 1e9, "Grad/s"
}

// PanelPoleZeroZoom is the panel name, in Series keys, of the zoom on
// the dominant roots that PoleZero adds when the roots spread widely.
const PanelPoleZeroZoom = "polezero zoom"

// zoomSpan is the ratio of the largest to the smallest non-zero root
// magnitude beyond which PoleZero adds a zoomed panel (two decades);
// dominantSpan is how far above the smallest magnitude a root still
// counts as dominant (one decade).
const (
	zoomSpan     = 100
	dominantSpan = 10
)

// PoleZero draws the s-plane map: poles as ×, zeros as ○, with the real
// and imaginary axes through the origin and equal scaling (one rad/s is
// the same length on both axes). Coordinates are in rad/s; the axis
// labels name the unit, scaled by OmegaScale. Coincident roots (equal to
// within 1e-9 of the largest root magnitude) are drawn once and annotated
// with their multiplicity ("×2"). Non-finite roots are an error.
//
// When the non-zero root magnitudes span more than two decades, the
// dominant roots would sit on the origin; a second panel below, titled
// "zoom: …", then shows the dominant roots — those within a decade of
// the smallest non-zero magnitude, and any at the origin — with equal
// scaling too; other roots appear on it only where they fall inside its
// ranges. The figure is then twice as tall.
//
// Series keys: "polezero/poles" and "polezero/zeros", one (Re, Im) point
// per root as given, in rad/s; with the zoom, "polezero zoom/poles" and
// "polezero zoom/zeros" list the dominant roots, in the order given.
func PoleZero(poles, zeros []complex128, opt PoleZeroOptions) (*Figure, error) {
	return PoleZeroSets([]RootSet{{Poles: poles, Zeros: zeros}}, opt)
}

// RootSet is the poles and zeros (rad/s) of one transfer function on a
// pole-zero map, under a legend label ("" for a map of one set).
type RootSet struct {
	Label        string
	Poles, Zeros []complex128
}

// PoleZeroSets draws the roots of several transfer functions (one per
// value of a varied part) on one map as PoleZero draws one: each set in
// its own colour, poles as ×, zeros as ○, with one legend entry per set
// showing its marks. A single set without a label is drawn as PoleZero
// draws it (poles and zeros in two colours, legend "pole" and "zero").
//
// Series keys: those of PoleZero for a single unlabelled set; else
// "polezero/LABEL/poles" and "polezero/LABEL/zeros" (and the same under
// "polezero zoom/"). Labels of several sets must be unique and non-empty.
func PoleZeroSets(sets []RootSet, opt PoleZeroOptions) (*Figure, error) {
	if len(sets) == 0 {
		return nil, fmt.Errorf("plot: a pole-zero map needs at least one set of roots")
	}
	maxAbs := 0.0
	seen := map[string]bool{}
	var poles, zeros []complex128
	for _, rs := range sets {
		if len(sets) > 1 && (rs.Label == "" || seen[rs.Label]) {
			return nil, fmt.Errorf("plot: root set labels must be unique and non-empty (%q)", rs.Label)
		}
		seen[rs.Label] = true
		for _, set := range []struct {
			what  string
			roots []complex128
		}{{"pole", rs.Poles}, {"zero", rs.Zeros}} {
			for i, r := range set.roots {
				if cmplx.IsInf(r) || cmplx.IsNaN(r) {
					return nil, fmt.Errorf("plot: %s%s %d is %v; roots must be finite", labelPrefix(rs.Label), set.what, i+1, r)
				}
				maxAbs = math.Max(maxAbs, math.Max(math.Abs(real(r)), math.Abs(imag(r))))
			}
		}
		poles, zeros = append(poles, rs.Poles...), append(zeros, rs.Zeros...)
	}
	size := opt.Size
	if size <= 0 {
		size = 12 * vg.Centimeter
	}
	tol := 1e-9 * math.Max(maxAbs, 1e-300)
	fig := newFigure(size, size)
	if err := addRootMap(fig, PanelPoleZero, opt.Title, sets, sets, tol); err != nil {
		return nil, err
	}
	if limit, ok := dominantLimit(poles, zeros); ok {
		dom := make([]RootSet, len(sets))
		for i, rs := range sets {
			dom[i] = RootSet{Label: rs.Label, Poles: within(rs.Poles, limit), Zeros: within(rs.Zeros, limit)}
		}
		title := "zoom: roots with |s| ≤ " + notation.Digits(limit, 3, "rad/s")
		if err := addRootMap(fig, PanelPoleZeroZoom, title, dom, sets, tol); err != nil {
			return nil, err
		}
		fig.height = 2 * size
	}
	fig.Layout() // equalises the ranges and places the legends for the default size
	return fig, nil
}

// dominantLimit returns the largest magnitude (rad/s) among the dominant
// roots — those within dominantSpan of the smallest non-zero magnitude —
// and whether the non-zero magnitudes span more than zoomSpan, so that a
// zoom on them is worth drawing.
func dominantLimit(poles, zeros []complex128) (float64, bool) {
	lo, hi := math.Inf(1), 0.0
	for _, r := range append(append([]complex128(nil), poles...), zeros...) {
		if m := cmplx.Abs(r); m > 0 {
			lo, hi = math.Min(lo, m), math.Max(hi, m)
		}
	}
	if !(hi > zoomSpan*lo) {
		return 0, false
	}
	limit := 0.0
	for _, r := range append(append([]complex128(nil), poles...), zeros...) {
		if m := cmplx.Abs(r); m <= dominantSpan*lo {
			limit = math.Max(limit, m)
		}
	}
	return limit, true
}

// within returns the roots of magnitude at most limit (rad/s), in order.
func within(roots []complex128, limit float64) []complex128 {
	var out []complex128
	for _, r := range roots {
		if cmplx.Abs(r) <= limit {
			out = append(out, r)
		}
	}
	return out
}

// addRootMap adds an equal-scaled s-plane panel to fig whose requested
// range holds the roots of shown (recorded as its series) and the origin.
// It draws the roots of all, set by set, which include them: on a zoom
// these are every root, drawn only where they fall inside the ranges.
func addRootMap(fig *Figure, name, title string, shown, all []RootSet, tol float64) error {
	x0, x1, y0, y1 := 0.0, 0.0, 0.0, 0.0
	zoomed := false
	for i, rs := range shown {
		for _, r := range append(append([]complex128(nil), rs.Poles...), rs.Zeros...) {
			x0, x1 = math.Min(x0, real(r)), math.Max(x1, real(r))
			y0, y1 = math.Min(y0, imag(r)), math.Max(y1, imag(r))
		}
		// a zoom draws roots that lie outside its ranges; gonum would shrink
		// the data area to fit their glyphs, so they are drawn clipped instead
		zoomed = zoomed || len(rs.Poles) != len(all[i].Poles) || len(rs.Zeros) != len(all[i].Zeros)
	}
	scale, unit := OmegaScale(math.Max(math.Max(-x0, x1), math.Max(-y0, y1)))
	p := newPanel(title, "σ, real part ("+unit+")", "jω, imaginary part ("+unit+")")
	p.X.Tick.Marker = linearTicks{Scale: scale}
	p.Y.Tick.Marker = linearTicks{Scale: scale}
	p.Add(grid{}, originAxes{})
	pn := fig.add(name, p)
	pn.legendOutside = true
	pn.equalScale = true

	// requested range: the roots and the origin, padded by 15 % of the
	// larger span (never empty)
	span := math.Max(x1-x0, y1-y0)
	if span == 0 {
		span = 1
	}
	pn.xMin, pn.xMax = x0-0.15*span, x1+0.15*span
	pn.yMin, pn.yMax = y0-0.15*span, y1+0.15*span

	single := len(shown) == 1 && shown[0].Label == ""
	for i, set := range shown {
		poleColor, zeroColor := traceColors[i%len(traceColors)], traceColors[i%len(traceColors)]
		prefix := set.Label + "/"
		if single {
			poleColor, zeroColor, prefix = traceColors[0], traceColors[1], ""
		}
		rootStyles := []struct {
			name        string
			roots, draw []complex128
			legend      string
			glyph       draw.GlyphStyle
		}{
			{"poles", set.Poles, all[i].Poles, "pole", draw.GlyphStyle{Color: poleColor, Radius: vg.Points(4.5), Shape: boldCross{}}},
			{"zeros", set.Zeros, all[i].Zeros, "zero", draw.GlyphStyle{Color: zeroColor, Radius: vg.Points(4.5), Shape: boldRing{}}},
		}
		var thumbs []gplot.Thumbnailer
		for _, rs := range rootStyles {
			pts := make([][2]float64, len(rs.roots))
			for k, r := range rs.roots {
				pts[k] = [2]float64{real(r), imag(r)}
			}
			pn.addSeries(prefix+rs.name, pts)
			distinct, counts := groupRoots(rs.draw, tol)
			if len(distinct) == 0 {
				continue
			}
			xys := make(plotter.XYs, len(distinct))
			var notes plotter.XYLabels
			for k, r := range distinct {
				xys[k] = plotter.XY{X: real(r), Y: imag(r)}
				if counts[k] > 1 {
					notes.XYs = append(notes.XYs, xys[k])
					notes.Labels = append(notes.Labels, fmt.Sprintf("×%d", counts[k]))
				}
			}
			sc, err := plotter.NewScatter(xys)
			if err != nil {
				return fmt.Errorf("plot: %s%s: %w", prefix, rs.name, err)
			}
			sc.GlyphStyle = rs.glyph
			addUnpadded(p, zoomed, sc)
			if len(rs.roots) > 0 {
				if single {
					pn.addLegend(rs.legend, sc)
				} else {
					thumbs = append(thumbs, sc)
				}
			}
			if len(notes.Labels) > 0 {
				lb, err := plotter.NewLabels(notes)
				if err != nil {
					return fmt.Errorf("plot: %s%s multiplicity: %w", prefix, rs.name, err)
				}
				for k := range lb.TextStyle {
					lb.TextStyle[k] = noteStyle()
				}
				lb.Offset = vg.Point{X: vg.Points(6), Y: vg.Points(3)}
				addUnpadded(p, zoomed, lb)
			}
		}
		if !single {
			if len(thumbs) == 0 {
				// no root of this set on the panel: still name it, with its colour
				thumbs = append(thumbs, legendSwatch{draw.GlyphStyle{Color: poleColor, Radius: vg.Points(4.5), Shape: boldCross{}}})
			}
			pn.addLegend(set.Label, thumbs...)
		}
	}
	// Add widened the ranges to the data; restore the requested ones
	// (layout equalises them)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = pn.xMin, pn.xMax, pn.yMin, pn.yMax
	return nil
}

// legendSwatch is a legend thumbnail of one glyph, for a root set with
// no root drawn on a panel.
type legendSwatch struct{ sty draw.GlyphStyle }

// Thumbnail implements gonum's Thumbnailer.
func (l legendSwatch) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(l.sty, c.Center())
}

// unpadded hides a plotter's glyph boxes and data range, so that gonum
// neither widens the axes nor shrinks the data area for marks outside
// the ranges; gonum clips such marks when drawing.
type unpadded struct{ gplot.Plotter }

// addUnpadded adds pl to p, wrapped in unpadded when clip is set.
func addUnpadded(p *gplot.Plot, clip bool, pl gplot.Plotter) {
	if clip {
		pl = unpadded{pl}
	}
	p.Add(pl)
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
