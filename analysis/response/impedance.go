package response

import (
	"math"
	"math/cmplx"
	"sort"
)

// Extreme is the smallest or largest magnitude of a sampled response and
// the frequency where it occurs.
type Extreme struct {
	FreqHz float64
	Mag    float64 // |H| as a ratio (Ω for an impedance)
}

// Extremes returns the smallest and the largest finite |H| of r, and
// false when r has no finite magnitude.
func Extremes(r *Response) (lo, hi Extreme, ok bool) {
	for i, m := range r.Mag {
		if math.IsNaN(m) || math.IsInf(m, 0) {
			continue
		}
		if !ok || m < lo.Mag {
			lo = Extreme{FreqHz: r.FreqHz[i], Mag: m}
		}
		if !ok || m > hi.Mag {
			hi = Extreme{FreqHz: r.FreqHz[i], Mag: m}
		}
		ok = true
	}
	return lo, hi, ok
}

// Resonance is a frequency where the phase of an impedance crosses 0°.
// Series is true where the phase rises through 0° (capacitive below,
// inductive above: |Z| has a minimum nearby, as in a series LC), false where
// it falls (a parallel LC: a maximum).
type Resonance struct {
	FreqHz float64
	Mag    float64 // |Z| at FreqHz (Ω)
	Series bool
}

// Resonances finds the phase crossings of 0° between neighbouring points
// of r (a jump by 180° or more is a wrap or a zero on the jω axis, not a
// crossing) and refines each by bisection on eval, the exact value at
// s = jω (ω in rad/s), to a relative frequency of 1e-12.
func Resonances(r *Response, eval func(omegaRad float64) complex128) []Resonance {
	var out []Resonance
	for i := 1; i < len(r.FreqHz); i++ {
		p0, p1 := r.PhaseDeg[i-1], r.PhaseDeg[i]
		if math.IsNaN(p0) || math.IsNaN(p1) || math.Abs(p1-p0) >= 180 || r.FreqHz[i-1] <= 0 {
			continue
		}
		if !(p0 < 0 && p1 >= 0 || p0 > 0 && p1 <= 0) {
			continue
		}
		if p1 == 0 && i+1 < len(r.FreqHz) && r.PhaseDeg[i+1] == 0 {
			continue // a flat stretch of 0° is a resistance, not a crossing
		}
		lo, hi := r.FreqHz[i-1], r.FreqHz[i]
		rising := p0 < 0
		im := func(fHz float64) float64 { return imag(eval(2 * math.Pi * fHz)) }
		sLo := im(lo)
		for k := 0; k < 200 && (hi-lo) > 1e-12*hi; k++ {
			mid := math.Sqrt(lo * hi)
			if s := im(mid); (s < 0) == (sLo < 0) {
				lo, sLo = mid, s
			} else {
				hi = mid
			}
		}
		f := math.Sqrt(lo * hi)
		out = append(out, Resonance{FreqHz: f, Mag: cmplx.Abs(eval(2 * math.Pi * f)), Series: rising})
	}
	return out
}

// AxisResonances are the resonances of a lossless impedance: a pole on
// the jω axis is a parallel resonance (|Z| unbounded, Mag +Inf), a zero on
// it a series resonance (Mag 0). Roots count as on the axis when their real
// part is within 1e-9 of their magnitude; only those with loHz ≤ f ≤ hiHz
// (f = Im s / 2π, the positive one of each pair) are returned, in
// increasing frequency.
func AxisResonances(poles, zeros []complex128, loHz, hiHz float64) []Resonance {
	var out []Resonance
	add := func(roots []complex128, mag float64, series bool) {
		for _, r := range roots {
			if imag(r) <= 0 || math.Abs(real(r)) > 1e-9*cmplx.Abs(r) {
				continue
			}
			if f := imag(r) / (2 * math.Pi); f >= loHz && f <= hiHz {
				out = append(out, Resonance{FreqHz: f, Mag: mag, Series: series})
			}
		}
	}
	add(poles, math.Inf(1), false)
	add(zeros, 0, true)
	for i := 1; i < len(out); i++ {
		for j := i; j > 0 && out[j].FreqHz < out[j-1].FreqHz; j-- {
			out[j], out[j-1] = out[j-1], out[j]
		}
	}
	return out
}

// RefineExtreme returns x, the smallest (min) or largest |H| of the sampled
// r, refined by golden-section search in ln f on |eval(jω)| (ω in rad/s)
// between the sampled frequencies on either side of x.FreqHz, to 1e-11 in
// ln f. Between grid points the true extreme lies off every sample, and
// off the resonance too (where the phase is 0°) unless the impedance is a
// plain series or parallel R-L-C: R + sL in series with C ∥ Rp (10 Ω, 1 mH,
// 1 µF, 1 kΩ) is 11 Ω at its resonance, 5.0304 kHz, but 10.9946 Ω at
// 5.0579 kHz. The refined point replaces x only when it is more extreme;
// an infinite or zero x (a root on the jω axis) and a non-finite eval are
// left as they are.
func RefineExtreme(r *Response, x Extreme, min bool, eval func(omegaRad float64) complex128) Extreme {
	n := len(r.FreqHz)
	if n < 2 || !(x.Mag > 0) || math.IsInf(x.Mag, 0) || !(x.FreqHz > 0) {
		return x
	}
	j := sort.SearchFloat64s(r.FreqHz, x.FreqHz) // first sample ≥ x
	lo, hi := x.FreqHz, x.FreqHz
	if j > 0 {
		lo = r.FreqHz[j-1]
	}
	switch {
	case j < n && r.FreqHz[j] > x.FreqHz:
		hi = r.FreqHz[j]
	case j+1 < n:
		hi = r.FreqHz[j+1]
	}
	if !(lo > 0 && hi > lo) {
		return x
	}
	sign := 1.0
	if !min {
		sign = -1
	}
	g := func(u float64) float64 { return sign * cmplx.Abs(eval(2*math.Pi*math.Exp(u))) }
	const phi = 0.6180339887498949 // (√5 − 1)/2
	a, b := math.Log(lo), math.Log(hi)
	c, d := b-phi*(b-a), a+phi*(b-a)
	gc, gd := g(c), g(d)
	for k := 0; k < 200 && b-a > 1e-11; k++ {
		if gc <= gd {
			b, d, gd = d, c, gc
			c = b - phi*(b-a)
			gc = g(c)
		} else {
			a, c, gc = c, d, gd
			d = a + phi*(b-a)
			gd = g(d)
		}
	}
	u := (a + b) / 2
	m := cmplx.Abs(eval(2 * math.Pi * math.Exp(u)))
	if math.IsNaN(m) || math.IsInf(m, 0) {
		return x
	}
	if min && m < x.Mag || !min && m > x.Mag {
		return Extreme{FreqHz: math.Exp(u), Mag: m}
	}
	return x
}
