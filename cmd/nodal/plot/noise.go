package plot

import (
	"fmt"
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

// DensityTrace is one noise density to draw: Density in Unit/√Hz (> 0 to
// be drawn) at increasing positive frequencies in Hz.
type DensityTrace struct {
	Label   string
	FreqHz  []float64
	Density []float64
}

// DensityOptions are the presentation choices of Density.
type DensityOptions struct {
	// Title is printed above the plot; empty for none.
	Title string
	// YLabel names the density with its unit, e.g. "noise density (V/√Hz)".
	YLabel string
	// Width and Height; zero for 17 cm × 11 cm.
	Width, Height vg.Length
	// Panel names the panel in Series keys; empty for PanelDensity.
	Panel string
}

// PanelDensity is the panel name of Density in Series keys.
const PanelDensity = "density"

// Density draws noise densities on log-log axes, the first trace (the
// total) first and thickest in the legend order given. Points that are
// not finite and > 0 are left out of their curve; a trace needs two.
//
// Series keys: "PANEL/LABEL" (Hz, Unit/√Hz), PANEL as in the options. Labels must be unique and
// non-empty.
func Density(traces []DensityTrace, opt DensityOptions) (*Figure, error) {
	if len(traces) == 0 {
		return nil, fmt.Errorf("plot: a density plot needs at least one trace")
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	seen := map[string]bool{}
	for _, tr := range traces {
		if tr.Label == "" || seen[tr.Label] {
			return nil, fmt.Errorf("plot: density trace labels must be unique and non-empty (%q)", tr.Label)
		}
		seen[tr.Label] = true
		what := fmt.Sprintf("trace %q", tr.Label)
		if err := checkFreqs(what, tr.FreqHz); err != nil {
			return nil, err
		}
		if err := checkLen(what, "density", len(tr.FreqHz), len(tr.Density)); err != nil {
			return nil, err
		}
		lo, hi = math.Min(lo, tr.FreqHz[0]), math.Max(hi, tr.FreqHz[len(tr.FreqHz)-1])
	}
	w, h := orDefault(opt.Width, 17*vg.Centimeter), orDefault(opt.Height, 11*vg.Centimeter)
	ylabel := opt.YLabel
	if ylabel == "" {
		ylabel = "noise density (V/√Hz)"
	}
	fig := newFigure(w, h)
	p := newPanel(opt.Title, labelFreq, ylabel)
	useLogFreqAxis(p, lo, hi, false)
	p.Y.Scale = gplot.LogScale{}
	p.Y.Tick.Marker = logTicks{}
	p.Add(grid{logX: true})
	name := opt.Panel
	if name == "" {
		name = PanelDensity
	}
	pn := fig.add(name, p)
	ylo, yhi := math.Inf(1), math.Inf(-1)
	for i, tr := range traces {
		var pts [][2]float64
		for j, f := range tr.FreqHz {
			if d := tr.Density[j]; d > 0 && finite(d) {
				pts = append(pts, [2]float64{f, d})
				ylo, yhi = math.Min(ylo, d), math.Max(yhi, d)
			}
		}
		if len(pts) < 2 {
			if i == 0 {
				return nil, fmt.Errorf("plot: trace %q has fewer than 2 positive finite values", tr.Label)
			}
			continue // a contributor that vanishes in the range
		}
		if err := addTrace(pn, tr.Label, pts, styleFor(i), true); err != nil {
			return nil, err
		}
	}
	// Whole decades around the data, at most 8 decades below the top so
	// that a vanishing contributor does not squash the rest.
	top := math.Pow(10, math.Ceil(math.Log10(yhi)+0.02))
	bottom := math.Max(math.Pow(10, math.Floor(math.Log10(ylo)-0.02)), top*1e-8)
	p.Y.Min, p.Y.Max = bottom, top
	fig.Layout()
	return fig, nil
}
