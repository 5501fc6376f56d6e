package plot

import (
	"fmt"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// BandTrace is a Monte Carlo envelope of a frequency response: at each
// frequency (Hz, increasing, positive) the nominal value and the minimum
// and maximum over the runs, for magnitude (dB) and optionally phase (°).
// When NominalDeg is nil the figure has no phase panel; otherwise MinDeg
// and MaxDeg must be given too. Runs, when positive, is quoted in the
// legend.
type BandTrace struct {
	Label                      string // of the nominal curve; "" = "nominal"
	FreqHz                     []float64
	NominalDB, MinDB, MaxDB    []float64
	NominalDeg, MinDeg, MaxDeg []float64
	Runs                       int
}

// Quantity selects the panel a Limit is drawn on.
type Quantity int

const (
	// Magnitude limits are in dB.
	Magnitude Quantity = iota
	// Phase limits are in degrees.
	Phase
)

// Limit is a requirement drawn on a Band figure.
//
//   - With Lo and/or Hi set (dB for Magnitude, ° for Phase): a horizontal
//     limit line at each bound over [FromHz, ToHz]; FromHz = ToHz = 0 means
//     the whole sweep; FromHz = ToHz > 0 is a spot requirement, drawn as a
//     short bar at each bound joined by a vertical line when both are set.
//   - With neither set: a frequency requirement (for instance a −3 dB
//     frequency window), drawn as vertical lines at FromHz and ToHz (one
//     line when they are equal).
//
// Invariants: 0 ≤ FromHz ≤ ToHz; FromHz > 0 unless both are 0; Lo ≤ Hi
// when both are set; a frequency requirement needs ToHz > 0.
type Limit struct {
	Label        string
	Quantity     Quantity
	FromHz, ToHz float64
	Lo, Hi       *float64
}

// Band draws the nominal curve with the shaded min–max envelope, magnitude
// above phase against a shared log frequency axis, and the limits.
//
// Series keys (panel "magnitude" or "phase"): "nominal", "min", "max",
// and for limit k (from 1) with label L: "limit k L/lo", "limit k L/hi"
// (horizontal, or the spot bar's ends), "limit k L/from", "limit k L/to"
// (vertical frequency lines, spanning the panel's data range).
func Band(b BandTrace, limits []Limit, opt BodeOptions) (*Figure, error) {
	const what = "band"
	if err := checkFreqs(what, b.FreqHz); err != nil {
		return nil, err
	}
	n := len(b.FreqHz)
	cols := map[string][]float64{"nominal magnitude": b.NominalDB, "minimum magnitude": b.MinDB, "maximum magnitude": b.MaxDB}
	withPhase := b.NominalDeg != nil
	if withPhase {
		cols["nominal phase"], cols["minimum phase"], cols["maximum phase"] = b.NominalDeg, b.MinDeg, b.MaxDeg
	}
	for col, ys := range cols {
		if err := checkLen(what, col, n, len(ys)); err != nil {
			return nil, err
		}
	}
	for i, l := range limits {
		if err := l.check(); err != nil {
			return nil, fmt.Errorf("plot: limit %d %q: %w", i+1, l.Label, err)
		}
		if l.Quantity == Phase && !withPhase {
			return nil, fmt.Errorf("plot: limit %d %q is on phase, but the band has no phase", i+1, l.Label)
		}
	}
	lo, hi := b.FreqHz[0], b.FreqHz[n-1]
	fig, mp, pp := freqPanels(opt, lo, hi)
	if !withPhase {
		fig.panels = fig.panels[:1]
		mp.p.X.Label.Text = labelFreq
		mp.p.X.Tick.Marker = logTicks{}
	}
	label := b.Label
	if label == "" {
		label = "nominal"
	}
	envelope := "min–max"
	if b.Runs > 0 {
		envelope = fmt.Sprintf("min–max of %d runs", b.Runs)
	}
	if err := addBand(mp, b.FreqHz, b.NominalDB, b.MinDB, b.MaxDB, label, envelope); err != nil {
		return nil, err
	}
	if withPhase {
		if err := addBand(pp, b.FreqHz, b.NominalDeg, b.MinDeg, b.MaxDeg, "", ""); err != nil {
			return nil, err
		}
	}
	// bounds first (they may widen the y range), then frequency windows,
	// which span the final range
	isWindow := func(l Limit) bool { return l.Lo == nil && l.Hi == nil }
	for pass := 0; pass < 2; pass++ {
		for i, l := range limits {
			if isWindow(l) != (pass == 1) {
				continue
			}
			pn := mp
			if l.Quantity == Phase {
				pn = pp
			}
			if err := addLimit(pn, i+1, l, lo, hi); err != nil {
				return nil, err
			}
		}
		if pass == 0 {
			fitY(mp, 0.08)
			if withPhase {
				fitY(pp, 0.08)
			}
		}
	}
	fig.Layout() // places the legend for the default size
	return fig, nil
}

// check validates the invariants documented on Limit.
func (l Limit) check() error {
	switch {
	case l.Quantity != Magnitude && l.Quantity != Phase:
		return fmt.Errorf("unknown quantity %d", l.Quantity)
	case !finite(l.FromHz) || !finite(l.ToHz) || l.FromHz < 0 || l.ToHz < l.FromHz:
		return fmt.Errorf("frequency span %g…%g Hz must satisfy 0 ≤ from ≤ to", l.FromHz, l.ToHz)
	case l.FromHz == 0 && l.ToHz != 0:
		return fmt.Errorf("frequency span starts at 0 Hz, which a log axis cannot show")
	case l.Lo != nil && !finite(*l.Lo), l.Hi != nil && !finite(*l.Hi):
		return fmt.Errorf("bounds must be finite")
	case l.Lo != nil && l.Hi != nil && *l.Lo > *l.Hi:
		return fmt.Errorf("low bound %g is above high bound %g", *l.Lo, *l.Hi)
	case l.Lo == nil && l.Hi == nil && l.ToHz == 0:
		return fmt.Errorf("a limit needs a bound or a frequency")
	}
	return nil
}

// addBand draws the shaded envelope between minY and maxY, its edges and
// the nominal curve on top; envelope names the shading in the legend
// ("" for no legend entries).
func addBand(pn *panel, fHz, nom, minY, maxY []float64, label, envelope string) error {
	lower := pairs(fHz, minY)
	upper := pairs(fHz, maxY)
	if len(lower) < 2 || len(upper) < 2 {
		return fmt.Errorf("plot: %s band has fewer than 2 finite points", pn.name)
	}
	lowXY := pn.addLineSeries("min", lower)
	upXY := pn.addLineSeries("max", upper)
	pn.fills = append(pn.fills, [2]int{len(pn.series) - 2, len(pn.series) - 1})
	ring := make(plotter.XYs, 0, len(lowXY)+len(upXY))
	ring = append(ring, upXY...)
	for i := len(lowXY) - 1; i >= 0; i-- {
		ring = append(ring, lowXY[i])
	}
	poly, err := plotter.NewPolygon(ring)
	if err != nil {
		return fmt.Errorf("plot: %s band: %w", pn.name, err)
	}
	poly.Color = bandFill
	poly.LineStyle.Width = 0
	pn.p.Add(poly)
	edge := draw.LineStyle{Color: bandEdge, Width: vg.Points(0.5)}
	for _, xy := range []plotter.XYs{lowXY, upXY} {
		l, err := plotter.NewLine(xy)
		if err != nil {
			return fmt.Errorf("plot: %s band edge: %w", pn.name, err)
		}
		l.LineStyle = edge
		pn.p.Add(l)
	}
	nomPts := pairs(fHz, nom)
	if len(nomPts) < 2 {
		return fmt.Errorf("plot: %s nominal curve has fewer than 2 finite points", pn.name)
	}
	nomXY := pn.addLineSeries("nominal", nomPts)
	nl, err := plotter.NewLine(nomXY)
	if err != nil {
		return fmt.Errorf("plot: %s nominal: %w", pn.name, err)
	}
	nl.LineStyle = styleFor(0).line
	pn.p.Add(nl)
	if envelope != "" {
		pn.addLegend(label, nl)
		pn.addLegend(envelope, poly)
	}
	return nil
}

// addLimit draws limit number k on pn; [loHz, hiHz] is the sweep.
func addLimit(pn *panel, k int, l Limit, loHz, hiHz float64) error {
	name := fmt.Sprintf("limit %d %s", k, l.Label)
	var segs [][][2]float64
	var keys []string
	switch {
	case l.Lo == nil && l.Hi == nil: // frequency window
		yLo, yHi := pn.p.Y.Min, pn.p.Y.Max
		segs = append(segs, [][2]float64{{l.FromHz, yLo}, {l.FromHz, yHi}})
		keys = append(keys, "from")
		if l.ToHz != l.FromHz {
			segs = append(segs, [][2]float64{{l.ToHz, yLo}, {l.ToHz, yHi}})
			keys = append(keys, "to")
		}
	default:
		f0, f1 := l.FromHz, l.ToHz
		if f0 == 0 {
			f0, f1 = loHz, hiHz
		}
		if f0 == f1 { // spot requirement: a short bar ±1/16 decade
			f0, f1 = f0/math.Pow(10, 1.0/16), f1*math.Pow(10, 1.0/16)
		}
		for _, b := range []struct {
			key string
			v   *float64
		}{{"lo", l.Lo}, {"hi", l.Hi}} {
			if b.v != nil {
				segs = append(segs, [][2]float64{{f0, *b.v}, {f1, *b.v}})
				keys = append(keys, b.key)
			}
		}
		if l.FromHz == l.ToHz && l.Lo != nil && l.Hi != nil {
			f := l.FromHz
			pn.p.Add(limitConnector(f, *l.Lo, *l.Hi))
		}
	}
	sty := draw.LineStyle{Color: limitColor, Width: vg.Points(1.2), Dashes: []vg.Length{vg.Points(5), vg.Points(2)}}
	for i, seg := range segs {
		xy := pn.addLineSeries(name+"/"+keys[i], seg)
		ln, err := plotter.NewLine(xy)
		if err != nil {
			return fmt.Errorf("plot: %s: %w", name, err)
		}
		ln.LineStyle = sty
		pn.p.Add(ln)
	}
	if l.Label != "" {
		last := segs[len(segs)-1]
		at := last[0]
		if last[0][0] == last[1][0] { // vertical: label near the top
			at = last[1]
		}
		sty := noteStyle()
		sty.Color = limitColor
		pn.addNote(note{x: at[0], y: at[1], text: l.Label, style: sty})
	}
	return nil
}

// limitConnector is the thin vertical line of a spot requirement.
func limitConnector(fHz, lo, hi float64) *plotter.Line {
	ln, _ := plotter.NewLine(plotter.XYs{{X: fHz, Y: lo}, {X: fHz, Y: hi}}) // finite by Limit.check
	ln.LineStyle = draw.LineStyle{Color: limitColor, Width: vg.Points(0.6)}
	return ln
}
