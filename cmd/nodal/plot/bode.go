package plot

import (
	"fmt"
	"math"
	"nodal/cmd/nodal/notation"
	"strconv"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// BodeTrace is one frequency response to draw: magnitude in dB and phase
// in degrees at increasing positive frequencies in Hz.
//
// Minus3dBHz lists the frequencies (Hz) where the magnitude is 3 dB below
// its reference, as the analysis found them; each is marked on the curve.
// PeakHz/PeakDB, when both are set, mark a resonance peak. Points whose
// magnitude or phase is not finite (−Inf dB at a transmission zero) are
// left out of that curve.
type BodeTrace struct {
	Label          string
	FreqHz         []float64
	MagDB          []float64
	PhaseDeg       []float64
	Minus3dBHz     []float64
	PeakHz, PeakDB *float64
}

// BodeOptions are the presentation choices of Bode and Band.
type BodeOptions struct {
	// Title is printed above the magnitude panel; empty for none.
	Title string
	// Width and Height of the whole figure; zero for 17 cm × 14 cm.
	Width, Height vg.Length
}

// size returns the figure size with defaults filled in.
func (o BodeOptions) size() (vg.Length, vg.Length) {
	return orDefault(o.Width, 17*vg.Centimeter), orDefault(o.Height, 14*vg.Centimeter)
}

// orDefault returns l, or def when l is not positive (a size left unset).
func orDefault(l, def vg.Length) vg.Length {
	if l <= 0 {
		return def
	}
	return l
}

// Axis labels of the frequency-response panels.
const (
	labelFreq  = "frequency (Hz)"
	labelMagDB = "magnitude (dB)"
	labelPhase = "phase (°)"
)

// Panel names used as the first part of Series keys.
const (
	PanelMagnitude = "magnitude"
	PanelPhase     = "phase"
)

// Bode draws the traces as a Bode plot: magnitude (dB) above phase (°),
// both against a shared logarithmic frequency axis with grid lines on
// every decade and fainter ones within it.
//
// Series keys: "magnitude/LABEL" and "phase/LABEL" (Hz, dB / Hz, °);
// "magnitude/LABEL/-3dB" with one point per −3 dB frequency (the dB value
// interpolated on the curve, linear in log f); "magnitude/LABEL/peak".
// An empty label is named "trace N" (N from 1); labels must be unique.
func Bode(traces []BodeTrace, opt BodeOptions) (*Figure, error) {
	if len(traces) == 0 {
		return nil, fmt.Errorf("plot: Bode needs at least one trace")
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	labels := make([]string, len(traces))
	seen := map[string]bool{}
	for i, tr := range traces {
		labels[i] = tr.Label
		if labels[i] == "" {
			labels[i] = fmt.Sprintf("trace %d", i+1)
		}
		if seen[labels[i]] {
			return nil, fmt.Errorf("plot: two Bode traces are labelled %q", labels[i])
		}
		seen[labels[i]] = true
		what := fmt.Sprintf("trace %q", labels[i])
		if err := checkFreqs(what, tr.FreqHz); err != nil {
			return nil, err
		}
		if err := checkLen(what, "magnitude", len(tr.FreqHz), len(tr.MagDB)); err != nil {
			return nil, err
		}
		if err := checkLen(what, "phase", len(tr.FreqHz), len(tr.PhaseDeg)); err != nil {
			return nil, err
		}
		lo, hi = math.Min(lo, tr.FreqHz[0]), math.Max(hi, tr.FreqHz[len(tr.FreqHz)-1])
	}

	fig, mp, pp := freqPanels(opt, lo, hi)
	for i, tr := range traces {
		st := styleFor(i)
		magPts := pairs(tr.FreqHz, tr.MagDB)
		phPts := pairs(tr.FreqHz, tr.PhaseDeg)
		if len(magPts) < 2 {
			return nil, fmt.Errorf("plot: trace %q has fewer than 2 finite magnitude values", labels[i])
		}
		if err := addTrace(mp, labels[i], magPts, st, len(traces) > 1 || traces[i].Label != ""); err != nil {
			return nil, err
		}
		if len(phPts) >= 2 {
			if err := addTrace(pp, labels[i], phPts, st, false); err != nil {
				return nil, err
			}
		}
		if err := markBode(mp, pp, labels[i], tr, len(traces) > 1); err != nil {
			return nil, err
		}
	}
	fitY(mp, 0.06)
	fitY(pp, 0.06)
	fig.Layout() // places the legend for the default size
	return fig, nil
}

// freqPanels builds the magnitude-over-phase figure skeleton with shared
// log frequency axes over [loHz, hiHz].
func freqPanels(opt BodeOptions, loHz, hiHz float64) (*Figure, *panel, *panel) {
	fig := newFigure(opt.size())
	mag := newPanel(opt.Title, "", labelMagDB)
	useLogFreqAxis(mag, loHz, hiHz, true)
	mag.Y.Tick.Marker = magTicks
	ph := newPanel("", labelFreq, labelPhase)
	useLogFreqAxis(ph, loHz, hiHz, false)
	ph.Y.Tick.Marker = phaseTicks
	mag.Add(grid{logX: true})
	ph.Add(grid{logX: true})
	return fig, fig.add(PanelMagnitude, mag), fig.add(PanelPhase, ph)
}

// addTrace draws pts as one trace: a line in the trace's colour
// and dash pattern (styleFor), listed in the legend when legend is set.
// No marker glyphs sit on the curve: a symbol on a curve reads as a
// marked point (a −3 dB point, a peak), and the dash pattern already tells
// the traces apart in grey scale.
func addTrace(pn *panel, name string, pts [][2]float64, st traceStyle, legend bool) error {
	xys := pn.addLineSeries(name, pts)
	line, err := plotter.NewLine(xys)
	if err != nil {
		return fmt.Errorf("plot: %s %q: %w", pn.name, name, err)
	}
	line.LineStyle = st.line
	pn.p.Add(line)
	if legend {
		pn.addLegend(name, line)
	}
	return nil
}

// markBode marks the −3 dB frequencies and the peak of tr; with several
// traces each note starts with the trace's label.
func markBode(mp, pp *panel, label string, tr BodeTrace, named bool) error {
	var pts [][2]float64
	var notes []string
	prefix := ""
	if named {
		prefix = label + ": "
	}
	for _, f := range tr.Minus3dBHz {
		y := interpLogX(tr.FreqHz, tr.MagDB, f)
		if !finite(y) {
			return fmt.Errorf("plot: trace %q: −3 dB frequency %g Hz lies outside its sweep %g…%g Hz",
				label, f, tr.FreqHz[0], tr.FreqHz[len(tr.FreqHz)-1])
		}
		pts = append(pts, [2]float64{f, y})
		notes = append(notes, prefix+"-3 dB at "+notation.Digits(f, 4, "Hz"))
		for _, pn := range []*panel{mp, pp} {
			pn.p.Add(refLine{vertical: true, at: f, style: markLineStyle()})
		}
	}
	if len(pts) > 0 {
		if err := addMarks(mp, label+"/-3dB", pts, notes, draw.RingGlyph{}); err != nil {
			return err
		}
	}
	if tr.PeakHz != nil && tr.PeakDB != nil {
		pk := [][2]float64{{*tr.PeakHz, *tr.PeakDB}}
		note := prefix + "peak " + strconv.FormatFloat(*tr.PeakDB, 'f', 2, 64) + " dB at " + notation.Digits(*tr.PeakHz, 4, "Hz")
		if err := addMarks(mp, label+"/peak", pk, []string{note}, draw.PyramidGlyph{}); err != nil {
			return err
		}
	}
	return nil
}

// addMarks draws annotated points (series name) with glyph shape.
func addMarks(pn *panel, name string, pts [][2]float64, notes []string, shape draw.GlyphDrawer) error {
	xys := pn.addSeries(name, pts)
	sc, err := plotter.NewScatter(xys)
	if err != nil {
		return fmt.Errorf("plot: %s %q: %w", pn.name, name, err)
	}
	sc.GlyphStyle = draw.GlyphStyle{Color: markColor, Radius: vg.Points(3.6), Shape: shape}
	pn.p.Add(sc)
	return addNotes(pn, xys, notes)
}

// addNotes writes notes[i] beside xys[i]; annotations, not data, so no
// series is recorded. Every note of a panel is placed by one notePlotter,
// which keeps them from overlapping each other (see notePlotter.Plot).
func addNotes(pn *panel, xys plotter.XYs, notes []string) error {
	if len(xys) != len(notes) {
		return fmt.Errorf("plot: %s notes: %d points for %d notes", pn.name, len(xys), len(notes))
	}
	for i, xy := range xys {
		pn.addNote(note{x: xy.X, y: xy.Y, text: notes[i], style: noteStyle()})
	}
	return nil
}

// addNote adds one note to the panel's notePlotter.
func (pn *panel) addNote(n note) {
	if pn.notes == nil {
		pn.notes = &notePlotter{pn: pn}
		pn.p.Add(pn.notes)
	}
	pn.notes.notes = append(pn.notes.notes, n)
}

// note is one annotation at a data point, in its text style.
type note struct {
	x, y  float64
	text  string
	style draw.TextStyle
}

// notePlotter draws a panel's notes. Each goes just above and right of its
// point unless that box meets a note already placed or leaves the data
// area: then below right, above left, below left, then stepped up or down
// by a line at a time, the first free place winning (the first candidate
// when none is free). A legend inside the data area counts as placed.
type notePlotter struct {
	pn    *panel
	notes []note
}

// Plot implements gonum's Plotter.
func (np *notePlotter) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	gap := vg.Points(5)
	lift := vg.Points(3)
	var placed []vg.Rectangle
	if np.pn != nil && !np.pn.legendOut && np.pn.legendAt.Max.X > np.pn.legendAt.Min.X {
		placed = append(placed, np.pn.legendAt)
	}
	for _, n := range np.notes {
		sty := n.style
		x, y := trX(n.x), trY(n.y)
		if !finite(float64(x)) || !finite(float64(y)) {
			continue
		}
		r := sty.Rectangle(n.text) // relative to the point drawn at
		w, h := r.Max.X-r.Min.X, r.Max.Y-r.Min.Y
		box := func(dx, dy vg.Length) vg.Rectangle {
			return vg.Rectangle{Min: vg.Point{X: x + dx + r.Min.X, Y: y + dy + r.Min.Y}, Max: vg.Point{X: x + dx + r.Max.X, Y: y + dy + r.Max.Y}}
		}
		var cands [][2]vg.Length
		for k := 0; k <= 8; k++ {
			step := vg.Length(k) * (h + vg.Points(1))
			for _, dx := range []vg.Length{gap, -gap - w} {
				cands = append(cands, [2]vg.Length{dx, lift + step}, [2]vg.Length{dx, -lift - h - step})
			}
		}
		best := cands[0]
		for _, cd := range cands {
			b := box(cd[0], cd[1])
			if b.Min.X < c.Min.X || b.Max.X > c.Max.X || b.Min.Y < c.Min.Y || b.Max.Y > c.Max.Y {
				continue
			}
			free := true
			for _, q := range placed {
				if b.Min.X < q.Max.X && q.Min.X < b.Max.X && b.Min.Y < q.Max.Y && q.Min.Y < b.Max.Y {
					free = false
					break
				}
			}
			if free {
				best = cd
				break
			}
		}
		placed = append(placed, box(best[0], best[1]))
		c.FillText(sty, vg.Point{X: x + best[0], Y: y + best[1]}, n.text)
	}
}

// markLineStyle is the thin dotted style of vertical/horizontal marks.
func markLineStyle() draw.LineStyle {
	return draw.LineStyle{Color: markColor, Width: vg.Points(0.6), Dashes: []vg.Length{vg.Points(1), vg.Points(2)}}
}

// refLine is a line across the whole data area at a fixed x (vertical)
// or y; a visual reference, not data.
type refLine struct {
	vertical bool
	at       float64
	style    draw.LineStyle
}

func (r refLine) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	if r.vertical {
		if x := trX(r.at); x >= c.Min.X && x <= c.Max.X {
			c.StrokeLine2(r.style, x, c.Min.Y, x, c.Max.Y)
		}
		return
	}
	if y := trY(r.at); y >= c.Min.Y && y <= c.Max.Y {
		c.StrokeLine2(r.style, c.Min.X, y, c.Max.X, y)
	}
}

// fitY sets the y range of the panel to its series' range widened by
// frac on each side.
func fitY(pn *panel, frac float64) {
	var all [][][2]float64
	for _, s := range pn.series {
		all = append(all, s.xy)
	}
	lo, hi := yRange(all...)
	if !finite(lo) || !finite(hi) {
		lo, hi = -1, 1
	}
	pn.p.Y.Min, pn.p.Y.Max = padRange(lo, hi, frac)
}
