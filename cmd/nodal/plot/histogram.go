package plot

import (
	"fmt"
	"math"
	"strconv"

	"nodal/cmd/nodal/notation"

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
	return MetricHistogram(HistogramSpec{Label: name, Values: values, Bins: bins, Nominal: nominal})
}

// HistogramSpec describes a metric histogram: Label for the x axis (in
// words with the unit: "−3 dB frequency (Hz)"), the Values, Bins (≤ 0:
// automatic), the Nominal value (NaN: none), the Unit the nominal label and
// the limits are written in (notation.Metric: "nominal 2 kHz"), and the
// requirement Limits drawn as vertical lines labelled "limit 2.1 kHz".
// A limit within one data span of the values widens the axis to show it;
// one farther off is named at the nearer edge ("limit 0.10 dB →").
// A metric that barely moves is labelled by offsets from a reference the
// axis label names (offsetAxis); one that never moves gets one bar and
// one tick at its value.
type HistogramSpec struct {
	Label   string
	Values  []float64
	Bins    int
	Nominal float64
	Unit    string
	Limits  []float64
}

// MetricHistogram draws a histogram as Histogram does, with the units and
// the requirement limits of spec. Series keys add "limit K" (K from 1)
// with the two ends of each limit line drawn.
func MetricHistogram(spec HistogramSpec) (*Figure, error) {
	name, values, bins, nominal := spec.Label, spec.Values, spec.Bins, spec.Nominal
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
	vmin, vmax := values[0], values[0]
	for _, v := range values {
		vmin, vmax = math.Min(vmin, v), math.Max(vmax, v)
	}
	if vmin == vmax { // every run alike: one bar centred on the value
		w := math.Max(1e-3*math.Abs(vmin), 1e-12)
		h.Bins = []plotter.HistogramBin{{Min: vmin - w/2, Max: vmin + w/2, Weight: float64(len(values))}}
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
		if err := addNotes(pn, plotter.XYs{{X: nominal, Y: tallest}}, []string{"nominal " + valueText(nominal, spec.Unit)}); err != nil {
			return nil, err
		}
	}
	lo, hi := h.Bins[0].Min, h.Bins[len(h.Bins)-1].Max
	span := math.Max(hi-lo, 1e-12*math.Max(math.Abs(lo), math.Abs(hi)))
	xmin, xmax := lo, hi
	for k, lim := range spec.Limits {
		if !finite(lim) {
			continue
		}
		sty := draw.LineStyle{Color: limitColor, Width: vg.Points(1.2), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}
		text := "limit " + valueText(lim, spec.Unit)
		switch {
		case lim < lo-span:
			if err := addNotes(pn, plotter.XYs{{X: lo, Y: tallest * 0.55}}, []string{"← " + text}); err != nil {
				return nil, err
			}
			continue
		case lim > hi+span:
			if err := addNotes(pn, plotter.XYs{{X: hi - 0.35*span, Y: tallest * 0.55}}, []string{text + " →"}); err != nil {
				return nil, err
			}
			continue
		}
		xmin, xmax = math.Min(xmin, lim), math.Max(xmax, lim)
		if err := addPlain(pn, fmt.Sprintf("limit %d", k+1), [][2]float64{{lim, 0}, {lim, tallest}}, sty); err != nil {
			return nil, err
		}
		if err := addNotes(pn, plotter.XYs{{X: lim, Y: tallest * 0.55}}, []string{text}); err != nil {
			return nil, err
		}
	}
	widened := xmin < lo || xmax > hi
	if widened {
		pad := 0.05 * (xmax - xmin)
		p.X.Min, p.X.Max = xmin-pad, xmax+pad
	}
	if vmin == vmax && !widened {
		p.X.Tick.Marker = singleTick{Value: vmin}
	} else {
		p.X.Tick.Marker, p.X.Label.Text = offsetAxis(p.X.Min, p.X.Max, name, spec.Unit)
	}
	p.Y.Min = 0
	return fig, nil
}

// valueText writes a metric value in its unit, in the one number style.
func valueText(v float64, unit string) string {
	if unit == "" {
		return strconv.FormatFloat(v, 'g', 4, 64)
	}
	return notation.Metric(v, unit)
}
