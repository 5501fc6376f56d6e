package stability

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"nodal/mna"
)

// The search of a large active block for natural frequencies in the right
// half-plane: shift-and-invert Arnoldi (Arnoldi, Quart. Appl. Math. 9
// (1951); the shift-and-invert spectral transformation as in Saad,
// Numerical Methods for Large Eigenvalue Problems, 2nd ed., SIAM 2011,
// from memory) on the sparse factorisation of Y(σ) = G + σC
// (mna.ShiftSolver), at real shifts σ > 0 spaced by searchRatio over the
// block's range of rates.
//
// With (G + λC)x = 0, (G + σC)⁻¹C·x = x/(σ − λ): λ = σ − 1/θ for each
// eigenvalue θ of the operator. Every λ in the closed left half-plane has
// |σ − λ| ≥ σ, so |θ| ≤ 1/σ, while a real λ in [σ/2, σ] gives |θ| ≥ 2/σ:
// on a grid of ratio 2 a real right half-plane root is the dominant
// eigenvalue at the shift just above it, which Arnoldi finds first. A
// complex one is dominant at the shifts σ > |λ|²/(2 Re λ), less clearly.
// The search therefore finds unstable frequencies; it cannot show that
// there is none.
//
// Each Ritz value with Re λ > 0 is refined by Rayleigh quotient iteration
// on the complex factorisation of Y(λ) until λ settles, and kept only when
// the backward error of the pair (λ, x),
//
//	η = ‖(G + λC)x‖ / ((‖G‖_F + |λ|·‖C‖_F)·‖x‖)
//
// (Tisseur, Linear Algebra Appl. 309 (2000), from memory) is at most
// searchBackward, Re λ > searchAxisMargin·|λ| and Re λ > 10·δ, δ the
// first-order bound on its error from its left vector (errorBound): λ is
// then an exact natural frequency of the block with G and C changed by at
// most η of their norms, and the circuit's own lies within δ of it, right
// of the axis. Its conjugate is one too (real matrices).

// Parameters of the search.
const (
	searchRatio      = 2  // ratio of consecutive shifts
	searchSteps      = 30 // Arnoldi vectors per shift
	searchMaxShifts  = 60 // most shifts per block
	searchCandidates = 4  // Ritz values refined per shift
	searchBackward   = 1e-12
	searchAxisMargin = 1e-6
	searchRounds     = 10                         // most factorisations of the Rayleigh quotient iteration
	searchConverged  = 1e-13                      // it stops when λ moves by at most this, relative
	searchRounding   = 64 * 2.220446049250313e-16 // or when its backward error is at rounding level
)

// search is what searchUnstable found in one block.
type search struct {
	poles    []complex128 // checked right half-plane natural frequencies (rad/s), conjugates included
	bounds   []float64    // their first-order error bounds δ (rad/s), see errorBound
	backward float64      // the largest backward error η among them
	lo, hi   float64      // the range of shifts tried (rad/s)
}

// searchUnstable searches the block pencil (g, c) for natural frequencies
// in the right half-plane. rows only sizes the block.
func searchUnstable(g, c *mna.Sparse, rows []int) (search, error) {
	k := len(rows)
	op := newBlockOperator(g, c, k)
	lo, hi := op.rateRange()
	var out search
	if hi == 0 {
		return out, nil // no capacitance or inductance: no finite frequency
	}
	// The slowest root of a chain of k sections sits near rate/k² (the
	// uniform ladder, p₁ ≈ −π²/(4k²)·4/RC), the fastest near 4·rate; the
	// range goes four times past each.
	lo /= 4 * float64(k) * float64(k)
	hi *= 8
	ratio := float64(searchRatio)
	if n := math.Log(hi/lo) / math.Log(ratio); n > searchMaxShifts {
		ratio = math.Pow(hi/lo, 1/float64(searchMaxShifts))
	}
	out.lo = lo
	rng := rand.New(rand.NewPCG(1, uint64(k)))
	start := make([]float64, k)
	for i := range start {
		start[i] = rng.Float64() - 0.5
	}
	for sigma := lo; sigma <= hi*ratio; sigma *= ratio {
		out.hi = sigma
		ritz, err := op.arnoldi(sigma, start)
		if errors.Is(err, errShiftSingular) {
			continue // σ is a natural frequency to rounding: the next shift sees it
		}
		if err != nil {
			return out, err
		}
		for _, r := range ritz {
			if out.near(r.lambda) {
				continue // it would refine to one already found
			}
			lam, eta, ok := op.refine(r.lambda, r.vec)
			if !ok || real(lam) <= searchAxisMargin*cmplx.Abs(lam) || eta > searchBackward {
				continue
			}
			delta := op.errorBound(lam, r.vec, eta)
			if !(real(lam) > 10*delta) {
				continue // too near the axis for its own error bound
			}
			out.add(lam, eta, delta)
		}
	}
	return out, nil
}

// near reports whether a Ritz value lies within 10⁻⁴ of its modulus of a
// frequency already found.
func (s *search) near(lam complex128) bool {
	for _, p := range s.poles {
		if cmplx.Abs(p-lam) <= 1e-4*cmplx.Abs(lam) {
			return true
		}
	}
	return false
}

// add keeps a checked frequency and its conjugate, once: two whose
// distance is within ten times the sum of their error bounds are one
// (an ill-conditioned root, such as the slow root of a long ladder,
// refined from several Ritz values agrees with itself only to its
// condition number times the rounding).
func (s *search) add(lam complex128, eta, delta float64) {
	if math.Abs(imag(lam)) <= math.Max(1e-12*cmplx.Abs(lam), delta) {
		lam = complex(real(lam), 0)
	}
	for i, p := range s.poles {
		if cmplx.Abs(p-lam) <= math.Max(1e-8*cmplx.Abs(lam), 10*(s.bounds[i]+delta)) {
			return
		}
	}
	s.poles = append(s.poles, lam)
	s.bounds = append(s.bounds, delta)
	if imag(lam) != 0 {
		s.poles = append(s.poles, cmplx.Conj(lam))
		s.bounds = append(s.bounds, delta)
	}
	s.backward = max(s.backward, eta)
}

// errShiftSingular: Y(σ) is singular at a shift.
var errShiftSingular = errors.New("natural frequencies: Y(σ) singular at a shift")

// blockOperator is the pencil of one block with its factorisations.
type blockOperator struct {
	k      int
	g, c   *mna.Sparse
	gn, cn float64 // Frobenius norms
	real   *mna.ShiftSolver
	cplx   *mna.ShiftSolver
	x, y   []complex128
	cx     []float64
}

func newBlockOperator(g, c *mna.Sparse, k int) *blockOperator {
	sys := &mna.System{Unknowns: make([]string, k), G: g, C: c}
	return &blockOperator{k: k, g: g, c: c, gn: frobenius(g), cn: frobenius(c),
		real: mna.NewShiftSolver(sys), cplx: mna.NewShiftSolver(sys),
		x: make([]complex128, k), y: make([]complex128, k), cx: make([]float64, k)}
}

// rateRange returns the smallest and largest column rate Σ|G(·, j)| /
// Σ|C(·, j)| over the columns where C has an entry (rad/s), 0, 0 when C
// is zero.
func (o *blockOperator) rateRange() (lo, hi float64) {
	gs, cs := make([]float64, o.k), make([]float64, o.k)
	o.g.Each(func(_, j int, v float64) { gs[j] += math.Abs(v) })
	o.c.Each(func(_, j int, v float64) { cs[j] += math.Abs(v) })
	lo = math.Inf(1)
	for j := range o.k {
		if cs[j] > 0 && gs[j] > 0 {
			r := gs[j] / cs[j]
			lo, hi = math.Min(lo, r), math.Max(hi, r)
		}
	}
	if hi == 0 {
		return 0, 0
	}
	return lo, hi
}

// mulC sets out = C·x (real).
func (o *blockOperator) mulC(x, out []float64) {
	clear(out)
	o.c.Each(func(i, j int, v float64) { out[i] += v * x[j] })
}

// mulCc sets out = C·x (complex).
func (o *blockOperator) mulCc(x, out []complex128) {
	clear(out)
	o.c.Each(func(i, j int, v float64) { out[i] += complex(v, 0) * x[j] })
}

// apply sets w = (G + σC)⁻¹C·v for the real shift held by o.real.
func (o *blockOperator) apply(v, w []float64) error {
	o.mulC(v, o.cx)
	for i, x := range o.cx {
		o.x[i] = complex(x, 0)
	}
	if err := o.real.Solve(o.x); err != nil {
		return err
	}
	for i, x := range o.x {
		w[i] = real(x) // exactly real: real matrix, real shift, real right-hand side
	}
	return nil
}

// ritzPair is a Ritz value turned into a natural frequency, with its
// Ritz vector.
type ritzPair struct {
	lambda complex128
	vec    []complex128
}

// arnoldi runs searchSteps steps of Arnoldi on (G + σC)⁻¹C from the
// operator applied to start (which removes the directions of infinite
// frequencies), with classical Gram–Schmidt done twice, and returns the
// Ritz values in the right half-plane (at most searchCandidates, rightmost
// first) with their vectors.
func (o *blockOperator) arnoldi(sigma float64, start []float64) ([]ritzPair, error) {
	if err := o.real.Factor(complex(sigma, 0)); err != nil {
		return nil, errShiftSingular
	}
	k := o.k
	m := min(searchSteps, k)
	v := make([][]float64, 0, m+1)
	h := mat.NewDense(m+1, m, nil)
	w := make([]float64, k)
	if err := o.apply(start, w); err != nil {
		return nil, err
	}
	if nrm := floats.Norm(w, 2); nrm > 0 {
		floats.Scale(1/nrm, w)
	} else {
		return nil, nil
	}
	v = append(v, append([]float64(nil), w...))
	steps := m
	for j := 0; j < m; j++ {
		if err := o.apply(v[j], w); err != nil {
			return nil, err
		}
		for pass := 0; pass < 2; pass++ {
			for i := 0; i <= j; i++ {
				d := floats.Dot(v[i], w)
				h.Set(i, j, h.At(i, j)+d)
				floats.AddScaled(w, -d, v[i])
			}
		}
		nrm := floats.Norm(w, 2)
		h.Set(j+1, j, nrm)
		if nrm <= 1e-14*math.Abs(h.At(j, j)) || nrm == 0 {
			steps = j + 1
			break
		}
		floats.Scale(1/nrm, w)
		v = append(v, append([]float64(nil), w...))
	}
	hm := mat.DenseCopyOf(h.Slice(0, steps, 0, steps))
	var eig mat.Eigen
	if !eig.Factorize(hm, mat.EigenRight) {
		return nil, errors.New("natural frequencies: Arnoldi eigenvalue iteration did not converge")
	}
	vals := eig.Values(nil)
	var vecs mat.CDense
	eig.VectorsTo(&vecs)
	var out []ritzPair
	for t, th := range vals {
		if th == 0 {
			continue
		}
		lam := complex(sigma, 0) - 1/th
		if real(lam) <= 0 || cmplx.IsInf(lam) || cmplx.IsNaN(lam) {
			continue
		}
		x := make([]complex128, k)
		for i := 0; i < steps; i++ {
			y := vecs.At(i, t)
			for r := range x {
				x[r] += y * complex(v[i][r], 0)
			}
		}
		out = append(out, ritzPair{lam, x})
	}
	// Rightmost first, at most searchCandidates.
	for a := 1; a < len(out); a++ {
		for b := a; b > 0 && real(out[b].lambda) > real(out[b-1].lambda); b-- {
			out[b], out[b-1] = out[b-1], out[b]
		}
	}
	if len(out) > searchCandidates {
		out = out[:searchCandidates]
	}
	return out, nil
}

// refine polishes (λ, x) by Rayleigh quotient iteration: Y(λ) factored
// at the current λ, two inverse iterations, λ updated from the quotient,
// until λ moves by at most searchConverged·|λ| (at most searchRounds
// factorisations). It returns λ with the backward error η of the pair;
// ok is false when the iteration breaks down or does not settle.
func (o *blockOperator) refine(lam complex128, x []complex128) (complex128, float64, bool) {
	if !normalize(x) {
		return 0, 0, false
	}
	settled := false
	for round := 0; round < searchRounds && !settled; round++ {
		if err := o.cplx.Factor(lam); err != nil {
			settled = true // Y(λ) singular to rounding: λ is as good as it gets
			break
		}
		base, prev := lam, lam
		for it := 0; it < 2; it++ {
			o.mulCc(x, o.y)
			if err := o.cplx.Solve(o.y); err != nil {
				return 0, 0, false
			}
			var th complex128
			for i := range x {
				th += cmplx.Conj(x[i]) * o.y[i]
			}
			if th == 0 {
				return 0, 0, false
			}
			lam = base - 1/th
			copy(x, o.y)
			if !normalize(x) {
				return 0, 0, false
			}
		}
		// Settled when λ stops moving, or when (λ, x) is already an exact
		// eigenpair of a pencil within rounding of G, C (backward error at
		// the level of ε): an ill-conditioned root then wanders by its
		// condition times ε from round to round and would never stop
		// moving, though nothing better is to be had.
		settled = cmplx.Abs(lam-prev) <= searchConverged*cmplx.Abs(lam) ||
			o.backwardError(lam, x) <= searchRounding
	}
	ok := settled && !cmplx.IsNaN(lam) && !cmplx.IsInf(lam)
	return lam, o.backwardError(lam, x), ok
}

// errorBound returns δ (rad/s), the first-order bound on the distance
// from λ to the exact natural frequency it approximates:
//
//	δ = η·(‖G‖_F + |λ|·‖C‖_F)·‖x‖·‖y‖ / |yᵀ·C·x|
//
// with y the left vector (yᵀ(G + λC) = 0, by inverse iteration on the
// transposed factorisation of Y(λ)) and η the backward error of
// (λ, x) (first-order perturbation of a simple eigenvalue of a pencil;
// Higham and Higham, SIAM J. Matrix Anal. Appl. 20 (1998), from memory).
// +Inf when it cannot be computed.
func (o *blockOperator) errorBound(lam complex128, x []complex128, eta float64) float64 {
	y := append([]complex128(nil), x...)
	if !normalize(y) {
		return math.Inf(1)
	}
	// Y(λ) itself is singular to rounding once λ has settled: a shift a
	// little away (the nearest that factors) serves inverse iteration as
	// well while no other natural frequency is as near.
	held := false
	for _, off := range []float64{1e-9, 1e-6, 1e-3} {
		if o.cplx.Factor(lam*complex(1+off, 0)) == nil {
			held = true
			break
		}
	}
	if !held {
		return math.Inf(1)
	}
	for it := 0; it < 3; it++ {
		o.mulCTc(y, o.y)
		if err := o.cplx.SolveTransposed(o.y); err != nil {
			return math.Inf(1)
		}
		copy(y, o.y)
		if !normalize(y) {
			return math.Inf(1)
		}
	}
	o.mulCc(x, o.y)
	var d complex128
	xn := 0.0
	for i := range y {
		d += y[i] * o.y[i]
		xn = math.Hypot(xn, cmplx.Abs(x[i]))
	}
	if d == 0 || xn == 0 {
		return math.Inf(1)
	}
	return eta * (o.gn + cmplx.Abs(lam)*o.cn) * xn / cmplx.Abs(d)
}

// mulCTc sets out = Cᵀ·x (complex).
func (o *blockOperator) mulCTc(x, out []complex128) {
	clear(out)
	o.c.Each(func(i, j int, v float64) { out[j] += complex(v, 0) * x[i] })
}

// backwardError is η of the pair (λ, x) (see the top of this file).
func (o *blockOperator) backwardError(lam complex128, x []complex128) float64 {
	r := o.y
	clear(r)
	o.g.Each(func(i, j int, v float64) { r[i] += complex(v, 0) * x[j] })
	o.c.Each(func(i, j int, v float64) { r[i] += lam * complex(v, 0) * x[j] })
	rn, xn := 0.0, 0.0
	for i := range r {
		rn = math.Hypot(rn, cmplx.Abs(r[i]))
		xn = math.Hypot(xn, cmplx.Abs(x[i]))
	}
	den := (o.gn + cmplx.Abs(lam)*o.cn) * xn
	if den == 0 {
		return math.Inf(1)
	}
	return rn / den
}

// normalize scales x to unit 2-norm; false when x is zero or not finite.
func normalize(x []complex128) bool {
	n := 0.0
	for _, v := range x {
		n = math.Hypot(n, cmplx.Abs(v))
	}
	if n == 0 || math.IsInf(n, 0) || math.IsNaN(n) {
		return false
	}
	for i := range x {
		x[i] /= complex(n, 0)
	}
	return true
}
