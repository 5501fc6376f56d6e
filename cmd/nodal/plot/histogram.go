package plot

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// HistogramPanelPrefix starts the panel name of a histogram in Series
// keys: "histogram NAME".
const HistogramPanelPrefix = "histogram "

// Histogram draws the distribution of one metric over Monte Carlo runs:
// bins equal-width bins between the smallest and largest value (bins ≤ 0
// picks ⌈√n⌉, at most 50), and a vertical line at the nominal value
// unless nominal is NaN. name labels the x axis and should carry the unit,
// e.g. "gain@1kHz (dB)". Non-finite values are an error.
//
// Series keys ("histogram NAME/..."): "counts" with one (bin centre, count)
// point per bin; "nominal" with the nominal line's two ends (count 0 and
// the tallest bin).
func Histogram(name string, values []float64, bins int, nominal float64) (*Figure, error) {
	if len(values) == 0 {
		return nil, fmt.Errorf("plot: histogram %q: no values", name)
	}
	for i, v := range values {
		if !finite(v) {
			return nil, fmt.Errorf("plot: histogram %q: value %d is %g", name, i+1, v)
		}
	}
	if math.IsInf(nominal, 0) {
		return nil, fmt.Errorf("plot: histogram %q: nominal value is %g", name, nominal)
	}
	if bins <= 0 {
		bins = min(50, int(math.Ceil(math.Sqrt(float64(len(values))))))
	}
	h, err := plotter.NewHist(plotter.Values(values), bins)
	if err != nil {
		return nil, fmt.Errorf("plot: histogram %q: %w", name, err)
	}
	h.FillColor = histFill
	h.LineStyle = draw.LineStyle{Color: bandEdge, Width: vg.Points(0.6)}

	fig := newFigure(15*vg.Centimeter, 8*vg.Centimeter)
	p := newPanel("", name, "runs")
	p.Add(grid{}, h)
	pn := fig.add(HistogramPanelPrefix+name, p)
	counts := make([][2]float64, len(h.Bins))
	tallest := 0.0
	for i, b := range h.Bins {
		counts[i] = [2]float64{(b.Min + b.Max) / 2, b.Weight}
		tallest = math.Max(tallest, b.Weight)
	}
	pn.addSeries("counts", counts)
	if !math.IsNaN(nominal) {
		sty := draw.LineStyle{Color: traceColors[1], Width: vg.Points(1.4), Dashes: []vg.Length{vg.Points(6), vg.Points(3)}}
		if err := addPlain(pn, "nominal", [][2]float64{{nominal, 0}, {nominal, tallest}}, sty); err != nil {
			return nil, err
		}
		if err := addNotes(pn, plotter.XYs{{X: nominal, Y: tallest}}, []string{"nominal " + strconv.FormatFloat(nominal, 'g', 5, 64)}); err != nil {
			return nil, err
		}
	}
	p.Y.Min = 0
	return fig, nil
}
