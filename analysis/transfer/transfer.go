package transfer

import "math"

// TransferFunction is a rational transfer function
//
//	H(s) = N(s)/D(s) = Gain · Π(s − Zeros[i]) / Π(s − Poles[i])
//
// with s in rad/s.
//
// Invariants: Num and Den are ascending (index k is the coefficient of s^k);
// Den is normalised so that its lowest-order non-zero coefficient is 1;
// len(Den)-1 == len(Poles) and len(Num)-1 == len(Zeros) (trailing zero
// coefficients are trimmed); complex poles and zeros come in conjugate pairs
// stored next to each other, the one with positive imaginary part first;
// Gain is the leading-coefficient ratio Num[m]/Den[n].
// Cancelled lists the pole-zero pairs found equal and removed.
//
// At high order the expanded form need not fit a float64 (a 200-section
// ladder has Den[200] ≈ 10⁻¹⁰⁰⁰, Gain ≈ 10¹⁰⁰⁰): then Num, Den or Gain
// hold 0 or ±Inf and Fits reports false. The factored form is always
// exact: with ScaleRad > 0,
//
//	H(s) = ScaledGain · Π(s/ScaleRad − Zeros[i]/ScaleRad) / Π(s/ScaleRad − Poles[i]/ScaleRad),
//
// ScaledGain dimensionless in the units of H, and ScaledPoly gives the
// expanded form in ŝ = s/ScaleRad. ScaleRad = 0 means "not set": Gain
// with scale 1. DirectDC, when not nil, is H(0) from a direct solve of the
// circuit at s = 0 (no pole or zero there); DCGain returns it.
type TransferFunction struct {
	Num, Den     []float64
	Zeros, Poles []complex128
	Gain         float64
	Cancelled    []complex128
	ScaledGain   float64
	ScaleRad     float64
	DirectDC     *float64
}

// scaled returns the gain and frequency scale of the factored form.
func (h *TransferFunction) Scaled() (k, w float64) {
	if h.ScaleRad > 0 {
		return h.ScaledGain, h.ScaleRad
	}
	return h.Gain, 1
}

// Negated returns −H (a copy): Num, Gain, ScaledGain and DirectDC
// negated, the roots shared.
func (h *TransferFunction) Negated() *TransferFunction {
	t := *h
	t.Num = make([]float64, len(h.Num))
	for i, v := range h.Num {
		t.Num[i] = -v
	}
	t.Gain, t.ScaledGain = -h.Gain, -h.ScaledGain
	if h.DirectDC != nil {
		dc := -*h.DirectDC
		t.DirectDC = &dc
	}
	return &t
}

// Fits reports whether Num, Den and Gain are all finite with no
// coefficient lost to underflow, i.e. the expanded form can be printed
// as it is; otherwise print ScaledPoly.
func (h *TransferFunction) Fits() bool {
	if !finite(h.Gain) || len(h.Num) == 0 || len(h.Den) == 0 {
		return false
	}
	for _, c := range [][]float64{h.Num, h.Den} {
		for _, v := range c {
			if !finite(v) {
				return false
			}
		}
	}
	zero := len(h.Num) == 1 && h.Num[0] == 0 // H ≡ 0
	return zero || (h.Gain != 0 && h.Num[len(h.Num)-1] != 0 && h.Den[len(h.Den)-1] != 0)
}

// ScaledPoly returns the ascending coefficients of H in ŝ = s/ScaleRad
// (ŝ dimensionless): H = Σ num[k]ŝᵏ / Σ den[k]ŝᵏ, den's lowest non-zero
// coefficient 1, and the scale w in rad/s (1 when ScaleRad is unset).
// They fit a float64 whenever the roots span less than about 300
// decades in total.
func (h *TransferFunction) ScaledPoly() (num, den []float64, w float64) {
	k, w := h.Scaled()
	sz := append([]complex128(nil), h.Zeros...)
	sp := append([]complex128(nil), h.Poles...)
	scaleRoots(sz, 1/w)
	scaleRoots(sp, 1/w)
	num, den = normaliseMonic(k, rootsPoly(sz), rootsPoly(sp))
	return num, den, w
}

// GainDecimal returns Gain as mantissa·10^exp10 with 1 ≤ |mantissa| < 10,
// also when Gain itself does not fit a float64 (from ScaledGain and
// ScaleRad: Gain = ScaledGain·ScaleRad^(len(Poles)−len(Zeros))). A zero
// gain gives (0, 0).
func (h *TransferFunction) GainDecimal() (mantissa float64, exp10 int) {
	k, w := h.Scaled()
	if k == 0 {
		return 0, 0
	}
	lg := math.Log10(math.Abs(k)) + float64(len(h.Poles)-len(h.Zeros))*math.Log10(w)
	e := math.Floor(lg)
	m := math.Copysign(math.Pow(10, lg-e), k)
	if math.Abs(m) >= 10 { // rounding at the boundary
		m, e = m/10, e+1
	}
	return m, int(e)
}

// Eval returns H(s) from the coefficients (Horner's rule).
func (h *TransferFunction) Eval(s complex128) complex128 {
	return Horner(h.Num, s) / Horner(h.Den, s)
}

// EvalFactored returns H(s) from the gain, zeros and poles, in scaled
// units with a separate binary exponent (WideProduct), so that no partial
// product overflows; exact at any order, unlike Eval.
func (h *TransferFunction) EvalFactored(s complex128) complex128 {
	k, w := h.Scaled()
	v := NewWideProduct(complex(k, 0))
	cw := complex(w, 0)
	sh := s / cw
	for i := 0; i < max(len(h.Zeros), len(h.Poles)); i++ {
		if i < len(h.Zeros) {
			v.Mul(sh - h.Zeros[i]/cw)
		}
		if i < len(h.Poles) {
			v.Div(sh - h.Poles[i]/cw)
		}
	}
	return v.Value()
}

// Order returns the number of poles.
func (h *TransferFunction) Order() int { return len(h.Poles) }

// Horner evaluates the ascending polynomial c (index k is the
// coefficient of s^k) at s by Horner's rule.
func Horner(c []float64, s complex128) complex128 {
	var v complex128
	for k := len(c) - 1; k >= 0; k-- {
		v = v*s + complex(c[k], 0)
	}
	return v
}

// FromRoots builds H(s) = gain·Π(s − zeros)/Π(s − poles) (roots in rad/s)
// in the invariant form: Den's lowest-order non-zero coefficient is 1.
func FromRoots(gain float64, zeros, poles []complex128) *TransferFunction {
	return newTransferFunction(gain, zeros, poles, nil)
}
