package main

import (
	"fmt"
	"math"
	"math/cmplx"
	"nodal/cmd/nodal/notation"
	"strings"

	"nodal/analysis/transfer"
)

// engNumber formats v in engineering notation with an exponent
// (notation.Exp: "112.5e-6", "2.53e9", "1" for 1); zero and non-finite
// values as num does.
func engNumber(v float64) string {
	if s, ok := notation.Exp(v); ok {
		return s
	}
	return num(v)
}

// pasteNumber writes a coefficient of a form meant to be pasted back
// (expanded, factored, zero-pole, ODE): as engNumber, but with its
// trailing zeros kept unless it is exact (notation.Written), so nodal
// check reads it to the precision shown.
func pasteNumber(v float64) string {
	if s, ok := notation.Written(v); ok {
		return s
	}
	return num(v)
}

// sPower writes s^k in readable form.
func sPower(k int, sym string) string {
	switch k {
	case 0:
		return ""
	case 1:
		return sym
	}
	return sym + notation.Superscript(k)
}

// polyText writes an ascending polynomial in s: "1 + 112.5e-6·s + 6.33e-9·s²".
func polyText(c []float64) string {
	var terms []signedTerm
	for k, v := range c {
		if v == 0 {
			continue
		}
		term := pasteNumber(math.Abs(v))
		if k > 0 {
			if term == "1" {
				term = sPower(k, "s")
			} else {
				term += "·" + sPower(k, "s")
			}
		}
		terms = append(terms, signedTerm{text: term, neg: v < 0})
	}
	return joinSigned(terms)
}

// signedTerm is one term of a written sum: the text of its magnitude and
// whether it is subtracted.
type signedTerm struct {
	text string
	neg  bool
}

// joinSigned writes terms as "a + b − c", a negative first term with a
// leading "−"; no terms give "0".
func joinSigned(terms []signedTerm) string {
	if len(terms) == 0 {
		return "0"
	}
	var b strings.Builder
	for i, t := range terms {
		switch {
		case i == 0 && t.neg:
			b.WriteString("−")
		case t.neg:
			b.WriteString(" − ")
		case i > 0:
			b.WriteString(" + ")
		}
		b.WriteString(t.text)
	}
	return b.String()
}

// rationalText writes N(s)/D(s) with parentheses where needed.
func rationalText(num, den []float64) string {
	n, d := polyText(num), polyText(den)
	if d == "1" {
		return n
	}
	return paren(n) + " / " + paren(d)
}

// paren wraps a sum in parentheses.
func paren(s string) string {
	if strings.ContainsAny(s, "+−") && !(strings.HasPrefix(s, "(") && strings.HasSuffix(s, ")")) {
		return "(" + s + ")"
	}
	return s
}

// factorText writes the normalised factors of roots (constant term 1):
// (1 + s/ω) for a real root −ω, (1 + s/(Q·ω0)·… ) written as
// (1 + s/A + (s/ω0)²) for a complex pair. Roots at s = 0 are counted and
// returned separately.
func factorText(roots []complex128) (factors []string, atZero int) {
	for _, r := range roots {
		switch {
		case r == 0:
			atZero++
		case imag(r) == 0:
			w := -real(r) // the factor is (1 + s/w)
			if w > 0 {
				factors = append(factors, fmt.Sprintf("(1 + s/%s)", pasteNumber(w)))
			} else {
				factors = append(factors, fmt.Sprintf("(1 − s/%s)", pasteNumber(-w)))
			}
		case imag(r) > 0:
			w0 := cmplx.Abs(r)
			// (s − r)(s − r*)/|r|² = 1 − 2Re(r)/|r|²·s + s²/|r|²
			lin := -2 * real(r) / (w0 * w0)
			sq := fmt.Sprintf("(s/%s)²", pasteNumber(w0))
			switch {
			case lin == 0:
				factors = append(factors, fmt.Sprintf("(1 + %s)", sq))
			case lin > 0:
				factors = append(factors, fmt.Sprintf("(1 + s/%s + %s)", pasteNumber(1/lin), sq))
			default:
				factors = append(factors, fmt.Sprintf("(1 − s/%s + %s)", pasteNumber(-1/lin), sq))
			}
		}
	}
	return factors, atZero
}

// factoredText writes H(s) as K·s^k·Π(zero factors)/Π(pole factors) with
// every factor normalised to a constant term of 1, frequencies in rad/s.
func factoredText(h *transfer.TransferFunction) string {
	if len(h.Num) == 0 || allZero(h.Num) {
		return "0"
	}
	zf, z0 := factorText(h.Zeros)
	pf, p0 := factorText(h.Poles)
	// K is the ratio of the lowest-order non-zero coefficients, taken
	// from the factored form (the coefficients need not fit a float64).
	k := h.DCGain().Gain
	var top []string
	top = append(top, pasteNumber(k))
	if z0 > p0 {
		top = append(top, sPower(z0-p0, "s"))
	}
	top = append(top, withMultiplicity(zf)...)
	var bottom []string
	if p0 > z0 {
		bottom = append(bottom, sPower(p0-z0, "s"))
	}
	bottom = append(bottom, withMultiplicity(pf)...)
	s := strings.Join(top, "·")
	switch len(bottom) {
	case 0:
	case 1:
		s += " / " + bottom[0]
	default:
		s += " / [" + strings.Join(bottom, "·") + "]"
	}
	return s
}

// withMultiplicity writes a factor that occurs m > 1 times once, as
// "(…)^m" ("s^m" for s), in the order of first occurrence: an m-fold root
// gives m equal factor texts (transfer.Extract merges such roots into
// equal values). The derivation grammar reads the result back.
func withMultiplicity(factors []string) []string {
	var out []string
	count := map[string]int{}
	for _, f := range factors {
		if count[f] == 0 {
			out = append(out, f)
		}
		count[f]++
	}
	for i, f := range out {
		if m := count[f]; m > 1 {
			out[i] = fmt.Sprintf("%s^%d", f, m)
		}
	}
	return out
}

// zpkText writes H(s) = Gain·Π(s − z)/Π(s − p).
func zpkText(h *transfer.TransferFunction) string {
	if len(h.Num) == 0 || allZero(h.Num) {
		return "0"
	}
	lin := func(roots []complex128) []string {
		var out []string
		for _, r := range roots {
			switch {
			case r == 0:
				out = append(out, "s")
			case imag(r) == 0:
				if real(r) < 0 {
					out = append(out, fmt.Sprintf("(s + %s)", pasteNumber(-real(r))))
				} else {
					out = append(out, fmt.Sprintf("(s − %s)", pasteNumber(real(r))))
				}
			case imag(r) > 0:
				w0 := cmplx.Abs(r)
				b := -2 * real(r)
				sign := "+"
				if b < 0 {
					sign, b = "−", -b
				}
				if b == 0 {
					out = append(out, fmt.Sprintf("(s² + %s)", pasteNumber(w0*w0)))
				} else {
					out = append(out, fmt.Sprintf("(s² %s %s·s + %s)", sign, pasteNumber(b), pasteNumber(w0*w0)))
				}
			}
		}
		return out
	}
	s := pasteNumber(h.Gain)
	if math.IsInf(h.Gain, 0) || h.Gain == 0 {
		// The gain does not fit a float64 at this order.
		m, e := h.GainDecimal()
		s = fmt.Sprintf("%s·10^%d", pasteNumber(m), e)
	}
	if z := withMultiplicity(lin(h.Zeros)); len(z) > 0 {
		s += "·" + strings.Join(z, "·")
	}
	switch p := withMultiplicity(lin(h.Poles)); len(p) {
	case 0:
	case 1:
		s += " / " + p[0]
	default:
		s += " / (" + strings.Join(p, "·") + ")"
	}
	return s
}

// odeText writes the circuit's differential equation
// a_n·y⁽ⁿ⁾ + … + a_0·y = b_m·u⁽ᵐ⁾ + … + b_0·u.
func odeText(ode transfer.ODE, y, u string) string {
	side := func(c []float64, v string) string {
		var terms []signedTerm
		for k := len(c) - 1; k >= 0; k-- {
			if c[k] == 0 {
				continue
			}
			term := v
			switch k {
			case 0:
			case 1:
				term += "′"
			case 2:
				term += "″"
			default:
				term += "⁽" + strings.TrimPrefix(notation.Superscript(k), "") + "⁾"
			}
			coef := pasteNumber(math.Abs(c[k]))
			if coef != "1" {
				term = coef + "·" + term
			}
			terms = append(terms, signedTerm{text: term, neg: c[k] < 0})
		}
		return joinSigned(terms)
	}
	return side(ode.A, y) + " = " + side(ode.B, u)
}

func allZero(c []float64) bool {
	for _, v := range c {
		if v != 0 {
			return false
		}
	}
	return true
}

// lowest returns the lowest-order non-zero coefficient.
func lowest(c []float64) float64 {
	for _, v := range c {
		if v != 0 {
			return v
		}
	}
	return 0
}
