package derivation

// Rational is a transfer function N(s)/D(s) with coefficient expressions.
//
// Invariants: Num and Den are ascending (index k is the coefficient of
// s^k), each has at least one entry and no entry is nil; a missing term is
// a *Number with Value 0. Entries contain only *Number, *Name, *Unary,
// *Binary and *Call nodes (no signals, no s). Den is not normalised.
type Rational struct {
	Num, Den []Expr
	// Output and Input name the ODE's signals (y and u); both are empty for
	// a transfer function.
	Output, Input string
	// File and Src are the source name and text, used in error messages.
	File, Src string
}

// poly is an ascending polynomial in s with coefficient expressions.
type poly []Expr

func constPoly(e Expr) poly { return poly{e} }

// trim drops trailing literal zeros, keeping at least one entry.
func (p poly) trim() poly {
	for len(p) > 1 && isLit(p[len(p)-1], 0) {
		p = p[:len(p)-1]
	}
	return p
}

func (p poly) isZero() bool { p = p.trim(); return len(p) == 1 && isLit(p[0], 0) }

// isConst reports whether p has no s term.
func (p poly) isConst() bool { return len(p.trim()) == 1 }

func polyAdd(a, b poly) poly {
	n := max(len(a), len(b))
	r := make(poly, n)
	for k := range r {
		r[k] = add(coefAt(a, k), coefAt(b, k))
	}
	return r.trim()
}

func polyNeg(a poly) poly {
	r := make(poly, len(a))
	for k, c := range a {
		r[k] = neg(c)
	}
	return r
}

func polyMul(a, b poly) poly {
	r := make(poly, len(a)+len(b)-1)
	for k := range r {
		r[k] = lit(0)
	}
	for i, x := range a {
		for j, y := range b {
			r[i+j] = add(r[i+j], mul(x, y))
		}
	}
	return r.trim()
}

func polyEqual(a, b poly) bool {
	a, b = a.trim(), b.trim()
	if len(a) != len(b) {
		return false
	}
	for k := range a {
		if !Equal(a[k], b[k]) {
			return false
		}
	}
	return true
}

func coefAt(p poly, k int) Expr {
	if k < len(p) {
		return p[k]
	}
	return lit(0)
}

// ratio is a rational function num/den in s during the reduction.
type ratio struct{ num, den poly }

func ratAdd(a, b ratio) ratio {
	if polyEqual(a.den, b.den) {
		return ratio{polyAdd(a.num, b.num), a.den}
	}
	return ratio{polyAdd(polyMul(a.num, b.den), polyMul(b.num, a.den)), polyMul(a.den, b.den)}
}

func ratNeg(a ratio) ratio { return ratio{polyNeg(a.num), a.den} }

func ratMul(a, b ratio) ratio {
	return ratio{polyMul(a.num, b.num), polyMul(a.den, b.den)}
}

func ratInv(a ratio) ratio { return ratio{a.den, a.num} }

// ratScale multiplies every numerator coefficient of a by m/d (both free
// of s), keeping the denominator polynomial.
func ratScale(a ratio, at Pos, m, d Expr) ratio {
	n := make(poly, len(a.num))
	for k, c := range a.num {
		n[k] = div(at, mul(c, m), d)
	}
	return ratio{n.trim(), a.den}
}
