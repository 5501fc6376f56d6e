package symbolic

import (
	"fmt"
)

// Eval returns p at the given complex values of its variables (a
// variable of exponent zero everywhere need not be given). A missing
// variable is an error naming it.
func (p Poly) Eval(values map[string]complex128) (complex128, error) {
	vals := make([]complex128, len(p.vars))
	for i, v := range p.vars {
		x, ok := values[v]
		if !ok && p.varUsed(i) {
			return 0, fmt.Errorf("no value for symbol %q", v)
		}
		vals[i] = x
	}
	var sum complex128
	for _, t := range p.terms {
		c, _ := t.coef.Float64()
		x := complex(c, 0)
		for i := 0; i < len(t.mono); i++ {
			for e := t.mono[i]; e > 0; e-- {
				x *= vals[i]
			}
		}
		sum += x
	}
	return sum, nil
}

// EvalFloat returns p at real values of its variables.
func (p Poly) EvalFloat(values map[string]float64) (float64, error) {
	c := make(map[string]complex128, len(values))
	for k, v := range values {
		c[k] = complex(v, 0)
	}
	z, err := p.Eval(c)
	return real(z), err
}

func (p Poly) varUsed(i int) bool {
	for _, t := range p.terms {
		if t.mono[i] != 0 {
			return true
		}
	}
	return false
}

// CoefficientValues substitutes values (SI units, as in Result.Values)
// into every coefficient as it stands, without rescaling: num[k] and
// den[k] are the values of Num[k] and Den[k] (the numbers to print beside
// the symbolic coefficients). A symbol without a value is an error.
func (r *Result) CoefficientValues(values map[string]float64) (num, den []float64, err error) {
	eval := func(what string, ps []Poly) ([]float64, error) {
		out := make([]float64, len(ps))
		for k, p := range ps {
			v, err := p.EvalFloat(values)
			if err != nil {
				return nil, fmt.Errorf("symbolic: %s coefficient of s^%d: %w", what, k, err)
			}
			out[k] = v
		}
		return out, nil
	}
	if num, err = eval("numerator", r.Num); err != nil {
		return nil, nil, err
	}
	if den, err = eval("denominator", r.Den); err != nil {
		return nil, nil, err
	}
	return num, den, nil
}

// EvalNumeric substitutes values (SI units, as in Result.Values) into the
// result. It returns the ascending coefficients of N and D, scaled so that
// the lowest-order non-zero coefficient of D is 1 (as in
// analysis.TransferFunction), and H(s) for complex s in rad/s by Horner's
// rule on those coefficients. A symbol without a value is an error.
func (r *Result) EvalNumeric(values map[string]float64) (num, den []float64, h func(s complex128) complex128, err error) {
	if num, den, err = r.CoefficientValues(values); err != nil {
		return nil, nil, nil, err
	}
	low := 0.0
	for _, d := range den {
		if d != 0 {
			low = d
			break
		}
	}
	if low == 0 {
		return nil, nil, nil, fmt.Errorf("symbolic: the denominator vanishes at these values")
	}
	for k := range num {
		num[k] /= low
	}
	for k := range den {
		den[k] /= low
	}
	h = func(s complex128) complex128 { return hornerC(num, s) / hornerC(den, s) }
	return num, den, h, nil
}

// hornerC evaluates the ascending real polynomial c at complex s.
func hornerC(c []float64, s complex128) complex128 {
	var v complex128
	for k := len(c) - 1; k >= 0; k-- {
		v = v*s + complex(c[k], 0)
	}
	return v
}
