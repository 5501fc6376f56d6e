package plot

import (
	"math"
	"nodal/cmd/nodal/notation"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// logTicks marks a log-scaled frequency axis: a labelled major tick on
// every decade (with an SI prefix: 100, 1k, 10k), unlabelled minor ticks at
// 2…9 times the decade. When the range holds fewer than two decade ticks
// the 2× and 5× ticks are labelled as well. hideLabels blanks every label
// (to a single space, so the ticks stay major) for a panel that shares its
// x axis with the one below.
type logTicks struct {
	hideLabels bool
}

func (t logTicks) Ticks(lo, hi float64) []gplot.Tick {
	if lo <= 0 || hi <= 0 || hi < lo {
		return nil
	}
	d0 := int(math.Floor(math.Log10(lo)))
	d1 := int(math.Ceil(math.Log10(hi)))
	decadesInside := 0
	for d := d0; d <= d1; d++ {
		if v := math.Pow10(d); v >= lo && v <= hi {
			decadesInside++
		}
	}
	var ticks []gplot.Tick
	for d := d0; d <= d1; d++ {
		dec := math.Pow10(d)
		for m := 1; m <= 9; m++ {
			v := dec * float64(m)
			if d == d1 && m > 1 {
				break
			}
			tk := gplot.Tick{Value: v}
			if m == 1 || (decadesInside < 2 && (m == 2 || m == 5)) {
				tk.Label = tickLabel(v)
				if t.hideLabels {
					tk.Label = " "
				}
			}
			ticks = append(ticks, tk)
		}
	}
	return ticks
}

// tickLabel writes a tick value with an SI prefix and no unit.
func tickLabel(v float64) string {
	return notation.Compact(v, "")
}

// stepTicks puts labelled ticks at multiples of the first step in Steps
// that gives at most MaxTicks ticks in the range (phase axes use 15°, 30°,
// 45°, 90°, 180°). With Steps nil the steps are 1, 2 and 5 times a power
// of ten, chosen for the range.
type stepTicks struct {
	Steps    []float64
	MaxTicks int
}

func (t stepTicks) Ticks(lo, hi float64) []gplot.Tick {
	vals, _ := t.values(lo, hi)
	labels := linearTickLabels(vals, true)
	ticks := make([]gplot.Tick, len(vals))
	for i, v := range vals {
		ticks[i] = gplot.Tick{Value: v, Label: labels[i]}
	}
	return ticks
}

// values returns the tick values in [lo, hi] and the step between them
// (none for an empty or non-finite range).
func (t stepTicks) values(lo, hi float64) ([]float64, float64) {
	if !(hi > lo) || !finite(lo) || !finite(hi) {
		return nil, 0
	}
	steps := t.Steps
	if steps == nil {
		e := math.Floor(math.Log10((hi - lo) / float64(t.MaxTicks)))
		for _, k := range []float64{e, e + 1} {
			for _, m := range []float64{1, 2, 5} {
				steps = append(steps, m*math.Pow(10, k))
			}
		}
	}
	step := steps[len(steps)-1]
	for _, s := range steps {
		if (math.Floor(hi/s)-math.Ceil(lo/s))+1 <= float64(t.MaxTicks) {
			step = s
			break
		}
	}
	var vals []float64
	for k := math.Ceil(lo / step); k*step <= hi; k++ {
		vals = append(vals, k*step)
	}
	return vals, step
}

// Tickers of the frequency-response panels.
var (
	phaseTicks = stepTicks{Steps: []float64{5, 10, 15, 30, 45, 90, 180}, MaxTicks: 8}
	magTicks   = stepTicks{MaxTicks: 7}
)

// grid draws light grid lines at every labelled tick of both axes and,
// on a log x axis, fainter lines at the minor ticks, so each decade is
// visibly subdivided.
type grid struct {
	logX bool
}

func (g grid) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	major := draw.LineStyle{Color: gridMajor, Width: vg.Points(0.5)}
	minor := draw.LineStyle{Color: gridMinor, Width: vg.Points(0.4)}
	for _, tk := range p.X.Tick.Marker.Ticks(p.X.Min, p.X.Max) {
		x := trX(tk.Value)
		if x < c.Min.X || x > c.Max.X {
			continue
		}
		switch {
		case tk.Label != "":
			c.StrokeLine2(major, x, c.Min.Y, x, c.Max.Y)
		case g.logX:
			c.StrokeLine2(minor, x, c.Min.Y, x, c.Max.Y)
		}
	}
	for _, tk := range p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max) {
		y := trY(tk.Value)
		if tk.Label == "" || y < c.Min.Y || y > c.Max.Y {
			continue
		}
		c.StrokeLine2(major, c.Min.X, y, c.Max.X, y)
	}
}

// originAxes draws the real and imaginary axes through the origin across
// the whole data area (for the s-plane).
type originAxes struct{}

func (originAxes) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.LineStyle{Color: inkColor, Width: vg.Points(0.8)}
	if x := trX(0); x >= c.Min.X && x <= c.Max.X {
		c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
	}
	if y := trY(0); y >= c.Min.Y && y <= c.Max.Y {
		c.StrokeLine2(sty, c.Min.X, y, c.Max.X, y)
	}
}

// useLogFreqAxis turns the x axis of p into a log frequency axis over
// [loHz, hiHz], optionally without tick labels.
func useLogFreqAxis(p *gplot.Plot, loHz, hiHz float64, hideLabels bool) {
	p.X.Scale = gplot.LogScale{}
	p.X.Tick.Marker = logTicks{hideLabels: hideLabels}
	p.X.Min, p.X.Max = loHz, hiHz
}
