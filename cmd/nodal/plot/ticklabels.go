package plot

import (
	"math"
	"nodal/cmd/nodal/notation"
	"strconv"
	"strings"

	gplot "gonum.org/v1/plot"
)

// maxTickDecimals bounds the decimals a linear tick label may carry; ticks
// that need more are labelled with 'g' and 10 significant digits.
const maxTickDecimals = 12

// linearTickLabels writes the labels of evenly spaced linear-axis ticks
// (values in increasing order, in the axis' plotted unit) with one shared
// number of decimals: the fewest that write every value exactly to within
// a millionth of the tick spacing, which also keeps neighbouring labels
// distinct ("5.95 6.00 6.05", "0 250 500 750"). Exact zero is written
// "0". When the largest magnitude is 10⁵ or more, or below 10⁻², every
// value is first divided by one power of 1000 and the labels carry its SI
// prefix ("1.25M") when si is set, else an exponent ("1.25e6"); an axis
// whose label already names a scaled unit (krad/s, µs) passes si false so
// that prefixes do not stack.
func linearTickLabels(vals []float64, si bool) []string {
	labels := make([]string, len(vals))
	if len(vals) == 0 {
		return labels
	}
	maxAbs, spacing := 0.0, math.Inf(1)
	for i, v := range vals {
		maxAbs = math.Max(maxAbs, math.Abs(v))
		if i > 0 && vals[i]-vals[i-1] > 0 {
			spacing = math.Min(spacing, vals[i]-vals[i-1])
		}
	}
	e := 0
	if maxAbs >= 1e5 || (maxAbs > 0 && maxAbs < 1e-2) {
		e = notation.AxisExp3(maxAbs)
	}
	suffix := ""
	if e != 0 {
		suffix = "e" + strconv.Itoa(3*e)
		if si {
			suffix = notation.Prefix(e)
		}
	}
	div := math.Pow(1000, float64(e))
	if math.IsInf(spacing, 1) { // a single tick: no spacing to resolve
		spacing = math.Max(math.Abs(vals[0]), 1)
	}
	spacing /= div
	scaled := make([]float64, len(vals))
	for i, v := range vals {
		scaled[i] = v / div
	}
	dec := -1
	for k := 0; k <= maxTickDecimals && dec < 0; k++ {
		if exactAndDistinct(scaled, k, spacing) {
			dec = k
		}
	}
	for i, v := range scaled {
		switch {
		case vals[i] == 0:
			labels[i] = "0"
			continue
		case dec < 0:
			labels[i] = strconv.FormatFloat(v, 'g', 10, 64)
		default:
			labels[i] = strconv.FormatFloat(v, 'f', dec, 64)
		}
		if strings.Trim(labels[i], "-0.") == "" { // rounds to zero: no "-0.00"
			labels[i] = "0"
			continue
		}
		labels[i] += suffix
	}
	return labels
}

// exactAndDistinct reports whether every value written with k decimals
// is within spacing·10⁻⁶ of itself and no two neighbours print alike.
func exactAndDistinct(vals []float64, k int, spacing float64) bool {
	p := math.Pow10(k)
	prev := ""
	for i, v := range vals {
		if math.Abs(math.Round(v*p)/p-v) > 1e-6*spacing {
			return false
		}
		s := strconv.FormatFloat(v, 'f', k, 64)
		if i > 0 && s == prev {
			return false
		}
		prev = s
	}
	return true
}

// linearTicks marks a linear axis with labelled ticks at multiples of a
// round step (1, 2 or 5 times a power of ten; at most linearMaxTicks
// ticks, so zero is a tick whenever the range holds it) and unlabelled
// minor ticks between them, labelled by linearTickLabels. A Scale other
// than 0 or 1 divides the axis values by Scale before choosing the ticks,
// so an axis in rad/s can be labelled in krad/s while the data stay in
// rad/s; such an axis gets exponents rather than SI prefixes for extreme
// values.
type linearTicks struct {
	Scale float64
}

// linearMaxTicks is the most labelled ticks linearTicks puts on an axis.
const linearMaxTicks = 6

func (t linearTicks) Ticks(lo, hi float64) []gplot.Tick {
	scale := t.Scale
	if scale == 0 {
		scale = 1
	}
	vals, step := stepTicks{MaxTicks: linearMaxTicks}.values(lo/scale, hi/scale)
	if len(vals) == 0 {
		return nil
	}
	labels := linearTickLabels(vals, scale == 1)
	// minor ticks: fifths of a 1 or 5 step, halves of a 2 step
	parts := 5.0
	if m := step / math.Pow(10, math.Floor(math.Log10(step))); math.Abs(m-2) < 1e-9 {
		parts = 2
	}
	var ticks []gplot.Tick
	minor := step / parts
	for k := math.Ceil(lo / scale / minor); k*minor <= hi/scale; k++ {
		if math.Mod(math.Round(k), parts) != 0 {
			ticks = append(ticks, gplot.Tick{Value: k * minor * scale})
		}
	}
	for i, v := range vals {
		ticks = append(ticks, gplot.Tick{Value: v * scale, Label: labels[i]})
	}
	return ticks
}
