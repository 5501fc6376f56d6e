package response

import (
	"math"

	"nodal/netlist"
)

// LogGrid returns logarithmically spaced frequencies from fromHz to toHz,
// both included, with perDecade intervals per decade (rounded so that the
// end points are exact); LogGridSize is its length. It returns nil unless
// 0 < fromHz ≤ toHz (finite) and perDecade > 0; fromHz == toHz gives one
// point. The span is taken as log10(toHz) − log10(fromHz), so ranges whose
// ratio overflows a float64 (1e-300 to 1e300) are spaced correctly; callers
// bound the size with LogGridSize before asking for the grid.
func LogGrid(fromHz, toHz float64, perDecade int) []float64 {
	n := LogGridSize(fromHz, toHz, perDecade)
	if n == 0 {
		return nil
	}
	if n == 1 {
		return []float64{fromHz}
	}
	lo, hi := math.Log10(fromHz), math.Log10(toHz)
	steps := n - 1
	f := make([]float64, n)
	for i := range f {
		f[i] = math.Pow(10, lo+(hi-lo)*float64(i)/float64(steps))
	}
	f[0], f[steps] = fromHz, toHz
	return f
}

// LogGridSize is the number of points LogGrid gives for these arguments
// (0 when it gives none), computed without building the grid; it saturates
// at math.MaxInt for spans no grid could hold.
func LogGridSize(fromHz, toHz float64, perDecade int) int {
	if !(fromHz > 0) || !(toHz >= fromHz) || math.IsInf(toHz, 0) || perDecade <= 0 {
		return 0
	}
	if fromHz == toHz {
		return 1
	}
	steps := math.Round((math.Log10(toHz) - math.Log10(fromHz)) * float64(perDecade))
	if steps >= math.MaxInt/2 {
		return math.MaxInt
	}
	return max(1, int(steps)) + 1
}

// LinearGrid returns n equally spaced values from from to to, both
// included (n == 1 gives from alone). It returns nil for n < 1 or
// non-finite ends.
func LinearGrid(from, to float64, n int) []float64 {
	if n < 1 || math.IsNaN(from) || math.IsNaN(to) || math.IsInf(from, 0) || math.IsInf(to, 0) {
		return nil
	}
	if n == 1 {
		return []float64{from}
	}
	f := make([]float64, n)
	for i := range f {
		f[i] = from + (to-from)*float64(i)/float64(n-1)
	}
	f[n-1] = to
	return f
}

// DefaultRange returns a sweep range in Hz covering, two decades either
// side, every corner frequency the circuit's own parts make: 1/(2πRC) for
// every resistor–capacitor pair, R/(2πL) for every resistor–inductor pair,
// 1/(2π√(LC)) for every inductor–capacitor pair, and each op-amp's gbw and
// gbw/a0. A circuit with none of these gets 10 Hz to 100 kHz. This is a
// first estimate: the circuit's poles and zeros give a better one.
func DefaultRange(c *netlist.Circuit) (fromHz, toHz float64) {
	// Each corner is monotone in both of its part values, so its extremes
	// over all pairs are at the extreme values: the smallest and largest
	// positive R, C and L stand for every pair (O(parts), not O(parts²):
	// a 10,000-section ladder has 10⁸ pairs).
	var r, cp, l valueSpan
	lo, hi := math.Inf(1), math.Inf(-1)
	note := func(f float64) {
		if f > 0 && !math.IsInf(f, 0) {
			lo, hi = math.Min(lo, f), math.Max(hi, f)
		}
	}
	for _, p := range c.Parts {
		switch p.Kind {
		case netlist.Resistor:
			r.add(p.Value)
		case netlist.Capacitor:
			cp.add(p.Value)
		case netlist.Inductor:
			l.add(p.Value)
		case netlist.OpAmp:
			note(p.GBWHz)
			if p.A0 > 0 {
				note(p.GBWHz / p.A0)
			}
		}
	}
	const twoPi = 2 * math.Pi
	for _, rv := range r.ends() {
		for _, cv := range cp.ends() {
			note(1 / (twoPi * rv * cv))
		}
		for _, lv := range l.ends() {
			note(rv / (twoPi * lv))
		}
	}
	for _, lv := range l.ends() {
		for _, cv := range cp.ends() {
			note(1 / (twoPi * math.Sqrt(lv*cv)))
		}
	}
	if lo > hi {
		return 10, 100e3
	}
	return lo / 100, hi * 100
}

// valueSpan is the smallest and largest positive finite part value seen.
type valueSpan struct {
	min, max float64
	any      bool
}

func (v *valueSpan) add(x float64) {
	if !(x > 0) || math.IsInf(x, 0) {
		return // gives no corner
	}
	if !v.any {
		v.min, v.max, v.any = x, x, true
		return
	}
	v.min, v.max = math.Min(v.min, x), math.Max(v.max, x)
}

// ends returns the extreme values (none when no value was seen).
func (v valueSpan) ends() []float64 {
	if !v.any {
		return nil
	}
	return []float64{v.min, v.max}
}
