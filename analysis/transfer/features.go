package transfer

import (
	"errors"
	"math"
	"math/cmplx"
	"sort"
)

// ErrUnbounded means |H(jω)| is unbounded on the frequency axis (a pole on
// the jω axis, a pole at s = 0, or more zeros than poles), so a peak or a
// reference gain does not exist.
var ErrUnbounded = errors.New("the gain is unbounded on the frequency axis")

// ErrNoReference means a −3 dB reference gain cannot be defined: H has an
// integrator (infinite gain at DC) or is identically zero.
var ErrNoReference = errors.New("no reference gain for a −3 dB frequency")

// ErrNoPassband means a response has no passband reference for peaking:
// it is neither a low-pass kind (finite, non-zero DC gain) nor a high-pass
// kind (a zero at DC and a finite, non-zero high-frequency gain), as a
// band-pass is.
var ErrNoPassband = errors.New("no passband reference: peaking is defined for low- and high-pass responses (use peak for the largest gain)")

// RootPair describes a second-order section (s − Root)(s − Other) =
// s² + (ω0/Q)·s + ω0²: a complex-conjugate pair of poles or zeros, or, from
// DominantPair only, two real poles.
type RootPair struct {
	Root     complex128 // the member with positive imaginary part (for two real poles, the smaller in magnitude), rad/s
	Other    complex128 // the other member: the conjugate of Root, or the second real pole, rad/s
	OmegaRad float64    // natural frequency ω0 = √(Root·Other) (|Root| for a complex pair), rad/s
	F0Hz     float64    // ω0/(2π), Hz
	Q        float64    // quality factor ω0/(−(Root + Other)); +Inf on the jω axis, negative in the right half-plane, ≤ 0.5 for real poles
	Zeta     float64    // damping ratio −(Root + Other)/(2ω0) = 1/(2Q)
}

// Corner is a real pole or zero.
type Corner struct {
	Root     float64 // the root, rad/s (negative in the left half-plane)
	OmegaRad float64 // corner angular frequency |Root|, rad/s
	FreqHz   float64 // corner frequency |Root|/(2π), Hz; 0 for a root at s = 0
}

// MultipleRoot is a distinct root with its multiplicity.
type MultipleRoot struct {
	Root         complex128 // rad/s
	Multiplicity int        // ≥ 1
}

// DistinctPoles returns each distinct pole once with its multiplicity,
// in the order of Poles (Extract merges an m-fold pole split by rounding
// into m equal values, so equality is exact).
func (h *TransferFunction) DistinctPoles() []MultipleRoot { return DistinctRoots(h.Poles) }

// DistinctZeros is DistinctPoles for the zeros.
func (h *TransferFunction) DistinctZeros() []MultipleRoot { return DistinctRoots(h.Zeros) }

// DistinctRoots returns each distinct value of roots once with the number
// of times it occurs, in the order of first occurrence (a conjugate pair
// is two distinct roots, each with the pair's multiplicity). Equality is
// exact: Extract makes the members of a multiple root equal.
func DistinctRoots(roots []complex128) []MultipleRoot {
	var out []MultipleRoot
next:
	for _, r := range roots {
		for i := range out {
			if out[i].Root == r {
				out[i].Multiplicity++
				continue next
			}
		}
		out = append(out, MultipleRoot{Root: r, Multiplicity: 1})
	}
	return out
}

// PolePairs returns the complex pole pairs in the order of Poles.
func (h *TransferFunction) PolePairs() []RootPair { return rootPairs(h.Poles) }

// ZeroPairs returns the complex zero pairs in the order of Zeros.
func (h *TransferFunction) ZeroPairs() []RootPair { return rootPairs(h.Zeros) }

// RealPoles returns the real poles with their corner frequencies.
func (h *TransferFunction) RealPoles() []Corner { return corners(h.Poles) }

// RealZeros returns the real zeros with their corner frequencies.
func (h *TransferFunction) RealZeros() []Corner { return corners(h.Zeros) }

func rootPairs(roots []complex128) []RootPair {
	var out []RootPair
	for _, r := range roots {
		if imag(r) <= 0 {
			continue
		}
		out = append(out, PairOf(r))
	}
	return out
}

// PairOf returns the second-order section of the complex root r and its
// conjugate, (s − r)(s − r̄) = s² + (ω0/Q)·s + ω0²: ω0 = |r|, f0 = ω0/2π,
// Q = ω0/(−2·Re r) and ζ = −Re r/ω0 = 1/(2Q) (common practice). It is the
// one place nodal computes f0, Q and ζ of a pair. A pair on the jω axis
// (Re r = 0) has Q = +Inf and ζ = 0; one in the right half-plane has
// Q < 0. Root is r as given, Other its conjugate.
func PairOf(r complex128) RootPair {
	w0 := cmplx.Abs(r)
	zeta, q := 0.0, math.Inf(1) // on the jω axis (ζ = +0, not −0)
	if real(r) != 0 {
		zeta, q = -real(r)/w0, w0/(-2*real(r))
	}
	return RootPair{Root: r, Other: cmplx.Conj(r), OmegaRad: w0, F0Hz: w0 / (2 * math.Pi), Q: q, Zeta: zeta}
}

func corners(roots []complex128) []Corner {
	var out []Corner
	for _, r := range roots {
		if imag(r) == 0 {
			w := math.Abs(real(r))
			out = append(out, Corner{Root: real(r), OmegaRad: w, FreqHz: w / (2 * math.Pi)})
		}
	}
	return out
}

// Asymptote is the behaviour H(s) ≈ Gain·s^Power at one end of the
// frequency axis.
type Asymptote struct {
	Gain             float64 // signed coefficient (a ratio, e.g. V/V, when Power = 0)
	GainDB           float64 // 20·log10|Gain|: the gain in dB when Power = 0, else the asymptote's value at ω = 1 rad/s
	Power            int     // power of s: +k for k zeros at s = 0 (DC) or m−n (high frequency)
	SlopeDBPerDecade float64 // 20·Power, dB/decade
}

func newAsymptote(gain float64, power int) Asymptote {
	return Asymptote{Gain: gain, GainDB: 20 * math.Log10(math.Abs(gain)), Power: power, SlopeDBPerDecade: 20 * float64(power)}
}

// DCGain returns the low-frequency asymptote: with k zeros and l poles at
// s = 0, H(s) ≈ G0·s^(k−l). Power 0 means a finite DC gain Gain = H(0);
// Power > 0 a zero of that order at DC (slope +20·Power dB/dec). It comes
// from DirectDC when set, else from the factored form (never from the
// expanded coefficients, which need not fit a float64 at high order).
func (h *TransferFunction) DCGain() Asymptote {
	k, w := h.Scaled()
	if k == 0 {
		return newAsymptote(0, 0)
	}
	power := 0
	var nz, np []complex128
	for _, z := range h.Zeros {
		if z == 0 {
			power++
		} else {
			nz = append(nz, z)
		}
	}
	for _, p := range h.Poles {
		if p == 0 {
			power--
		} else {
			np = append(np, p)
		}
	}
	if power == 0 && h.DirectDC != nil {
		return newAsymptote(*h.DirectDC, 0)
	}
	// G0 = k·w^(−power)·Π(−ẑ)/Π(−p̂), interleaved in scaled units.
	v := NewWideProduct(complex(k, 0))
	cw := complex(w, 0)
	for i := 0; i < max(len(nz), len(np)); i++ {
		if i < len(nz) {
			v.Mul(-nz[i] / cw)
		}
		if i < len(np) {
			v.Div(-np[i] / cw)
		}
	}
	for i := 0; i < power; i++ {
		v.Div(cw)
	}
	for i := 0; i > power; i-- {
		v.Mul(cw)
	}
	return newAsymptote(real(v.Value()), power)
}

// HighFreqAsymptote returns H(s) ≈ Gain·s^(m−n) as s → ∞ (slope 20·(m−n)
// dB/decade; Gain the leading-coefficient ratio).
func (h *TransferFunction) HighFreqAsymptote() Asymptote {
	return newAsymptote(h.Gain, len(h.Zeros)-len(h.Poles))
}

// GainDB returns 20·log10|H(jω)| for ω in rad/s (−Inf on a zero).
func (h *TransferFunction) GainDB(omegaRad float64) float64 {
	return 20 * math.Log10(cmplx.Abs(h.EvalFactored(complex(0, omegaRad))))
}

// PhaseDeg returns the phase of H(jω) in degrees for ω in rad/s, as the
// sum of the factors' phases: arg(Gain) (180° when Gain < 0) plus
// arg(jω − z) for every zero minus arg(jω − p) for every pole, each in
// (−180°, 180°]. It is continuous in ω except where ω crosses a root on
// the jω axis, so a 6th-order low-pass reads −270°, not +90°.
func (h *TransferFunction) PhaseDeg(omegaRad float64) float64 {
	s := complex(0, omegaRad)
	ph := 0.0
	if h.Gain < 0 {
		ph = math.Pi
	}
	for _, z := range h.Zeros {
		ph += cmplx.Phase(s - z)
	}
	for _, p := range h.Poles {
		ph -= cmplx.Phase(s - p)
	}
	return ph * 180 / math.Pi
}

// ODE is the circuit's differential equation
//
//	A[n]·y⁽ⁿ⁾ + … + A[1]·y′ + A[0]·y = B[m]·u⁽ᵐ⁾ + … + B[0]·u
//
// with y the output, u the input and time in seconds; A[k] = Den[k],
// B[k] = Num[k], so the lowest non-zero A is 1 (A[0] = 1 unless there is
// a pole at s = 0).
type ODE struct {
	A, B []float64
}

// ODE returns the differential equation of H (copies of Den and Num).
func (h *TransferFunction) ODE() ODE {
	return ODE{A: append([]float64(nil), h.Den...), B: append([]float64(nil), h.Num...)}
}

// magSquared is |H(jω)|² = C·P(ξ)/Q(ξ) in ξ = ω²/ωs², with P and Q
// products of factors with real coefficients (one per real root, one per
// conjugate pair), so values and derivatives are computed factor by
// factor, accurately for roots spread over many decades.
type magSquared struct {
	c    float64
	ws   float64     // ωs, rad/s
	p, q [][]float64 // ascending factor polynomials in ξ
}

func newMagSquared(h *TransferFunction) magSquared {
	k, ws := h.Scaled()
	if h.ScaleRad == 0 {
		if ws = rootCentre(h.Poles, h.Zeros); ws == 0 {
			ws = 1
		}
		k *= math.Pow(ws, float64(len(h.Zeros)-len(h.Poles)))
	}
	m := magSquared{ws: ws}
	m.c = k * k
	m.p = xiFactors(h.Zeros, ws)
	m.q = xiFactors(h.Poles, ws)
	return m
}

// xiFactors returns |jω − r|² (real r) and |jω − r|²|jω − r̄|² (pairs) as
// polynomials in ξ = ω²/ωs², divided by ωs² per root.
func xiFactors(roots []complex128, ws float64) [][]float64 {
	var out [][]float64
	for _, r := range roots {
		a, b := real(r)/ws, imag(r)/ws
		switch {
		case b == 0:
			out = append(out, []float64{a * a, 1})
		case b > 0:
			m2 := a*a + b*b
			out = append(out, []float64{m2 * m2, 2 * (a*a - b*b), 1})
		}
	}
	return out
}

// logAndDerivs returns ln(|H|²), and its first and second derivatives
// with respect to u = ln ξ, at ξ > 0.
func (m magSquared) logAndDerivs(xi float64) (f, d1, d2 float64) {
	f = math.Log(m.c)
	add := func(fs [][]float64, sign float64) {
		for _, p := range fs {
			v, dv, ddv := polyEval3(p, xi)
			f += sign * math.Log(math.Abs(v))
			// d/du = ξ d/dξ; d²/du² = ξ d/dξ + ξ² d²/dξ².
			g := xi * dv / v
			gg := g + xi*xi*(ddv*v-dv*dv)/(v*v)
			d1 += sign * g
			d2 += sign * gg
		}
	}
	add(m.p, 1)
	add(m.q, -1)
	return f, d1, d2
}

// polyEval3 returns p(x), p′(x), p″(x).
func polyEval3(p []float64, x float64) (v, d, dd float64) {
	for k := len(p) - 1; k >= 0; k-- {
		dd = dd*x + 2*d
		d = d*x + v
		v = v*x + p[k]
	}
	return v, d, dd
}

// scanGrid returns ascending values of u = ln ξ that bracket every
// feature of |H(jω)|²: 40 points per decade of ξ from four decades below
// the smallest non-zero root to four above the largest, plus, around each
// root, points ξ₀·(1 + k·2ζ) that resolve a resonance of width ζ however
// sharp (Q up to 10¹⁵). Outside the span every factor is on its
// asymptote, so |H| is monotone there.
func (m magSquared) scanGrid(roots ...[]complex128) []float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	var extra []float64
	for _, l := range roots {
		for _, r := range l {
			a := cmplx.Abs(r) / m.ws
			if a == 0 || imag(r) < 0 {
				continue
			}
			x0 := math.Log(a * a)
			lo, hi = math.Min(lo, x0), math.Max(hi, x0)
			zeta := math.Abs(real(r)) / cmplx.Abs(r)
			if imag(r) == 0 {
				continue
			}
			for k := -6; k <= 6; k++ {
				for _, w := range [...]float64{zeta, zeta * 0.25} {
					if v := 1 + float64(k)*2*w; v > 0 {
						extra = append(extra, x0+math.Log(v))
					}
				}
			}
		}
	}
	if math.IsInf(lo, 1) {
		lo, hi = 0, 0
	}
	lo, hi = lo-4*math.Ln10, hi+4*math.Ln10
	step := math.Ln10 / 40
	n := int(math.Ceil((hi-lo)/step)) + 1
	u := make([]float64, 0, n+len(extra))
	for i := 0; i < n; i++ {
		u = append(u, lo+float64(i)*step)
	}
	u = append(u, extra...)
	sort.Float64s(u)
	return u
}

// stationary returns the stationary points of ln|H|² on the grid.
func (m magSquared) stationary(grid []float64) []float64 {
	return signChanges(grid, func(u float64) float64 {
		_, d1, _ := m.logAndDerivs(math.Exp(u))
		return d1
	})
}

// signChanges returns the roots of g(u) on the grid u: each sign change
// between neighbours is bisected to full precision (g continuous there).
func signChanges(u []float64, g func(u float64) float64) []float64 {
	var out []float64
	prevU, prevG := u[0], g(u[0])
	for _, x := range u[1:] {
		if x == prevU {
			continue
		}
		gx := g(x)
		switch {
		case gx == 0:
			out = append(out, x)
		case prevG != 0 && (gx > 0) != (prevG > 0) && !math.IsNaN(gx) && !math.IsNaN(prevG):
			a, b, ga := prevU, x, prevG
			for it := 0; it < 200 && b-a > 1e-15*math.Max(1, math.Abs(a)); it++ {
				mid := 0.5 * (a + b)
				gm := g(mid)
				if gm == 0 {
					a, b = mid, mid
					break
				}
				if (gm > 0) == (ga > 0) {
					a, ga = mid, gm
				} else {
					b = mid
				}
			}
			out = append(out, 0.5*(a+b))
		}
		prevU, prevG = x, gx
	}
	return out
}

// Peak is the largest gain on the frequency axis.
type Peak struct {
	Gain     float64 // max |H(jω)| (ratio)
	GainDB   float64 // 20·log10 Gain, dB
	OmegaRad float64 // where it occurs, rad/s: 0 at DC, +Inf when the supremum is the high-frequency limit
	FreqHz   float64 // OmegaRad/(2π), Hz
}

// Peak returns the maximum of |H(jω)| over 0 ≤ ω ≤ ∞, from the stationary
// points of |H(jω)|², found on the factored form (never from expanded
// coefficients: see scanGrid), and the two ends. It returns ErrUnbounded when the gain
// has no finite maximum, and a zero Peak for H ≡ 0.
func (h *TransferFunction) Peak() (Peak, error) {
	if k, _ := h.Scaled(); k == 0 {
		return Peak{GainDB: math.Inf(-1)}, nil
	}
	for _, p := range h.Poles {
		if real(p) == 0 {
			return Peak{}, ErrUnbounded
		}
	}
	if len(h.Zeros) > len(h.Poles) {
		return Peak{}, ErrUnbounded
	}
	best := Peak{Gain: math.Abs(h.DCGain().Gain)} // DC end (pole-free at 0)
	if h.DCGain().Power > 0 {
		best.Gain = 0
	}
	if k, _ := h.Scaled(); len(h.Zeros) == len(h.Poles) && math.Abs(k) > best.Gain {
		best = Peak{Gain: math.Abs(k), OmegaRad: math.Inf(1)}
	}
	m := newMagSquared(h)
	// Stationary points of ln|H|² in u = ln ξ, on the factored form.
	grid := m.scanGrid(h.Poles, h.Zeros)
	for _, u := range m.stationary(grid) {
		xi := math.Exp(u)
		f, _, _ := m.logAndDerivs(xi)
		if g := math.Sqrt(math.Exp(f)); g > best.Gain {
			best = Peak{Gain: g, OmegaRad: m.ws * math.Sqrt(xi)}
		}
	}
	best.GainDB = 20 * math.Log10(best.Gain)
	best.FreqHz = best.OmegaRad / (2 * math.Pi)
	return best, nil
}

// PassbandRef returns the passband reference gain of a low- or high-pass
// response, as a ratio: the DC gain when it is finite and non-zero (a
// low-pass, also a notch or an all-pass), else, for a zero at DC, the
// high-frequency gain when it is finite and non-zero (a high-pass). Any
// other response (a band-pass, an integrator, H ≡ 0) returns
// ErrNoPassband.
func (h *TransferFunction) PassbandRef() (float64, error) {
	dc := h.DCGain()
	k, _ := h.Scaled()
	switch {
	case k == 0 || dc.Power < 0:
	case dc.Power == 0:
		return math.Abs(dc.Gain), nil
	case len(h.Zeros) == len(h.Poles):
		return math.Abs(k), nil
	}
	return 0, ErrNoPassband
}

// PeakingDB returns how far the peak gain rises above the passband
// reference of a low- or high-pass (PassbandRef), in dB: 0 for a
// monotone response, 20·log10(Q/√(1 − 1/(4Q²))) for a second-order
// low-pass with Q > 1/√2. It returns ErrNoPassband for a band-pass and
// ErrUnbounded when the gain has no finite maximum.
func (h *TransferFunction) PeakingDB() (float64, error) {
	ref, err := h.PassbandRef()
	if err != nil {
		return 0, err
	}
	pk, err := h.Peak()
	if err != nil {
		return 0, err
	}
	return math.Max(0, pk.GainDB-20*math.Log10(ref)), nil
}

// uniqueSorted sorts v and removes values within 1e-9 relative.
func uniqueSorted(v []float64) []float64 {
	sort.Float64s(v)
	var out []float64
	for _, x := range v {
		if len(out) == 0 || math.Abs(x-out[len(out)-1]) > 1e-9*x {
			out = append(out, x)
		}
	}
	return out
}

// Bandwidth is the result of F3dB.
type Bandwidth struct {
	RefGain     float64   // reference gain (ratio): the DC gain, the high-frequency gain of a high-pass, or the peak of a band-pass
	RefDB       float64   // 20·log10 RefGain, dB
	CrossingsHz []float64 // every frequency where |H| = RefGain/√2, ascending, Hz
}

// F3dB returns the frequencies where the gain is 3.01 dB (a factor √2)
// below the reference: the low-frequency gain when H(0) is finite and
// non-zero; for a zero at DC, the high-frequency gain when it is finite and
// non-zero (high-pass), else the peak gain (band-pass). The crossings are
// found on the factored form of |H(jω)|² (sign changes on scanGrid,
// bisected to full precision), never from expanded coefficients, so any
// order is accurate and no eigenvalue routine is involved.
func (h *TransferFunction) F3dB() (Bandwidth, error) {
	dc := h.DCGain()
	k, _ := h.Scaled()
	var ref float64
	switch {
	case k == 0 || dc.Power < 0:
		return Bandwidth{}, ErrNoReference
	case dc.Power == 0:
		ref = math.Abs(dc.Gain)
	case len(h.Zeros) == len(h.Poles):
		ref = math.Abs(k)
	default:
		pk, err := h.Peak()
		if err != nil {
			return Bandwidth{}, err
		}
		ref = pk.Gain
	}
	m := newMagSquared(h)
	target := math.Log(ref * ref / 2)
	var out []float64
	grid := m.scanGrid(h.Poles, h.Zeros)
	for _, u := range signChanges(grid, func(u float64) float64 {
		f, _, _ := m.logAndDerivs(math.Exp(u))
		return f - target
	}) {
		out = append(out, m.ws*math.Exp(u/2)/(2*math.Pi))
	}
	// A tangency (a double crossing) has no sign change: it is a
	// stationary point on the level.
	// Rounding may split it into two crossings √ε apart: they are the
	// tangency.
	for _, u := range m.stationary(grid) {
		if f, _, _ := m.logAndDerivs(math.Exp(u)); math.Abs(f-target) <= 1e-8 {
			t := m.ws * math.Exp(u/2) / (2 * math.Pi)
			kept := out[:0]
			for _, x := range out {
				if math.Abs(x-t) > 1e-6*t {
					kept = append(kept, x)
				}
			}
			out = append(kept, t)
		}
	}
	return Bandwidth{RefGain: ref, RefDB: 20 * math.Log10(ref), CrossingsHz: uniqueSorted(out)}, nil
}
