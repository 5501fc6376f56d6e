package transfer

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
type TransferFunction struct {
	Num, Den     []float64
	Zeros, Poles []complex128
	Gain         float64
	Cancelled    []complex128
}

// Eval returns H(s) from the coefficients (Horner's rule).
func (h *TransferFunction) Eval(s complex128) complex128 {
	return Horner(h.Num, s) / Horner(h.Den, s)
}

// EvalFactored returns H(s) from the gain, zeros and poles; better
// conditioned than Eval for high orders.
func (h *TransferFunction) EvalFactored(s complex128) complex128 {
	v := complex(h.Gain, 0)
	for _, z := range h.Zeros {
		v *= s - z
	}
	for _, p := range h.Poles {
		v /= s - p
	}
	return v
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
