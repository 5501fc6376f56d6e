package transfer

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"

	"gonum.org/v1/gonum/floats"
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
	// nullGainTol: H(σ) below nullGainTol·‖L‖₂‖x‖₂ at two shifts means H ≡ 0.
	nullGainTol = 1e-12
)

// shiftFactors are the multiples of the characteristic frequency tried as
// the real shift σ, in order, until G + σC (and the bordered zero pencil)
// is well conditioned.
var shiftFactors = [...]float64{1, 1.7182818, 0.5772157, 3.1415927, 0.3183099, 7.389056, 0.1353353, 23.14069, 0.0432139}

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
// snapZero). If H ≡ 0, Num is [0],
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
	sc := newScaledSystem(sys, wc)
	tf, err := sc.extract()
	if err != nil {
		return nil, err
	}
	// Second pass when the poles sit far from the first guess of the
	// characteristic frequency: centre the shift on them for accuracy.
	if c := rootCentre(tf.Poles, tf.Cancelled); c > 0 && (c > 100*wc || c < wc/100) {
		if tf2, err2 := newScaledSystem(sys, c).extract(); err2 == nil {
			tf = tf2
		}
	}
	return tf, nil
}

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
// the rows and columns of |g| + |c| to a largest entry near 1.
func balance(g, c *mat.Dense) (rs, ks []float64) {
	n, _ := g.Dims()
	rs = make([]float64, n)
	ks = make([]float64, n)
	for i := range rs {
		rs[i], ks[i] = 1, 1
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

// evalAtShift returns H(σ̂·ωc) and the magnitude scale ‖L̂‖₂·‖x‖₂ that
// bounds it (Cauchy–Schwarz), or ok=false when G + σC is ill conditioned.
// An |H| that is a rounding-level fraction of the scale is no evidence of
// a non-zero H: for a single-node output Σ|L̂ᵢxᵢ| would equal |H| itself.
func (s *scaledSystem) evalAtShift(sigma float64) (h, scale float64, ok bool) {
	x := mat.NewDense(s.n, s.n, nil)
	x.Scale(sigma, s.c)
	x.Add(x, s.g)
	var lu mat.LU
	lu.Factorize(x)
	if c := lu.Cond(); math.IsInf(c, 0) || math.IsNaN(c) || c > maxShiftCond {
		return 0, 0, false
	}
	var v mat.VecDense
	if err := lu.SolveVecTo(&v, false, mat.NewVecDense(s.n, append([]float64(nil), s.b...))); err != nil {
		return 0, 0, false
	}
	for i := 0; i < s.n; i++ {
		h += s.l[i] * v.AtVec(i)
	}
	return h, floats.Norm(s.l, 2) * mat.Norm(&v, 2), true
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

// extract runs the whole computation in scaled units.
func (s *scaledSystem) extract() (*TransferFunction, error) {
	// H at a well-conditioned shift (used for the gain).
	sigma, hSig, hScale := 0.0, 0.0, 0.0
	found := false
	for _, f := range shiftFactors {
		if h, sc, ok := s.evalAtShift(f); ok {
			sigma, hSig, hScale, found = f, h, sc, true
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
			if h, sc, ok := s.evalAtShift(f); ok {
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
	poles, err := finiteEigenvalues(s.g, s.c, shiftFactors[:])
	if err != nil {
		if errors.Is(err, errSingularPencil) {
			return nil, ErrSingularSystem
		}
		return nil, fmt.Errorf("transfer function poles: %w", err)
	}
	polishRoots(s.g, s.c, poles)
	zeros, err := finiteEigenvalues(s.gb, s.cb, shiftFactors[:])
	if err != nil {
		return nil, fmt.Errorf("transfer function zeros: %w", err)
	}
	polishRoots(s.gb, s.cb, zeros)

	snapZero(poles)
	snapZero(zeros)
	poles, zeros, cancelled := cancelPairs(poles, zeros)

	// Gain K̂ = H(ŝ)·Π(ŝ−p̂)/Π(ŝ−ẑ) at the point farthest from every root
	// (not at σ, which may sit on a zero: H(σ) is then rounding noise).
	sg := gainPoint(poles, zeros, cancelled)
	hs, ok := s.evalComplex(sg)
	if !ok {
		hs, sg = complex(hSig, 0), complex(sigma, 0)
	}
	k := hs
	for _, p := range poles {
		k *= sg - p
	}
	for _, z := range zeros {
		k /= sg - z
	}
	gain := real(k) * math.Pow(s.wc, float64(len(poles)-len(zeros)))

	scaleRoots(poles, s.wc)
	scaleRoots(zeros, s.wc)
	scaleRoots(cancelled, s.wc)
	sortRoots(poles)
	sortRoots(zeros)
	sortRoots(cancelled)
	return newTransferFunction(gain, zeros, poles, cancelled), nil
}

// snapZero sets to exactly 0 the roots that are s = 0 up to rounding
// (scaled units), and the real part of complex roots within
// zeroRootTol·|r| of the jω axis to 0 (a Q above 10⁹ is rounding of an
// undamped pair, e.g. a notch).
//
// A root of multiplicity m at s = 0 (two series capacitors, a coupled
// pair: H ∝ s²) does not come out as m tiny roots: a relative error δ in
// the pencil splits it into m roots of size about δ^(1/m) around 0 (√ε ≈
// 1.5e-8 for a double root), while their mean stays O(δ). So the m
// smallest roots are set to 0 when the largest of them is below
// originClusterTol(m) and the modulus of their mean is below zeroRootTol,
// for the largest such m. For m = 1 this is the plain bound zeroRootTol.
func snapZero(roots []complex128) {
	idx := make([]int, len(roots))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return cmplx.Abs(roots[idx[a]]) < cmplx.Abs(roots[idx[b]]) })
	for m := len(roots); m >= 1; m-- {
		if cmplx.Abs(roots[idx[m-1]]) > originClusterTol(m) {
			continue
		}
		var sum complex128
		for _, i := range idx[:m] {
			sum += roots[i]
		}
		if cmplx.Abs(sum)/float64(m) <= zeroRootTol {
			for _, i := range idx[:m] {
				roots[i] = 0
			}
			break
		}
	}
	for i, r := range roots {
		if imag(r) != 0 && math.Abs(real(r)) <= zeroRootTol*cmplx.Abs(r) {
			roots[i] = complex(0, imag(r))
		}
	}
}

// originClusterTol is the largest modulus (scaled units) of a member of
// an m-fold root at s = 0 split by rounding: (1e4·ε)^(1/m), allowing a
// pencil condition of 1e4 after balancing, and never below zeroRootTol.
// A genuine cluster of m distinct roots this close to 0 with a mean below
// zeroRootTol (for m = 2 a pair ±a or ±ja below 1.5e-6 of the
// characteristic frequency) cannot be told from it in float64.
func originClusterTol(m int) float64 {
	return math.Max(zeroRootTol, math.Pow(1e4*0x1p-52, 1/float64(m))) // ε = 2⁻⁵²
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
			p = polyMul(p, []float64{real(r)*real(r) + imag(r)*imag(r), -2 * real(r), 1})
			i++
			continue
		}
		// Real roots; an unpaired complex root (not produced by Extract)
		// contributes its real part only.
		p = polyMul(p, []float64{-real(r), 1})
	}
	return p
}

// polyMul multiplies two ascending polynomials.
func polyMul(a, b []float64) []float64 {
	out := make([]float64, len(a)+len(b)-1)
	for i, x := range a {
		for j, y := range b {
			out[i+j] += x * y
		}
	}
	return out
}
