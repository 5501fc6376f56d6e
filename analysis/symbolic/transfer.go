package symbolic

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/big"
	"sort"

	"nodal/mna"
	"nodal/netlist"
)

// DefaultMaxTerms is the term limit of any intermediate polynomial when
// Options.MaxTerms is zero. It is set from BenchmarkRCLadder (2 cores): an
// n-section RC ladder's D has F(2n+1) terms (Fibonacci), 1597 for 8
// sections in 0.2 s, 4181 for 9 in 1.3 s, and each further section costs
// about 6× the time; past 5000 terms a result takes seconds and is no
// longer readable.
const DefaultMaxTerms = 5000

// DefaultMaxWork is the work budget of one determinant when
// Options.MaxWork is zero: term operations (products of two terms, terms
// summed, terms memoised; see workBudget), each a big-rational operation of
// roughly 0.1–0.5 µs, so the budget stops an expansion after about a
// second and a few hundred MB at most. The largest of the package's
// benchmark circuits (the 9-section RC ladder by minors) uses well under
// it.
const DefaultMaxWork = 1_000_000

// Options tune Transfer.
type Options struct {
	// Keep lists the symbols to keep; every other value is substituted
	// numerically. An entry is a symbol name ("R1", "U1.a0", "Link1.M") or a
	// part name, which keeps all of that part's symbols except NAME.wt
	// (the op-amp ωt is kept only when named). nil keeps every symbol; a
	// non-nil empty slice keeps none.
	Keep []string
	// MaxTerms limits the terms of every intermediate polynomial; 0 means
	// DefaultMaxTerms. Past it Transfer returns a *SizeError.
	MaxTerms int
	// MaxWork bounds the term operations of each determinant (see
	// DefaultMaxWork); 0 means DefaultMaxWork, negative means no bound.
	// Past it Transfer returns a *SizeError with WorkLimit set.
	MaxWork int64
	// Method selects the determinant algorithm; the zero value is Auto.
	Method Method
}

// Result is a symbolic transfer function
//
//	H(s) = Σ Num[k]·s^k / Σ Den[k]·s^k,  s in rad/s,
//
// whose coefficients are polynomials in the kept symbols.
//
// Invariants: len(Den) ≥ 1 and Den's last entry is non-zero; len(Num) ≥ 1
// and Num's last entry is non-zero unless H ≡ 0 (then Num = [0]); no
// coefficient contains s; the normalisation of the package doc holds.
type Result struct {
	Num, Den []Poly
	// Symbols lists the symbols that occur, in display order (resistors,
	// inductors, mutual inductances, capacitors, controlled-source gains,
	// op-amp parameters; natural order within each group).
	Symbols []string
	// Values holds the nominal SI value of every kept symbol (ohms,
	// farads, henries, V/V, S, rad/s for NAME.wt).
	Values map[string]float64
	Input  mna.Input  // the resolved input
	Output mna.Output // the resolved output
	// Unknowns names the rows of the MNA system ("v(NODE)", "i(PART)").
	Unknowns []string
	// Cancelled lists the non-monomial common factors that were divided
	// out of N and D, in display order.
	Cancelled []Poly
}

// Transfer derives the symbolic transfer function of c from input in to
// output out (the semantics of mna.Excitation and mna.Observation; every
// kind but BrokenControl). The probe is resolved by mna.Resolve, whose
// *mna.LookupError is returned unwrapped so that a wrong name reads the
// same as from the numeric engine. It honours ctx cancellation and returns
// a *SizeError when an expression grows past the limit, ErrSingular when
// the circuit has no unique solution.
func Transfer(ctx context.Context, c *netlist.Circuit, in mna.Input, out mna.Output, opt Options) (*Result, error) {
	in, out, err := mna.Resolve(c, in, out)
	if err != nil {
		return nil, err // the same message as the numeric engine's
	}
	sys, err := buildSystem(c, in, out, opt.Keep)
	if err != nil {
		return nil, fmt.Errorf("symbolic: %w", err)
	}
	lim := detLimits{ctx: ctx, maxTerms: opt.MaxTerms, symbols: len(sys.values), work: &workBudget{limit: opt.MaxWork}}
	if lim.maxTerms <= 0 {
		lim.maxTerms = DefaultMaxTerms
	}
	switch {
	case opt.MaxWork == 0:
		lim.work.limit = DefaultMaxWork
	case opt.MaxWork < 0:
		lim.work.limit = math.MaxInt64
	}
	detY, detM, pivots, err := borderedDets(sys.m, opt.Method, lim)
	if errors.Is(err, ErrSingular) || err == nil && detY.IsZero() {
		return nil, fmt.Errorf("symbolic: %w", singularWhy(c, in, out))
	}
	if err != nil {
		return nil, fmt.Errorf("symbolic: %w", err)
	}
	num, den := detM.Neg(), detY
	rs, err := toResistances([]Poly{num, den}, sys.resistor)
	if err != nil {
		return nil, fmt.Errorf("symbolic: %w", err)
	}
	num, den = rs[0], rs[1]

	// Cheap candidate factors: matrix entries and pivots in R form.
	var cands []Poly
	for _, row := range sys.m {
		cands = append(cands, row...)
	}
	cands = append(cands, pivots...)
	for i, p := range cands {
		t, err := toResistances([]Poly{p}, sys.resistor)
		if err != nil {
			return nil, fmt.Errorf("symbolic: %w", err)
		}
		cands[i] = t[0]
	}
	num, den, cancelled := cancelCommon(ctx, num, den, cands)

	order := displayOrder(sys.kinds)
	r := &Result{
		Values:    sys.values,
		Input:     sys.input,
		Output:    sys.output,
		Unknowns:  sys.unknowns,
		Symbols:   usedSymbols(order, num, den),
		Cancelled: cancelled,
	}
	r.Num, r.Den = normalise(num, den, order)
	return r, nil
}

// toResistances rewrites polynomials that are jointly affine in each
// internal conductance symbol G of resistor R: it multiplies them all by
// Π R^d (d the joint degree of G, 0 or 1) and replaces G by 1/R, so that
// each G^e becomes R^(d−e).
func toResistances(ps []Poly, resistor map[string]string) ([]Poly, error) {
	deg := map[string]int{}
	for g := range resistor {
		for _, p := range ps {
			deg[g] = max(deg[g], p.Degree(g))
		}
	}
	out := make([]Poly, len(ps))
	for i, p := range ps {
		terms := p.Terms()
		for k, t := range terms {
			var pw []Power
			seen := map[string]bool{}
			for _, x := range t.Powers {
				if r, ok := resistor[x.Var]; ok {
					seen[x.Var] = true
					if e := deg[x.Var] - x.Exp; e > 0 {
						pw = append(pw, Power{Var: r, Exp: e})
					}
					continue
				}
				pw = append(pw, x)
			}
			for g, d := range deg {
				if !seen[g] && d > 0 {
					pw = append(pw, Power{Var: resistor[g], Exp: d})
				}
			}
			terms[k].Powers = pw
		}
		var err error
		if out[i], err = FromTerms(terms); err != nil {
			return nil, fmt.Errorf("internal error: %w", err)
		}
	}
	for g, d := range deg {
		if d > 1 && len(ps) > 1 {
			return nil, fmt.Errorf("internal error: determinant of degree %d in the conductance of %q", d, resistor[g])
		}
	}
	return out, nil
}

// cancelCommon divides num and den by their common monomial factor and by
// every candidate (non-monomial, up to content) that divides both.
func cancelCommon(ctx context.Context, num, den Poly, cands []Poly) (Poly, Poly, []Poly) {
	// s-coefficients are candidates too, and N and D themselves (N dividing
	// D is the common case of a mode the output does not see).
	cands = append(cands, num.CoeffsIn(LaplaceVar)...)
	cands = append(cands, den.CoeffsIn(LaplaceVar)...)
	cands = append(cands, num, den)
	seen := map[string]bool{}
	var uniq []Poly
	for _, c := range cands {
		if c.Len() < 2 {
			continue
		}
		c = primitive(c)
		key := c.String()
		if seen[key] {
			continue
		}
		seen[key] = true
		uniq = append(uniq, c)
	}
	sort.SliceStable(uniq, func(i, j int) bool { return uniq[i].Len() < uniq[j].Len() })
	var cancelled []Poly
	for _, f := range uniq {
		if ctx.Err() != nil || f.Len() > den.Len() {
			break
		}
		for {
			qd, ok := den.Div(f)
			if !ok {
				break
			}
			qn, ok := num.Div(f)
			if !ok {
				break
			}
			num, den = qn, qd
			cancelled = append(cancelled, f)
		}
	}
	if m := CommonMonomial(num, den); m.Len() == 1 {
		num, _ = num.Div(m)
		den, _ = den.Div(m)
	}
	return num, den, cancelled
}

// primitive returns p divided by its content and its monomial factor,
// with a positive leading coefficient.
func primitive(p Poly) Poly {
	q, _ := p.Div(CommonMonomial(p))
	c := Content(q)
	if q.terms[0].coef.Sign() < 0 {
		c.Neg(c)
	}
	return q.Scale(c.Inv(c))
}

// normalise splits num and den into powers of s and scales them as the
// package doc says.
func normalise(num, den Poly, order []string) ([]Poly, []Poly) {
	ns, ds := trimZero(num.CoeffsIn(LaplaceVar)), trimZero(den.CoeffsIn(LaplaceVar))
	var low Poly
	for _, d := range ds {
		if !d.IsZero() {
			low = d
			break
		}
	}
	var scale *big.Rat
	if low.Len() == 1 {
		scale = new(big.Rat).Inv(low.terms[0].coef)
	} else {
		scale = Content(append(append([]Poly(nil), ns...), ds...)...)
		scale.Inv(scale)
		if firstDisplayed(low, order).Sign() < 0 {
			scale.Neg(scale)
		}
	}
	for k := range ns {
		ns[k] = ns[k].Scale(scale).compact()
	}
	for k := range ds {
		ds[k] = ds[k].Scale(scale).compact()
	}
	if len(ns) == 0 {
		ns = []Poly{{}}
	}
	return ns, ds
}

// trimZero drops trailing zero coefficients.
func trimZero(ps []Poly) []Poly {
	for len(ps) > 0 && ps[len(ps)-1].IsZero() {
		ps = ps[:len(ps)-1]
	}
	return ps
}

// firstDisplayed returns the coefficient of the first term of p in the
// display order.
func firstDisplayed(p Poly, order []string) *big.Rat {
	best, deg := -1, 0
	var key string
	for k, t := range p.terms {
		kk := displayKey(p, t.mono, order)
		d := monoDegree(kk)
		if best < 0 || d < deg || (d == deg && kk > key) {
			best, key, deg = k, kk, d
		}
	}
	return p.terms[best].coef
}

// displayKey is the monomial's exponent string permuted into display order.
func displayKey(p Poly, mono string, order []string) string {
	buf := make([]byte, 0, len(mono))
	used := map[int]bool{}
	for _, v := range order {
		if i := p.varIndex(v); i >= 0 {
			buf = append(buf, mono[i])
			used[i] = true
		}
	}
	for i := range p.vars {
		if !used[i] {
			buf = append(buf, mono[i])
		}
	}
	return string(buf)
}

// displayOrder sorts symbols by kind rank, then naturally.
func displayOrder(kinds map[string]int) []string {
	out := make([]string, 0, len(kinds))
	for v := range kinds {
		out = append(out, v)
	}
	sort.Slice(out, func(i, j int) bool {
		if kinds[out[i]] != kinds[out[j]] {
			return kinds[out[i]] < kinds[out[j]]
		}
		return varLess(out[i], out[j])
	})
	return out
}

// usedSymbols filters order to the symbols that occur in ps.
func usedSymbols(order []string, ps ...Poly) []string {
	occurs := map[string]bool{}
	for _, p := range ps {
		for _, v := range p.Vars() {
			occurs[v] = true
		}
	}
	var out []string
	for _, v := range order {
		if occurs[v] {
			out = append(out, v)
		}
	}
	return out
}

// NumStrings returns the numerator coefficients, ascending in s, each
// written as Poly.Format in the result's display order.
func (r *Result) NumStrings() []string { return r.format(r.Num) }

// DenStrings returns the denominator coefficients like NumStrings.
func (r *Result) DenStrings() []string { return r.format(r.Den) }

func (r *Result) format(ps []Poly) []string {
	out := make([]string, len(ps))
	for k, p := range ps {
		out[k] = p.Format(r.Symbols)
	}
	return out
}

// singularWhy explains ErrSingular with the numeric system's structural
// diagnosis when it has one (the loop of voltage-fixing parts or the cut
// set of current sources, by name); the error still matches ErrSingular.
func singularWhy(c *netlist.Circuit, in mna.Input, out mna.Output) error {
	sys, err := mna.Build(c, in, out)
	if err == nil {
		err = sys.Structure()
	}
	if err == nil {
		return ErrSingular
	}
	return singularError{why: err}
}

// singularError is ErrSingular with the reason named.
type singularError struct{ why error }

func (e singularError) Error() string   { return e.why.Error() }
func (e singularError) Unwrap() []error { return []error{e.why, ErrSingular} }
