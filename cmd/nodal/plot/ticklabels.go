package plot

import (
	"math"
	"nodal/cmd/nodal/notation"
	"nodal/netlist/syntax"
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
// values. A non-zero Offset is subtracted before scaling: the ticks are
// labelled (x − Offset)/Scale, for an axis whose label names the
// reference and the unit of the offsets (offsetAxis).
type linearTicks struct {
	Scale  float64
	Offset float64
}

// linearMaxTicks is the most labelled ticks linearTicks puts on an axis.
const linearMaxTicks = 6

func (t linearTicks) Ticks(lo, hi float64) []gplot.Tick {
	scale := t.Scale
	if scale == 0 {
		scale = 1
	}
	off := t.Offset
	lo, hi = lo-off, hi-off
	vals, step := stepTicks{MaxTicks: linearMaxTicks}.values(lo/scale, hi/scale)
	if len(vals) == 0 {
		return nil
	}
	labels := linearTickLabels(vals, scale == 1 && off == 0)
	// minor ticks: fifths of a 1 or 5 step, halves of a 2 step
	parts := 5.0
	if m := step / math.Pow(10, math.Floor(math.Log10(step))); math.Abs(m-2) < 1e-9 {
		parts = 2
	}
	var ticks []gplot.Tick
	minor := step / parts
	for k := math.Ceil(lo / scale / minor); k*minor <= hi/scale; k++ {
		if math.Mod(math.Round(k), parts) != 0 {
			ticks = append(ticks, gplot.Tick{Value: off + k*minor*scale})
		}
	}
	for i, v := range vals {
		ticks = append(ticks, gplot.Tick{Value: off + v*scale, Label: labels[i]})
	}
	return ticks
}

// maxTickLabelRunes is the longest tick label a linear axis may carry
// before offsetAxis labels it by offsets from a reference instead.
const maxTickLabelRunes = 8

// singleTick marks an axis of zero width with one labelled tick at Value.
type singleTick struct {
	Value float64
}

func (t singleTick) Ticks(lo, hi float64) []gplot.Tick {
	return []gplot.Tick{{Value: t.Value, Label: tickLabel(t.Value)}}
}

// offsetAxis chooses the ticker of a linear axis over [lo, hi] that
// shows label (in words with its unit) for values in unit (netlist unit
// names, "" for a plain ratio), and the axis label to go with it. A range
// whose plain labels are all distinct and at most maxTickLabelRunes long
// keeps linearTicks and label. A narrower one (a metric that barely moves
// across Monte Carlo runs: −43.4293396 … −43.4293390 dB) is labelled by
// offsets from a round reference near the middle, written once in the
// axis label with every digit it has, in a unit scaled by a power of 1000:
// "dc gain (dB), Δ from −43.429339 dB, in ndB". A range of zero width
// (lo == hi) gets a single tick at the value.
func offsetAxis(lo, hi float64, label, unit string) (gplot.Ticker, string) {
	if !(hi > lo) {
		return singleTick{Value: lo}, label
	}
	if plainLabelsFit(linearTicks{}.Ticks(lo, hi)) {
		return linearTicks{}, label
	}
	d := math.Pow(10, math.Ceil(math.Log10(hi-lo)))
	ref := math.Round((lo+hi)/2/d) * d
	far := math.Max(math.Abs(lo-ref), math.Abs(hi-ref))
	e3 := int(math.Floor(math.Log10(far) / 3))
	scale := math.Pow(1000, float64(e3))
	refDigits := 1
	if ref != 0 {
		refDigits = max(1, int(math.Floor(math.Log10(math.Abs(ref))-math.Log10(d)))+1)
	}
	refText := notation.Digits(ref, refDigits, unitSymbol(unit))
	label += ", Δ from " + refText
	if e3 != 0 || unit != "" {
		label += ", in " + offsetUnit(e3, unit)
	}
	return linearTicks{Scale: scale, Offset: ref}, label
}

// plainLabelsFit reports whether the labelled ticks are distinct and
// none is longer than maxTickLabelRunes.
func plainLabelsFit(ticks []gplot.Tick) bool {
	seen := map[string]bool{}
	for _, tk := range ticks {
		if tk.Label == "" {
			continue
		}
		if seen[tk.Label] || len([]rune(tk.Label)) > maxTickLabelRunes {
			return false
		}
		seen[tk.Label] = true
	}
	return len(seen) > 0
}

// unitSymbol is the unit as an axis writes it (degrees as "°").
func unitSymbol(unit string) string {
	if unit == syntax.UnitDegree {
		return "°"
	}
	return unit
}

// offsetUnit names the unit of offsets scaled by 1000^e3: an SI prefix
// on the unit ("µdB") inside f…T, else a power of ten ("10⁻¹⁸ dB",
// "10⁻¹⁸" for a plain ratio).
func offsetUnit(e3 int, unit string) string {
	u := unitSymbol(unit)
	if p := notation.Prefix(e3); (p != "" || e3 == 0) && u != "" {
		return p + u
	}
	return strings.TrimSpace("10" + notation.Superscript(3*e3) + " " + u)
}
