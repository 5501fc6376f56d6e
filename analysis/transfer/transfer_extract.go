package transfer

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
)

// ErrSingularSystem means G + sC is singular for every s tried: the circuit
// has no unique solution (a floating node, a loop of voltage sources, ...).
var ErrSingularSystem = errors.New("the circuit equations are singular for every frequency")

// Tolerances of Extract (relative, dimensionless).
const (
	// cancelTol: a pole and a zero closer than cancelTol·|root| cancel.
	cancelTol = 1e-9
	// zeroRootTol: a root smaller than zeroRootTol times the characteristic
	// frequency is taken to be exactly s = 0.
	zeroRootTol = 1e-10
	// nullGainTol: H(σ) below nullGainTol·Σ|Lᵢxᵢ| (the response's own
	// scale: the terms the output sums) at two shifts means H ≡ 0. A
	// single-node output is then zero only when it is exactly 0.
	nullGainTol = 1e-12
	// verifyTol: the extracted H(jω) must equal a direct solve within
	// verifyTol relative at every check frequency, or Extract fails.
	verifyTol = 1e-7
	// roundingGainTol: |H(σ)| below roundingGainTol·‖L‖∞‖x‖∞ after
	// refinement is rounding of the whole solution.
	roundingGainTol = 1e-14
	// tinyRankTol: the rank tolerance of the zero pencil when H is tiny
	// but not rounding (see extract), a few ulps of ‖A‖.
	tinyRankTol = 1e-15
)

// shiftFactors are the multiples of the characteristic frequency tried as
// the real shift σ, in order, until G + σC (and the bordered zero pencil)
// is well conditioned.
var shiftFactors = [...]float64{1, 1.7182818, 0.5772157, 3.1415927, 0.3183099, 7.389056, 0.1353353, 23.14069, 0.0432139}

// MaxExtractUnknowns is the largest system Extract takes: the extraction
// (eigenvalues of the pencil, minors) works on dense n×n copies of G and
// C, so its memory grows as n² and its time much faster; above this size
// only direct sparse solves (sweeps) are offered.
const MaxExtractUnknowns = 2000

// ErrTooLarge is wrapped by the error of Extract for a system of more
// than MaxExtractUnknowns unknowns.
var ErrTooLarge = errors.New("too large for the transfer-function extraction")

// tooLargeError is Extract's refusal of a large system: its message, and
// errors.Is(err, ErrTooLarge).
type tooLargeError struct{ msg string }

func (e tooLargeError) Error() string        { return e.msg }
func (e tooLargeError) Is(target error) bool { return target == ErrTooLarge }

// Extract returns the exact rational transfer function of the MNA system,
// H(s) = L·(G + sC)⁻¹·B, in factored and polynomial form (s in rad/s).
//
// Poles are the finite generalised eigenvalues of the pencil (G, C); zeros
// those of the pencil bordered by B and L,
//
//	[[G, B], [L, 0]] + s·[[C, 0], [0, 0]],
//
// whose determinant is −det(G + sC)·H(s). Both are found by shift-and-
// invert with exact deflation of the infinite eigenvalues and polished by
// Newton steps on the determinant (see poles_zeros.go), after frequency
// scaling and power-of-two balancing of the pencil. A pole and a zero
// equal within 1e-9 relative are an exact cancellation (an uncontrollable
// or unobservable mode): both are removed and the pole is listed in
// Cancelled. The constant comes from one complex evaluation of H at the
// point, among a few on circles around the characteristic frequency,
// relatively farthest from every pole, zero and cancelled mode.
//
// Poles and zeros are ordered by increasing magnitude, a conjugate pair
// with the positive imaginary part first; roots within 1e-10 of the
// characteristic frequency of zero are exactly 0, and so is a cluster of m
// roots around 0 that rounding split from an m-fold root at s = 0 (see
// deflateOrigin) — unless Y(0) = G factors regularly by mna's pivot rule
// and the structure finds no DC singularity, which refutes every pole at
// s = 0 (an H(0) above its rounding bound refutes every zero there,
// dcGainNonzero), and the slow roots are computed to full relative
// accuracy instead (SlowRoots). If H ≡ 0, Num is [0],
// Den is [1] and there are no poles or zeros. Zeros at infinity are not
// listed (len(Zeros) may be below or, for improper H, above len(Poles)).
func Extract(sys *mna.System) (*TransferFunction, error) {
	if sys == nil || sys.G == nil || sys.C == nil {
		return nil, errors.New("transfer function: no system")
	}
	n := len(sys.B)
	if r, c := sys.G.Dims(); r != n || c != n {
		return nil, fmt.Errorf("transfer function: G is %d×%d but B has %d entries", r, c, n)
	}
	if r, c := sys.C.Dims(); r != n || c != n {
		return nil, fmt.Errorf("transfer function: C is %d×%d but B has %d entries", r, c, n)
	}
	if len(sys.L) != n {
		return nil, fmt.Errorf("transfer function: L has %d entries, want %d", len(sys.L), n)
	}
	if n == 0 {
		return nil, errors.New("transfer function: empty system")
	}
	if n > MaxExtractUnknowns {
		return nil, tooLargeError{fmt.Sprintf("transfer function: %d unknowns is more than the %d the full extraction takes (it works on dense n×n copies of G and C); a sweep over a given range (--from, --to) handles this size", n, MaxExtractUnknowns)}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if !finite(sys.G.At(i, j)) || !finite(sys.C.At(i, j)) {
				return nil, fmt.Errorf("transfer function: non-finite matrix entry at row %d (%s)", i, unknownName(sys, i))
			}
		}
		if !finite(sys.B[i]) || !finite(sys.L[i]) {
			return nil, fmt.Errorf("transfer function: non-finite input or output entry at row %d (%s)", i, unknownName(sys, i))
		}
	}

	wc := characteristicFreq(sys)
	// A regular factorisation of Y(0) = G by the sweep's componentwise
	// pivot rule (Higham 2002, Theorem 9.3; mna's pivotVanished) refutes
	// every pole at s = 0, whatever the rank test on the scaled pencil
	// says: a genuine slow pole (a 1 TΩ resistor into 1 mF, 10⁻¹⁹ of the
	// fastest scale) is never taken for an integrator.
	dc := mna.NewShiftSolver(sys)
	regularAt0 := len(sys.DCSingular) == 0 && dc.Factor(0) == nil
	// With Y(0) regular, a zero at s = 0 is H(0) = 0: an H(0) above its
	// own rounding refutes it (the zeros' pencil is then regular at 0).
	dcNonzero := regularAt0 && dcGainNonzero(sys, dc)
	// Orders above polishMaxOrder are not polished first (the shift-and-
	// invert eigenvalues are then accurate enough as a rule, and Newton on
	// the determinant costs O(n⁴)); the check against direct solves
	// decides whether polishing is needed after all.
	var verr error
	for _, polish := range []bool{n <= polishMaxOrder, true} {
		first := newScaledSystem(sys, wc)
		first.regularAt0, first.dcNonzero = regularAt0, dcNonzero
		t, err := first.extract(polish)
		if err != nil {
			return nil, err
		}
		// Second pass when the roots sit far from the first guess of the
		// characteristic frequency: centre the shift on them for
		// accuracy. The centre leaves out the poles the rank test puts at
		// s = 0 (only those: a genuine tiny pole counts): an origin pole
		// carries no scale, and its unrounded value (10⁻¹² of the guess)
		// would centre the pass 10⁻⁶ below every other root, where the
		// gain point's G + sC rounds away the capacitors' admittances.
		if c := first.rawCentre; c > 0 && (c > 100*wc || c < wc/100) {
			second := newScaledSystem(sys, c)
			second.regularAt0, second.dcNonzero = regularAt0, dcNonzero
			if t2, err2 := second.extract(polish); err2 == nil {
				t = t2
			}
		}
		if verr = verifyExtraction(sys, t); verr == nil {
			return t, nil
		}
		if polish {
			break
		}
	}
	return nil, verr
}

// dcGainNonzero reports whether H(0) = L·G⁻¹·B, from the factorisation
// of Y(0) held by dc, exceeds dcNonzeroFactor·n·ε times the first-order
// bound of its rounding, Σ|zᵢ|·(|G|·|x| + |B|)ᵢ with x = G⁻¹B and
// z = G⁻ᵀLᵀ (a perturbation |ΔG| ≤ γ|G|, |ΔB| ≤ γ|B| moves L·x by
// zᵀ(ΔB − ΔG·x): Higham, Accuracy and Stability of Numerical Algorithms,
// 2nd ed., 2002, §7.2). Stamp rounding is inside that bound, so a bridge
// balanced in exact arithmetic is not refuted; a 10⁻¹⁷ transfer through a
// 10¹⁸ Ω leak (a zero at −10⁻¹² rad/s beside a pole at −10⁵) is.
func dcGainNonzero(sys *mna.System, dc *mna.ShiftSolver) bool {
	n := len(sys.B)
	x := make([]complex128, n)
	z := make([]complex128, n)
	for i := range x {
		x[i], z[i] = complex(sys.B[i], 0), complex(sys.L[i], 0)
	}
	if dc.Solve(x) != nil || dc.SolveTransposed(z) != nil {
		return false
	}
	h := 0.0
	gx := make([]float64, n)
	for i := range x {
		h += sys.L[i] * real(x[i])
		gx[i] = math.Abs(sys.B[i])
	}
	sys.G.Each(func(i, j int, v float64) { gx[i] += math.Abs(v) * cmplx.Abs(x[j]) })
	bound := 0.0
	for i, g := range gx {
		bound += cmplx.Abs(z[i]) * g
	}
	return finite(h) && finite(bound) && math.Abs(h) > dcNonzeroFactor*float64(n)*0x1p-52*bound
}

// dcNonzeroFactor is the safety factor of dcGainNonzero over the
// first-order rounding bound.
const dcNonzeroFactor = 100

// polishMaxOrder is the largest system size whose roots are always
// polished by Newton steps.
const polishMaxOrder = 40

// ErrIllConditioned means the extracted H(s) disagrees with direct solves
// of the circuit: the extraction cannot be trusted and no H is returned.
var ErrIllConditioned = errors.New("the transfer-function extraction is ill-conditioned")

// verifyPoints is the number of frequencies at which verifyExtraction
// compares H with direct solves.
const verifyPoints = 12

// verifyExtraction compares the factored H(jω) with direct sparse solves
// of the circuit at verifyPoints frequencies spaced geometrically from a
// tenth of the smallest non-zero root magnitude to ten times the largest
// (the sweep range and more), and at s = 0 where Y(0) is regular. They must agree within verifyTol relative,
// or within 1e-10 of Σ|Lᵢxᵢ| (the response's own scale: a cancellation
// in the output is rounding in both), or within verifyFloor of the peak.
// A frequency where the direct solve fails (a pole on the jω axis) is
// skipped; failing at all of them is ErrIllConditioned (the extraction
// itself solved G + σC, so the circuit is not singular). An H ≡ 0 (decided by
// the rank of the bordered pencil) is checked against rounding of the
// whole solution instead.
func verifyExtraction(sys *mna.System, tf *TransferFunction) error {
	lo, hi := math.Inf(1), 0.0
	for _, l := range [][]complex128{tf.Poles, tf.Zeros, tf.Cancelled} {
		for _, r := range l {
			if a := cmplx.Abs(r); a > 0 {
				lo, hi = math.Min(lo, a), math.Max(hi, a)
			}
		}
	}
	if hi == 0 {
		lo, hi = 1, 1
		if _, w := tf.Scaled(); w > 0 {
			lo, hi = w, w
		}
	}
	lo, hi = lo/10, hi*10
	type point struct {
		w         float64
		hd, hf    complex128
		scale     float64
		evaluated bool
	}
	// The last point is s = 0 itself: where Y(0) is regular (the solve
	// succeeds), a claimed pole at s = 0 gives an infinite factored H
	// there and fails, so a slow pole taken for an integrator cannot pass
	// (the geometric points start a decade below the slowest non-zero
	// root, and a root at 0 has no decade). Where Y(0) is singular the
	// point is skipped like any on a pole.
	pts := make([]point, verifyPoints+1)
	peak := 0.0
	var solveErr error
	zero := tf.ScaledGain == 0 && tf.Gain == 0
	for k := range pts {
		w := 0.0
		if k < verifyPoints {
			w = lo * math.Pow(hi/lo, (float64(k)+0.5)/verifyPoints)
		}
		s := complex(0, w)
		x, err := sys.SolveAll(s)
		if err != nil {
			if solveErr == nil && k < verifyPoints {
				solveErr = err
			}
			continue
		}
		p := point{w: w, hf: tf.EvalFactored(s), evaluated: true}
		xmax := 0.0
		for i, l := range sys.L {
			t := complex(l, 0) * x[i]
			p.hd += t
			p.scale += cmplx.Abs(t)
			xmax = math.Max(xmax, cmplx.Abs(x[i]))
		}
		if zero {
			// H ≡ 0 was decided by a rank test: the direct solve must be
			// rounding of the whole solution.
			p.scale = math.Max(p.scale, normInf(sys.L)*xmax*1e3)
		}
		pts[k] = p
		peak = math.Max(peak, cmplx.Abs(p.hd))
	}
	evaluated := 0
	for _, p := range pts {
		if !p.evaluated {
			continue
		}
		if p.w > 0 {
			evaluated++ // s = 0 alone is no check of the range
		}
		if d := cmplx.Abs(p.hf - p.hd); !(d <= verifyTol*cmplx.Abs(p.hd)+1e-10*p.scale+verifyFloor*peak) {
			return fmt.Errorf("%w: at %.6g rad/s the factored form gives %.10g, a direct solve %.10g (relative difference %.2g, allowed %.2g)",
				ErrIllConditioned, p.w, p.hf, p.hd, d/cmplx.Abs(p.hd), verifyTol)
		}
	}
	if evaluated == 0 {
		// The extraction found G + σC regular at a real shift, so the
		// circuit is not singular for every frequency; the solves that
		// check it failed (a badly scaled high-gain chain, or poles on
		// the jω axis at every check point): no check, no H.
		return fmt.Errorf("%w: the direct solves that check it failed at all %d check frequencies from %.4g to %.4g rad/s (%v)",
			ErrIllConditioned, verifyPoints, lo, hi, solveErr)
	}
	return nil
}

// verifyFloor: below verifyFloor times the largest |H| over the check
// points, a direct solve deep in a stop band carries the solver's own
// rounding (ε times the magnitudes it eliminates), so the comparison is
// absolute there.
const verifyFloor = 1e-12

// finite reports whether v is neither NaN nor infinite.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// unknownName names row i of the system for error messages.
func unknownName(sys *mna.System, i int) string {
	if i < len(sys.Unknowns) {
		return sys.Unknowns[i]
	}
	return fmt.Sprintf("unknown %d", i)
}

// rootCentre returns the geometric mean of the smallest and largest
// non-zero root magnitudes, or 0 when there is none.
func rootCentre(lists ...[]complex128) float64 {
	lo, hi := math.Inf(1), 0.0
	for _, l := range lists {
		for _, r := range l {
			if a := cmplx.Abs(r); a > 0 {
				lo, hi = math.Min(lo, a), math.Max(hi, a)
			}
		}
	}
	if hi == 0 {
		return 0
	}
	return math.Sqrt(lo * hi)
}

// characteristicFreq estimates, in rad/s, the centre of the circuit's
// natural frequencies from the diagonals: for a node voltage with
// capacitance, G_jj/C_jj (≈ 1/RC); for a branch current with inductance,
// 1/(g·L) with g the typical node conductance (≈ R/L). It returns the
// geometric mean of these, or 1 when the circuit stores no energy.
func characteristicFreq(sys *mna.System) float64 {
	n := len(sys.B)
	gtyp, ng := 0.0, 0
	for j := 0; j < n; j++ {
		if g := math.Abs(sys.G.At(j, j)); g > 0 && !isCurrent(sys, j) {
			gtyp += math.Log(g)
			ng++
		}
	}
	if ng > 0 {
		gtyp = math.Exp(gtyp / float64(ng))
	} else {
		gtyp = 1
	}
	sum, k := 0.0, 0
	for j := 0; j < n; j++ {
		c := math.Abs(sys.C.At(j, j))
		if c == 0 {
			continue
		}
		var r float64
		switch g := math.Abs(sys.G.At(j, j)); {
		case isCurrent(sys, j):
			r = 1 / (gtyp * c)
		case g > 0:
			r = g / c
		default:
			r = gtyp / c
		}
		sum += math.Log(r)
		k++
	}
	if k == 0 {
		return 1
	}
	return math.Exp(sum / float64(k))
}

// isCurrent reports whether unknown j is a branch current.
func isCurrent(sys *mna.System, j int) bool {
	return j < len(sys.Unknowns) && strings.HasPrefix(sys.Unknowns[j], "i(")
}

// scaledSystem is the balanced, frequency-scaled system
//
//	Ĝ = R·G·K,  Ĉ = R·(ωc·C)·K,  B̂ = R·B,  L̂ = L·K,
//
// with R, K diagonal powers of two, so that H(s) = L̂(Ĝ + ŝĈ)⁻¹B̂ with
// ŝ = s/ωc. Roots of the scaled pencils are in units of ωc.
type scaledSystem struct {
	wc     float64
	g, c   *mat.Dense
	b, l   []float64
	n      int
	gb, cb *mat.Dense // the bordered zero pencil
	// rawCentre (rad/s) is rootCentre of the poles other than those
	// the rank test sets to s = 0: where the roots are, for a second
	// pass.
	rawCentre float64
	// regularAt0: Y(0) = G factors regularly by mna's scale-invariant
	// pivot rule (mna.ShiftSolver at s = 0), so no pole is at s = 0.
	regularAt0 bool
	// dcNonzero: regularAt0 and H(0) is non-zero beyond its rounding
	// (dcGainNonzero), so no zero is at s = 0.
	dcNonzero bool
}

// newScaledSystem balances sys for the characteristic frequency wc (rad/s).
func newScaledSystem(sys *mna.System, wc float64) *scaledSystem {
	n := len(sys.B)
	g := mat.DenseCopyOf(sys.G)
	c := mat.NewDense(n, n, nil)
	c.Scale(wc, sys.C)
	rs, ks := balance(g, c)
	b := make([]float64, n)
	l := make([]float64, n)
	for i := 0; i < n; i++ {
		b[i] = rs[i] * sys.B[i]
		l[i] = sys.L[i] * ks[i]
		for j := 0; j < n; j++ {
			g.Set(i, j, rs[i]*g.At(i, j)*ks[j])
			c.Set(i, j, rs[i]*c.At(i, j)*ks[j])
		}
	}
	s := &scaledSystem{wc: wc, g: g, c: c, b: b, l: l, n: n}
	// Bordered pencil with the border normalised (zeros do not depend on
	// the scale of u or y).
	bn, ln := normInf(b), normInf(l)
	gb := mat.NewDense(n+1, n+1, nil)
	cb := mat.NewDense(n+1, n+1, nil)
	gb.Slice(0, n, 0, n).(*mat.Dense).Copy(g)
	cb.Slice(0, n, 0, n).(*mat.Dense).Copy(c)
	for i := 0; i < n; i++ {
		if bn > 0 {
			gb.Set(i, n, b[i]/bn)
		}
		if ln > 0 {
			gb.Set(n, i, l[i]/ln)
		}
	}
	s.gb, s.cb = gb, cb
	return s
}

// normInf returns max |v_i|.
func normInf(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// balance returns row and column scale factors (powers of two) that bring
// the rows and columns of |g| + |c| to a largest entry near 1: max-
// balancing sweeps started from the least-squares balancing (LogBalance),
// so that the result does not depend on the units of the values (a
// start at 1 leaves it to the sweeps, whose fixed point is not unique).
func balance(g, c *mat.Dense) (rs, ks []float64) {
	n, _ := g.Dims()
	rs = make([]float64, n)
	ks = make([]float64, n)
	re, ce, _ := LogBalance(g, c, false)
	for i := range rs {
		rs[i], ks[i] = math.Ldexp(1, re[i]), math.Ldexp(1, ce[i])
	}
	mag := func(i, j int) float64 { return math.Abs(g.At(i, j)) + math.Abs(c.At(i, j)) }
	for sweep := 0; sweep < 4; sweep++ {
		for i := 0; i < n; i++ {
			m := 0.0
			for j := 0; j < n; j++ {
				m = math.Max(m, mag(i, j)*rs[i]*ks[j])
			}
			if m > 0 {
				rs[i] *= pow2Inv(m)
			}
		}
		for j := 0; j < n; j++ {
			m := 0.0
			for i := 0; i < n; i++ {
				m = math.Max(m, mag(i, j)*rs[i]*ks[j])
			}
			if m > 0 {
				ks[j] *= pow2Inv(m)
			}
		}
	}
	return rs, ks
}

// pow2Inv returns the power of two nearest to 1/m.
func pow2Inv(m float64) float64 {
	_, e := math.Frexp(m)
	return math.Ldexp(1, -e+1)
}

// evalAtShift returns H(σ̂·ωc) and the magnitude scale Σ|L̂ᵢxᵢ| of the
// terms the output sums, or ok=false when G + σC is ill conditioned. An
// |H| that is a rounding-level fraction of that scale is a cancellation
// (a balanced bridge): no evidence of a non-zero H. The norm of the whole
// solution is never the scale: the far end of a long ladder is 10⁻⁸⁰ of
// its first node and still exact.
//
// stable reports whether the refinement step left H unchanged to 1e-3
// relative (and non-zero): a genuine tiny H is computed stably, while a
// value that is rounding of a cancellation moves by its own size.
func (s *scaledSystem) evalAtShift(sigma float64, level shiftLevel) (h, scale, norm float64, stable, ok bool) {
	x := mat.NewDense(s.n, s.n, nil)
	x.Scale(sigma, s.c)
	x.Add(x, s.g)
	var lu mat.LU
	lu.Factorize(x)
	if !shiftAccepted(&lu, level) {
		return 0, 0, 0, false, false
	}
	var v mat.VecDense
	bv := mat.NewVecDense(s.n, append([]float64(nil), s.b...))
	if err := lu.SolveVecTo(&v, false, bv); solveFailed(err) {
		return 0, 0, 0, false, false
	}
	h0 := 0.0
	for i := 0; i < s.n; i++ {
		h0 += s.l[i] * v.AtVec(i)
	}
	// One step of iterative refinement: a value that is rounding of a
	// cancellation shrinks by another factor ε, a genuine tiny one stays.
	var r, d mat.VecDense
	r.MulVec(x, &v)
	r.SubVec(bv, &r)
	if err := lu.SolveVecTo(&d, false, &r); !solveFailed(err) {
		v.AddVec(&v, &d)
	}
	for i := 0; i < s.n; i++ {
		t := s.l[i] * v.AtVec(i)
		h += t
		scale += math.Abs(t)
	}
	stable = h != 0 && h0 != 0 && math.Abs(h-h0) <= 1e-3*math.Abs(h)
	return h, scale, normInf(s.l) * mat.Norm(&v, math.Inf(1)), stable, true
}

// gainPointRadii and gainPointAngles span the candidate points ŝ = r·e^{jθ}
// (scaled units) at which the gain is evaluated once the roots are known.
var (
	gainPointRadii  = [...]float64{1, 0.37, 2.7, 0.1, 10}
	gainPointAngles = [...]float64{0, 0.3, 0.7, 1.1, 1.5, 1.9, 2.3, 2.7, math.Pi}
)

// gainPoint returns the candidate point ŝ that maximises min |ŝ − r|/|ŝ|
// over every root r given, i.e. the one relatively farthest from all
// poles, zeros and cancelled modes, where H(ŝ) is accurate and dividing by
// Π(ŝ − ẑ) amplifies no rounding.
func gainPoint(roots ...[]complex128) complex128 {
	best, bestD := complex(1, 0), -1.0
	for _, rad := range gainPointRadii {
		for _, th := range gainPointAngles {
			s := cmplx.Rect(rad, th)
			d := math.Inf(1)
			for _, l := range roots {
				for _, r := range l {
					d = math.Min(d, cmplx.Abs(s-r)/rad)
				}
			}
			if d > bestD {
				best, bestD = s, d
			}
		}
	}
	return best
}

// evalComplex returns H(ŝ) = L̂(Ĝ + ŝĈ)⁻¹B̂ and ok=false if the matrix is
// exactly singular.
func (s *scaledSystem) evalComplex(sv complex128) (complex128, bool) {
	var f complexLU
	if f.factor(s.g, s.c, sv) {
		return 0, false
	}
	b := make([]complex128, s.n)
	for i, v := range s.b {
		b[i] = complex(v, 0)
	}
	f.solve(b, make([]complex128, s.n))
	var h complex128
	for i, l := range s.l {
		h += complex(l, 0) * b[i]
	}
	return h, true
}

// evalDC returns H(0) = L̂Ĝ⁻¹B̂ by LU with two steps of iterative
// refinement (the residual in float64), so that a DC gain that is exactly
// representable (a resistive divider of equal parts, an unloaded ladder:
// 1) comes out exactly. ok=false when Ĝ is exactly singular.
func (s *scaledSystem) evalDC() (float64, bool) {
	var f complexLU
	if f.factor(s.g, s.c, 0) {
		return 0, false
	}
	x := make([]complex128, s.n)
	r := make([]complex128, s.n)
	buf := make([]complex128, s.n)
	for i, v := range s.b {
		x[i] = complex(v, 0)
	}
	f.solve(x, buf)
	for it := 0; it < 2; it++ {
		for i := 0; i < s.n; i++ {
			v := s.b[i]
			for j := 0; j < s.n; j++ {
				v -= s.g.At(i, j) * real(x[j])
			}
			r[i] = complex(v, 0)
		}
		f.solve(r, buf)
		for i := range x {
			x[i] += r[i]
		}
	}
	h := 0.0
	for i, l := range s.l {
		h += l * real(x[i])
	}
	return h, true
}

// extract runs the whole computation in scaled units; polish says whether
// the roots get Newton steps on the determinant (O(n⁴), see polishRoots).
func (s *scaledSystem) extract(polish bool) (*TransferFunction, error) {
	// H at a well-conditioned shift (used for the gain).
	sigma, hSig, hScale, hNorm, hStable := 0.0, 0.0, 0.0, 0.0, false
	found, level := false, strictShift
	for _, level = range shiftLevels {
		for _, f := range shiftFactors {
			if h, sc, nm, st, ok := s.evalAtShift(f, level); ok {
				sigma, hSig, hScale, hNorm, hStable, found = f, h, sc, nm, st, true
				break
			}
		}
		if found {
			break
		}
	}
	if !found {
		return nil, ErrSingularSystem
	}
	if hScale == 0 || math.Abs(hSig) <= nullGainTol*hScale {
		// Possibly H ≡ 0: confirm at a second shift.
		zero := true
		for _, f := range shiftFactors {
			if f == sigma {
				continue
			}
			if h, sc, _, _, ok := s.evalAtShift(f, level); ok {
				zero = sc == 0 || math.Abs(h) <= nullGainTol*sc
				if !zero {
					sigma, hSig = f, h
				}
				break
			}
		}
		if zero {
			return &TransferFunction{Num: []float64{0}, Den: []float64{1}}, nil
		}
	}
	poles, err := pencilRoots(s.g, s.c, polish, aRankTol, s.regularAt0)
	if err != nil {
		if errors.Is(err, errSingularPencil) {
			return nil, ErrSingularSystem
		}
		return nil, fmt.Errorf("transfer function poles: %w", err)
	}
	zeros, err := pencilRoots(s.gb, s.cb, polish, aRankTol, s.dcNonzero)
	if errors.Is(err, errSingularPencil) {
		// The bordered pencil looks singular while G + sC is not: its
		// determinant −det(G + sC)·H(s) vanishes identically, so H ≡ 0
		// (an output at a virtual ground, a balanced bridge) — when H at
		// the shift is rounding of the whole solution too and moves under
		// refinement. Otherwise H is tiny but real (a 1 TΩ / 0.1 Ω
		// divider: the determinant is 10⁻¹³ of the entries): decide the
		// rank at rounding level instead.
		if math.Abs(hSig) <= roundingGainTol*hNorm && !hStable {
			return &TransferFunction{Num: []float64{0}, Den: []float64{1}}, nil
		}
		zeros, err = pencilRoots(s.gb, s.cb, polish, tinyRankTol, false)
		if errors.Is(err, errSingularPencil) {
			return nil, fmt.Errorf("%w: the response (|H| = %.3g at s = %.4g rad/s) is too small beside the circuit's other quantities (%.3g) to factor its zeros in float64",
				ErrIllConditioned, math.Abs(hSig), sigma*s.wc, hNorm)
		}
	}
	if err != nil {
		return nil, fmt.Errorf("transfer function zeros: %w", err)
	}

	s.rawCentre = rootCentre(poles) * s.wc
	snapAxis(poles)
	snapAxis(zeros)
	poles, zeros, cancelled := cancelPairs(poles, zeros)

	// Gain K̂ = H(ŝ)·Π(ŝ−p̂)/Π(ŝ−ẑ) at the point farthest from every root
	// (not at σ, which may sit on a zero: H(σ) is then rounding noise).
	sg := gainPoint(poles, zeros, cancelled)
	hs, ok := s.evalComplex(sg)
	if !ok {
		hs, sg = complex(hSig, 0), complex(sigma, 0)
	}
	k := NewWideProduct(hs)
	for i := 0; i < max(len(poles), len(zeros)); i++ {
		if i < len(poles) {
			k.Mul(sg - poles[i])
		}
		if i < len(zeros) {
			k.Div(sg - zeros[i])
		}
	}
	// Present the factored form in the scale w at which the gain is ±1
	// (w = ωc·|K̂|^(1/(n−m))), so that no gain overflows however many
	// decades the roots span; Gain in rad/s units may not fit.
	rel := len(poles) - len(zeros)
	w, kw := s.wc, real(k.m)
	if rel != 0 && kw != 0 {
		lg := math.Log(math.Abs(kw)) + float64(k.e)*math.Ln2
		w = s.wc * math.Exp(lg/float64(rel))
		kw = math.Copysign(1, kw)
	} else {
		kw = math.Ldexp(kw, k.e)
	}
	gp := NewWideProduct(complex(kw, 0))
	for i := 0; i < rel; i++ {
		gp.Mul(complex(w, 0))
	}
	for i := 0; i > rel; i-- {
		gp.Div(complex(w, 0))
	}
	gain := gp.Value()

	scaleRoots(poles, s.wc)
	scaleRoots(zeros, s.wc)
	scaleRoots(cancelled, s.wc)
	sortRoots(poles)
	sortRoots(zeros)
	sortRoots(cancelled)
	tf := newTransferFunction(real(gain), zeros, poles, cancelled)
	tf.ScaledGain, tf.ScaleRad = kw, w
	if h0, ok := s.evalDC(); ok && !hasRootAtZero(poles, zeros) {
		tf.DirectDC = &h0
	}
	return tf, nil
}

// WideProduct is a complex product m·2^e kept with |m| near 1, so that
// products of hundreds of factors neither overflow nor underflow.
type WideProduct struct {
	m complex128
	e int
}

func NewWideProduct(v complex128) WideProduct {
	p := WideProduct{m: v}
	p.norm()
	return p
}

func (p *WideProduct) norm() {
	a := math.Max(math.Abs(real(p.m)), math.Abs(imag(p.m)))
	if a == 0 || math.IsInf(a, 0) || math.IsNaN(a) {
		return
	}
	_, e := math.Frexp(a)
	p.m = complex(math.Ldexp(real(p.m), -e), math.Ldexp(imag(p.m), -e))
	p.e += e
}

func (p *WideProduct) Mul(v complex128) { p.m *= v; p.norm() }
func (p *WideProduct) Div(v complex128) { p.m /= v; p.norm() }

// value returns m·2^e (±Inf or 0 when it does not fit a float64).
func (p WideProduct) Value() complex128 {
	return complex(math.Ldexp(real(p.m), p.e), math.Ldexp(imag(p.m), p.e))
}

// hasRootAtZero reports whether a root of any list is exactly 0.
func hasRootAtZero(lists ...[]complex128) bool {
	for _, l := range lists {
		for _, r := range l {
			if r == 0 {
				return true
			}
		}
	}
	return false
}

// originGuard (scaled units): the rank test's m roots at s = 0 are set
// to 0 only when the eigen-solver also put them below OriginGuard(m),
// at least this, so a rank decision alone never moves a genuine root.
const originGuard = 1e-3

// originMultiplicity returns the multiplicity of s = 0 as a root of
// det(a + s·e), by a rank test on the pencil at s = 0: the roots at s = 0
// of a + s·e are the infinite eigenvalues of e + t·a (t = 1/s), which
// deflateInfinite removes exactly by the staircase on null spaces of a.
// It returns 0 when the test fails (a singular pencil).
func originMultiplicity(a, e *mat.Dense) int {
	n, _ := a.Dims()
	p, err := deflateInfinite(e, a)
	if err != nil {
		return 0
	}
	if p.a == nil {
		return n
	}
	r, _ := p.a.Dims()
	return n - r
}

// OriginGuard returns the bound (scaled units) below which the m
// smallest eigen-solver roots must lie for the rank test's m-fold root at
// s = 0 to be taken: originGuard, or the split (1e8·ε)^(1/m) of an m-fold
// root under a relative perturbation of 10⁸ε when that is wider (0.025
// for m = 5, 0.17 for m = 10, 0.31 for m = 15: fifteen high-pass stages).
// analysis/stability takes its natural frequencies at s = 0 by the same
// rule, in the units of its own equilibration.
func OriginGuard(m int) float64 {
	return math.Max(originGuard, math.Pow(1e8*0x1p-52, 1/float64(m)))
}

// deflateOrigin returns the roots of det(a + s·e) with the rank test's
// m-fold root at s = 0 made exact (see originMultiplicity), given raw,
// the eigen-solver's roots of the whole pencil: when the m smallest of
// raw lie below OriginGuard(m), the other roots are computed again
// from the pencil with s = 0 deflated exactly (nonzeroRoots), so that
// rounding of the origin root (split by ε^(1/m) into a polygon) neither
// stands for it nor disturbs a small genuine root beside it (the
// 0.089 rad/s zero next to the zero at s = 0 of a capacitor current
// behind a finite-gain follower). When the deflated pencil does not give
// len(raw) − m roots, the m smallest raw roots are set to 0 instead.
// raw is returned unchanged when the rank test finds no root at s = 0 or
// the guard fails.
func deflateOrigin(a, e *mat.Dense, raw []complex128) []complex128 {
	m := originMultiplicity(a, e)
	if m <= 0 || m > len(raw) {
		return raw
	}
	idx := make([]int, len(raw))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(x, y int) bool { return cmplx.Abs(raw[idx[x]]) < cmplx.Abs(raw[idx[y]]) })
	if cmplx.Abs(raw[idx[m-1]]) > OriginGuard(m) {
		return raw
	}
	if nz, err := nonzeroRoots(a, e); err == nil && len(nz) == len(raw)-m {
		out := make([]complex128, m, len(raw))
		return append(out, nz...)
	}
	out := append([]complex128(nil), raw...)
	for _, i := range idx[:m] {
		out[i] = 0
	}
	return out
}

// slowRootBound (scaled units): below it, a root from shift-and-invert
// at the characteristic frequency carries an absolute error of about
// ε·(largest root), more than a root 10⁻¹⁹ of it is worth; such roots are
// taken from the inversion at σ = 0 instead (SlowRoots).
const slowRootBound = originGuard

// slowRoots is SlowRoots with the rank tolerance aTol of the deflation.
func slowRoots(a, e *mat.Dense, raw []complex128, aTol float64) []complex128 {
	if !hasSlowRoot(raw) {
		return raw
	}
	p, err := deflateInfiniteTol(a, e, aTol)
	if err != nil {
		return raw
	}
	slow, err := p.eigenvaluesShifted(0, anyShift)
	if err != nil {
		return raw
	}
	return mergeSlowRoots(raw, slow)
}

// SlowRoots returns raw, an eigen-solver's roots of det(a + s·e) in
// scaled units (the characteristic frequency is 1, as after Extract's or
// analysis/stability's equilibration), with those below slowRootBound
// replaced by the roots of shift-and-invert at σ = 0 (the eigenvalues μ
// of a⁻¹e on the pencil with its infinite eigenvalues deflated, s = −1/μ:
// the reversed pencil e + t·a, t = 1/s), whose error relative to each
// root is about ε·|s|/|s_min|, full accuracy
// for the slow ones. The caller knows a to be regular (Y(0) factors by
// mna's pivot rule, which refutes any root at s = 0), so any condition
// number of a is accepted; raw is returned when the inversion fails or
// the two computations do not count the same roots below the bound.
func SlowRoots(a, e *mat.Dense, raw []complex128) []complex128 {
	return slowRoots(a, e, raw, aRankTol)
}

// hasSlowRoot reports whether a root lies below slowRootBound.
func hasSlowRoot(roots []complex128) bool {
	for _, r := range roots {
		if cmplx.Abs(r) < slowRootBound {
			return true
		}
	}
	return false
}

// mergeSlowRoots combines two computations of the same roots (scaled
// units, where the characteristic frequency is 1): fast, accurate
// relative to the largest root (shift-and-invert near 1), and slow,
// accurate relative to each small root (inversion at s = 0, the reversed
// pencil). Roots of fast below slowRootBound are replaced by the roots of
// slow below it; fast is returned unchanged when it has none there or
// when the two do not count the same number of roots on each side of the
// bound (a root straddling it: both are then accurate near it).
func mergeSlowRoots(fast, slow []complex128) []complex128 {
	if !hasSlowRoot(fast) {
		return fast
	}
	out := make([]complex128, 0, len(fast))
	for _, r := range slow {
		if cmplx.Abs(r) < slowRootBound {
			out = append(out, r)
		}
	}
	for _, r := range fast {
		if cmplx.Abs(r) >= slowRootBound {
			out = append(out, r)
		}
	}
	if len(out) != len(fast) {
		return fast
	}
	return out
}

// nonzeroRoots returns the finite roots of det(a + s·e) other than s = 0:
// the staircase of deflateInfinite on the reversed pencil e + t·a
// (t = 1/s) removes its infinite eigenvalues, i.e. the roots at s = 0,
// by orthogonal transformations, leaving r×r blocks (A′, E′) with E′
// (from a) non-singular and det(A′ + t·E′) ∝ t^(n−r)·det(a + e/t); the
// finite roots of the pencil E′ + s·A′ are then the non-zero finite roots
// of the original (none is 0 since E′ is non-singular).
func nonzeroRoots(a, e *mat.Dense) ([]complex128, error) {
	p, err := deflateInfinite(e, a)
	if err != nil {
		return nil, err
	}
	if p.a == nil {
		return nil, nil
	}
	return finiteEigenvalues(p.e, p.a, shiftFactors[:])
}

// snapAxis sets to 0 the real part of complex roots within
// zeroRootTol·|r| of the jω axis (a Q above 10⁹ is rounding of an
// undamped pair, e.g. a notch). Roots at s = 0 are decided by the rank
// test alone (deflateOrigin): a tiny genuine root (a 2 TΩ resistor with
// 1 pF far from the characteristic frequency) is never set to 0.
func snapAxis(roots []complex128) {
	for i, r := range roots {
		if imag(r) != 0 && math.Abs(real(r)) <= zeroRootTol*cmplx.Abs(r) {
			roots[i] = complex(0, imag(r))
		}
	}
}

// scaleRoots multiplies every root by w.
func scaleRoots(roots []complex128, w float64) {
	for i := range roots {
		roots[i] *= complex(w, 0)
	}
}

// cancelPairs removes pole-zero pairs equal within cancelTol (closest
// pairs first) and returns the remaining poles and zeros and the cancelled
// pole values. A complex pair cancels only against a complex pair, both
// members at once, so conjugate symmetry is kept.
func cancelPairs(poles, zeros []complex128) (p, z, cancelled []complex128) {
	type match struct {
		i, j int
		d    float64
	}
	var ms []match
	for i, pp := range poles {
		if imag(pp) < 0 {
			continue
		}
		for j, zz := range zeros {
			if imag(zz) < 0 || (imag(pp) > 0) != (imag(zz) > 0) {
				continue
			}
			d := cmplx.Abs(pp - zz)
			if d <= cancelTol*math.Max(cmplx.Abs(pp), cmplx.Abs(zz)) {
				ms = append(ms, match{i, j, d})
			}
		}
	}
	sort.SliceStable(ms, func(a, b int) bool { return ms[a].d < ms[b].d })
	usedP := make([]bool, len(poles))
	usedZ := make([]bool, len(zeros))
	for _, m := range ms {
		if usedP[m.i] || usedZ[m.j] {
			continue
		}
		pi, zj := -1, -1
		if imag(poles[m.i]) > 0 {
			pi = conjIndex(poles, usedP, m.i)
			zj = conjIndex(zeros, usedZ, m.j)
			if pi < 0 || zj < 0 {
				continue
			}
		}
		usedP[m.i], usedZ[m.j] = true, true
		cancelled = append(cancelled, poles[m.i])
		if pi >= 0 {
			usedP[pi], usedZ[zj] = true, true
			cancelled = append(cancelled, poles[pi])
		}
	}
	for i, pp := range poles {
		if !usedP[i] {
			p = append(p, pp)
		}
	}
	for j, zz := range zeros {
		if !usedZ[j] {
			z = append(z, zz)
		}
	}
	return p, z, cancelled
}

// conjIndex returns the index of an unused exact conjugate of r[i], or -1.
func conjIndex(r []complex128, used []bool, i int) int {
	for j, v := range r {
		if j != i && !used[j] && v == cmplx.Conj(r[i]) {
			return j
		}
	}
	return -1
}

// sortRoots orders conjugate-symmetric roots by increasing magnitude, then
// by real part, each complex pair as (upper, its exact conjugate). The
// eigen-solver and polishing keep exact conjugate symmetry, so the lower
// members are rebuilt from the upper ones.
func sortRoots(r []complex128) {
	var keep []complex128
	for _, v := range r {
		if imag(v) >= 0 {
			keep = append(keep, v)
		}
	}
	if 2*len(keep)-countReal(keep) != len(r) {
		// Not conjugate symmetric (should not happen): plain ordering.
		keep = append(keep[:0], r...)
	}
	sort.SliceStable(keep, func(a, b int) bool {
		ma, mb := cmplx.Abs(keep[a]), cmplx.Abs(keep[b])
		if ma != mb {
			return ma < mb
		}
		if real(keep[a]) != real(keep[b]) {
			return real(keep[a]) < real(keep[b])
		}
		return imag(keep[a]) > imag(keep[b])
	})
	if len(keep) == len(r) {
		copy(r, keep)
		return
	}
	k := 0
	for _, v := range keep {
		r[k] = v
		k++
		if imag(v) > 0 {
			r[k] = cmplx.Conj(v)
			k++
		}
	}
}

// countReal counts the roots with zero imaginary part.
func countReal(r []complex128) int {
	k := 0
	for _, v := range r {
		if imag(v) == 0 {
			k++
		}
	}
	return k
}

// newTransferFunction builds the polynomial form from gain, zeros and
// poles (all in rad/s), normalising Den's lowest non-zero coefficient to 1.
func newTransferFunction(gain float64, zeros, poles, cancelled []complex128) *TransferFunction {
	num, den := normaliseMonic(gain, rootsPoly(zeros), rootsPoly(poles))
	return &TransferFunction{Num: num, Den: den, Zeros: zeros, Poles: poles, Gain: gain, Cancelled: cancelled}
}

// normaliseMonic turns gain·num/den, num and den monic, into the invariant
// form: den divided by its lowest-order non-zero coefficient, num scaled
// to match. It works in place and returns its arguments.
func normaliseMonic(gain float64, num, den []float64) ([]float64, []float64) {
	lo := 0.0
	for _, d := range den {
		if d != 0 {
			lo = d
			break
		}
	}
	for i := range den {
		den[i] /= lo
	}
	for i := range num {
		num[i] *= gain / lo
	}
	return num, den
}

// rootsPoly returns the ascending coefficients of the monic polynomial
// Π(s − r) with real coefficients; conjugate pairs are multiplied as real
// quadratics s² − 2Re(r)s + |r|².
func rootsPoly(roots []complex128) []float64 {
	p := []float64{1}
	for i := 0; i < len(roots); i++ {
		r := roots[i]
		if imag(r) > 0 && i+1 < len(roots) && roots[i+1] == cmplx.Conj(r) {
			p = PolyMul(p, []float64{real(r)*real(r) + imag(r)*imag(r), -2 * real(r), 1})
			i++
			continue
		}
		// Real roots; an unpaired complex root (not produced by Extract)
		// contributes its real part only.
		p = PolyMul(p, []float64{-real(r), 1})
	}
	return p
}

// PolyMul multiplies two ascending polynomials.
func PolyMul(a, b []float64) []float64 {
	out := make([]float64, len(a)+len(b)-1)
	for i, x := range a {
		for j, y := range b {
			out[i+j] += x * y
		}
	}
	return out
}
