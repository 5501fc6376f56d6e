package response

import (
	"math"
	"math/cmplx"
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
