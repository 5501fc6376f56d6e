package variation

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sync"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"nodal/analysis/noise"
	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// The direct path of a MetricEvaluator: each varied circuit's values are
// restamped into the nominal system's pattern (mna.Restamper: no rebuild,
// the fill-reducing order and the working memory kept), its stability is
// decided from the eigenvalues of a small matrix, and the metrics come
// from direct solves of H(jω) (mna.Sweeper): gain@F, phase@F and dc at
// their frequency, f3db by a bracketed root search (and the metrics of
// tolerance_direct_metrics.go). No transfer function is extracted. Whatever the direct path cannot vouch for sends that run
// to the extraction path (errUncertain), so the numbers are those of
// Metric.Eval on the extracted transfer function to the last digits
// reported (tested against it in tolerance_direct_test.go).
//
// Stability. With G = Y(0) regular, det(G + sC) = det G·det(I + s·G⁻¹C),
// so the finite natural frequencies are λ = −1/μ for the non-zero
// eigenvalues μ of G⁻¹C, and those are the eigenvalues of its principal
// submatrix on the columns where C has entries (M = W·Pᵀ has the non-zero
// eigenvalues of Pᵀ·W; common practice of linear algebra). A run is
// vouched stable when the non-zero μ are separated from the rounding-level
// ones by a clear gap (directRankGap, directRoundLevel), number as many as
// the nominal circuit's natural frequencies, and every λ has
// Re λ < −directStableMargin·|λ| (the exact test puts the axis at
// 10⁻⁹·|λ|: the margin leaves room for the eigenvalue error of
// near-repeated roots, about ε^(1/k)·|λ| for k coinciding roots; such a
// cluster keeps its mean to rounding, so a true root on or right of the
// axis leaves a computed one there too, and the run is sent on). Anything else (Y(0) singular, a root within the
// margin of the axis or right of it) is decided by stability.Analyze.
//
// f3db. With the reference the DC gain (a low-pass: H(0) finite and
// non-zero, as for the nominal circuit), the zeros come from the same
// factorisation: det [[G + sC, B], [L, 0]] = −det(G + sC)·H(s), so with
// H(0) ≠ 0 the roots of L·adj(Y)·B (the zeros of H, and any natural
// frequency H does not see) are λ = −1/μ for the non-zero eigenvalues of
// the bordered pencil's M_b⁻¹C_b, whose block on the dynamic columns is
// the rank-one update X − x_B·(L·X)/H(0) of the one above (X = G⁻¹C on
// those columns, x_B = G⁻¹B): no further solve. Then exactly
//
//	|H(jω)/H(0)|² = Π_zeros |1 + jω·μ|² / Π_natural |1 + jω·μ|²
//
// (an eigenvalue μ = 0, a root at infinity, gives the factor 1; a rounding
// level one a factor 1 to rounding in the band). The lowest −3 dB
// frequency is the first sign change of g(ω) = ln|H(jω)/H(0)|² + ln 2 on
// this product, scanning upward on a grid built like the extraction
// path's (transfer F3dB: scanGrid): directPerDecade points a decade from
// ρ·min|root| (below it the crossing cannot lie, see scanGrid), plus around
// each complex root r the points |r|·√(1 + 2kζ), k = −6 … 6, for ζ and
// ζ/4, which resolve a resonance however sharp. The bracket is closed on
// the product by Newton steps kept inside it (closeBracket); the root is
// then checked and polished on H itself: at most directPolish Newton steps
// on g from direct solves (Sweeper.Eval, with dH/ds), which must start
// within directAgree of the level and end with a step below 4·10⁻¹⁵ in
// ln ω. The product agrees with the extraction path's factored form: both
// are H's roots, found by different eigenvalue problems.

// Tolerances of the direct path (dimensionless).
const (
	// directRankGap: an eigenvalue μ of G⁻¹C counts as non-zero above
	// directRankGap·max|μ| and as zero (rounding) below
	// directRoundLevel·max|μ|; one between the two sends the run to the
	// exact path (so do natural frequencies more than 10⁷ apart).
	directRankGap    = 1e-7
	directRoundLevel = 1e-11
	// directStableMargin: a natural frequency with Re λ ≥
	// −directStableMargin·|λ| (Q above about 5000) is left to the exact
	// stability test.
	directStableMargin = 1e-4
	// directPerDecade is the regular spacing of the f3db scan, per decade
	// of ω.
	directPerDecade = 20
	// directAgree: the product's crossing must lie within this of the
	// level in g = ln|H|² − ln(|H(0)|²/2) computed by a direct solve.
	directAgree = 1e-7
	// directPolish is the most Newton steps on the direct g.
	directPolish = 4
)

// errUncertain means the direct path cannot vouch for a run's figure; the
// run is evaluated on the extracted transfer function instead.
var errUncertain = errors.New("direct path: not certain")

// directPath is what every run of the direct path shares (read-only after
// newDirectPath): the restamper of the nominal circuit, cloned per
// goroutine, and what the nominal circuit fixes.
type directPath struct {
	template      *mna.Restamper
	pool          sync.Pool // of *directWorker
	natural       int       // the nominal circuit's number of finite natural frequencies
	dynCols       []int     // the columns of C with an entry
	f3db          bool      // the f3db metric is computed directly
	directMetrics           // the other metrics beyond the spot ones (tolerance_direct_metrics.go)
}

// newDirectPath returns the direct path for e's metrics on the nominal
// circuit, or nil when some metric needs the extraction path (poles, the
// circuit, noise), the probe cannot be restamped, or the nominal circuit
// is not a stable one with a regular Y(0).
func newDirectPath(e *MetricEvaluator, nominal *netlist.Circuit) *directPath {
	d := &directPath{}
	for _, m := range e.metrics {
		switch {
		case m.Spec.Spot:
		case m.Spec.Name == "f3db":
			d.f3db = true
		case !d.take(m.Spec, e, nominal):
			return nil
		}
	}
	r, err := mna.NewRestamper(nominal, e.in, e.out)
	if err != nil {
		return nil
	}
	st, err := stability.Analyze(nominal, stability.Options{})
	if err != nil || st.Class != stability.Stable || !st.AllNatural {
		return nil // it counts the natural frequencies and solves them densely
	}
	d.template, d.natural = r, len(st.Natural)
	n := r.Matrices().Size()
	has := make([]bool, n)
	r.Matrices().C.Each(func(_, j int, _ float64) { has[j] = true })
	for j, ok := range has {
		if ok {
			d.dynCols = append(d.dynCols, j)
		}
	}
	if !d.nominalApplies(nominal, e) {
		return nil
	}
	d.pool.New = func() any { return newDirectWorker(d) }
	// The nominal circuit itself must pass: otherwise nothing is gained.
	if _, err := d.eval(e, nominal); err != nil {
		return nil
	}
	return d
}

// nominalApplies reports whether the nominal transfer function is one the
// direct metrics know: for f3db (and peaking) the DC gain as the
// reference, for the pole metrics no mode cancelled out of H (see
// directMetrics.nominalFits).
func (d *directPath) nominalApplies(nominal *netlist.Circuit, e *MetricEvaluator) bool {
	if !d.f3db && !d.needsTF() {
		return true
	}
	sys, err := mna.Build(nominal, e.in, e.out)
	if err != nil {
		return false
	}
	tf, err := transfer.Extract(sys)
	if err != nil {
		return false
	}
	if d.f3db && !lowPassRef(tf) {
		return false
	}
	return d.nominalFits(tf, d.natural)
}

// lowPassRef reports whether tf's −3 dB and passband reference is its DC
// gain, finite and non-zero (the direct searches know no other).
func lowPassRef(tf *transfer.TransferFunction) bool {
	dc := tf.DCGain()
	return dc.Power == 0 && dc.Gain != 0 && !math.IsInf(dc.Gain, 0)
}

// directWorker is one goroutine's working memory of the direct path.
type directWorker struct {
	d  *directPath
	r  *mna.Restamper
	sw *mna.Sweeper
	sv *mna.Solver
	b  []float64
	x  []complex128
	xB []float64 // G⁻¹B
	lx []float64 // L·G⁻¹C on each dynamic column
	m  *mat.Dense
	z  *mat.Dense
	// eigWork is Dgeev's working memory: a copy of the matrix, the real
	// and imaginary parts of the eigenvalues, the workspace.
	eigA, eigWR, eigWI, eigWork []float64
	// muN and muZ are the eigenvalues μ of the natural frequencies and of
	// the roots of L·adj(Y)·B (λ = −1/μ; 0 for a root at infinity).
	muN, muZ []complex128
	roots    []complex128 // the finite natural frequencies, rad/s
	grid     []float64
	h0       float64 // H(0)
	// zerosState is 0 until zeros are computed for the loaded circuit,
	// then 1 when muZ holds them, −1 when they could not be.
	zerosState int8
	directRun                        // the loaded circuit's other figures (tolerance_direct_metrics.go)
	sub        netlist.MetricSubject // what the metrics are evaluated on (subject)
	na         *noise.Analyzer       // the noise of the restamped matrices, for the noise metrics
}

func newDirectWorker(d *directPath) *directWorker {
	r := d.template.Clone()
	n, k := r.Matrices().Size(), len(d.dynCols)
	w := &directWorker{d: d, r: r, sw: mna.NewSweeper(r.System()), sv: mna.NewSolver(r.Matrices()),
		b: make([]float64, n), x: make([]complex128, n), xB: make([]float64, n), lx: make([]float64, k)}
	if k > 0 {
		w.m, w.z = mat.NewDense(k, k, nil), mat.NewDense(k, k, nil)
		w.muN, w.muZ = make([]complex128, k), make([]complex128, k)
	}
	w.sub = w.subject()
	return w
}

// load restamps c, solves at s = 0 and vouches for its stability
// (errUncertain when it cannot), leaving H(0) in h0, the natural
// frequencies in roots and muN.
func (w *directWorker) load(c *netlist.Circuit) error {
	w.zerosState, w.directRun = 0, directRun{}
	if err := w.r.Restamp(c); err != nil {
		return errUncertain // the exact path rebuilds it and names what is wrong
	}
	if err := w.sv.Factor(0); err != nil {
		return errUncertain
	}
	sys := w.r.System()
	if err := w.sv.Solve(sys.B, w.x); err != nil {
		return errUncertain
	}
	for i, v := range w.x {
		w.xB[i] = real(v) // Y(0) = G is real
	}
	w.h0 = real(dotReal(sys.L, w.x))
	if !w.stable() {
		return errUncertain
	}
	return w.revalue(c)
}

// stable computes the natural frequencies from the eigenvalues of G⁻¹C on
// the dynamic columns (Y(0) factored in sv) and reports whether they are
// vouched for and all clearly in the left half-plane.
func (w *directWorker) stable() bool {
	d := w.d
	k := len(d.dynCols)
	w.roots = w.roots[:0]
	if k == 0 {
		return d.natural == 0
	}
	cm := w.r.Matrices().C
	sys := w.r.System()
	for c, j := range d.dynCols {
		for i := range w.b {
			w.b[i] = cm.At(i, j)
		}
		if err := w.sv.Solve(w.b, w.x); err != nil {
			return false
		}
		for r, i := range d.dynCols {
			w.m.Set(r, c, real(w.x[i]))
		}
		w.lx[c] = real(dotReal(sys.L, w.x))
	}
	if !w.eigenvalues(w.m, w.muN) {
		return false
	}
	big := 0.0
	for _, m := range w.muN {
		big = math.Max(big, cmplx.Abs(m))
	}
	if big == 0 || math.IsNaN(big) || math.IsInf(big, 0) {
		return false
	}
	for _, m := range w.muN {
		a := cmplx.Abs(m)
		switch {
		case a > directRankGap*big:
			w.roots = append(w.roots, -1/m)
		case a > directRoundLevel*big:
			return false
		}
	}
	if len(w.roots) != d.natural {
		return false
	}
	for _, l := range w.roots {
		if !(real(l) < -directStableMargin*cmplx.Abs(l)) {
			return false
		}
	}
	return true
}

// eigenvalues writes the eigenvalues of a (k×k) into dst (len k), by
// LAPACK's Dgeev (gonum's, no eigenvectors) in the worker's memory.
func (w *directWorker) eigenvalues(a *mat.Dense, dst []complex128) bool {
	k, _ := a.Dims()
	if len(w.eigA) != k*k {
		w.eigA, w.eigWR, w.eigWI = make([]float64, k*k), make([]float64, k), make([]float64, k)
		var q [1]float64
		lapack64.Geev(lapack.LeftEVNone, lapack.RightEVNone, blas64.General{Rows: k, Cols: k, Stride: k, Data: w.eigA},
			w.eigWR, w.eigWI, blas64.General{Stride: 1}, blas64.General{Stride: 1}, q[:], -1)
		w.eigWork = make([]float64, int(q[0]))
	}
	raw := a.RawMatrix()
	for i := 0; i < k; i++ {
		copy(w.eigA[i*k:i*k+k], raw.Data[i*raw.Stride:i*raw.Stride+k])
	}
	first := lapack64.Geev(lapack.LeftEVNone, lapack.RightEVNone, blas64.General{Rows: k, Cols: k, Stride: k, Data: w.eigA},
		w.eigWR, w.eigWI, blas64.General{Stride: 1}, blas64.General{Stride: 1}, w.eigWork, len(w.eigWork))
	if first != 0 {
		return false // the QR iteration did not converge
	}
	for i := range dst {
		dst[i] = complex(w.eigWR[i], w.eigWI[i])
		if cmplx.IsNaN(dst[i]) || cmplx.IsInf(dst[i]) {
			return false
		}
	}
	return true
}

// zeros computes muZ, the eigenvalues of the bordered pencil's M_b⁻¹C_b on
// the dynamic columns: X − x_B·(L·X)/H(0) (see the file comment), once
// per loaded circuit.
func (w *directWorker) zeros() bool {
	if w.zerosState == 0 {
		w.zerosState = -1
		if w.computeZeros() {
			w.zerosState = 1
		}
	}
	return w.zerosState == 1
}

func (w *directWorker) computeZeros() bool {
	if w.h0 == 0 || len(w.d.dynCols) == 0 {
		return false
	}
	for r, i := range w.d.dynCols {
		for c := range w.d.dynCols {
			w.z.Set(r, c, w.m.At(r, c)-w.xB[i]*w.lx[c]/w.h0)
		}
	}
	return w.eigenvalues(w.z, w.muZ)
}

// eval returns the metrics of c by the direct path, or errUncertain.
func (d *directPath) eval(e *MetricEvaluator, c *netlist.Circuit) ([]float64, error) {
	w := d.pool.Get().(*directWorker)
	defer d.pool.Put(w)
	if err := w.load(c); err != nil {
		return nil, err
	}
	out := make([]float64, len(e.metrics))
	for i, m := range e.metrics {
		v, err := m.Spec.Eval(w.sub, m.Param)
		if err != nil {
			if errors.Is(err, errUncertain) || !m.Spec.Spot {
				return nil, errUncertain // the exact path says what is wrong
			}
			return nil, fmt.Errorf("%s: %w", m.Name, err)
		}
		if m.Spec.Turns {
			v = e.nearBranch(i, v)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errUncertain // let the exact path explain it
		}
		out[i] = v
	}
	return out, nil
}

// directSubject answers the spot quantities by direct solves, F3dBHz by
// the direct search of the loaded circuit, and the quantities of
// tolerance_direct_metrics.go.
type directSubject struct {
	spotSubject
	w *directWorker
}

func (s directSubject) F3dBHz() (float64, error) { return s.w.f3dbHz() }

// f3dbHz returns the lowest frequency (Hz) where |H| = |H(0)|/√2 for the
// loaded circuit, or errUncertain.
func (w *directWorker) f3dbHz() (float64, error) {
	if !w.d.f3db || w.h0 == 0 || math.IsInf(w.h0, 0) || len(w.d.dynCols) == 0 || !w.zeros() {
		return 0, errUncertain
	}
	prevU, prevG := math.Inf(-1), math.Ln2
	var u float64
	found := false
	feat, lo, hi := w.scanGrid()
	step := math.Ln10 / directPerDecade
	// Visit the regular points lo + i·step and the resonance points feat
	// (ascending) in one ascending sequence, up to hi.
	for i, f := 0, 0; ; {
		x := lo + float64(i)*step
		if f < len(feat) && feat[f] < x {
			x = feat[f]
			f++
		} else {
			i++
		}
		if x > hi+step/2 {
			break
		}
		if x <= prevU {
			continue
		}
		gx, _ := w.product(x)
		if gx <= 0 {
			if math.IsInf(prevU, -1) {
				return 0, errUncertain
			}
			u, found = x, true
			if gx < 0 {
				u = closeBracket(w.product, prevU, x, prevG, gx)
			}
			break
		}
		prevU, prevG = x, gx
	}
	if !found {
		return 0, errUncertain // no crossing: the exact path says why
	}
	return w.polish(u)
}

// product returns g(u) = ln|H(jω)/H(0)|² + ln 2 and dg/du on the factored
// form (ω = e^u rad/s).
func (w *directWorker) product(u float64) (g, dg float64) {
	om := math.Exp(u)
	g = math.Ln2
	// The factors are multiplied (one logarithm per point), the product
	// folded into g before it could leave the range of a float64.
	prod := 1.0
	add := func(mu []complex128, num bool) {
		for _, m := range mu {
			if m == 0 {
				continue // a root at infinity: the factor is 1
			}
			// |1 + jωμ|² = (1 − ω·Im μ)² + (ω·Re μ)²
			a, b := 1-om*imag(m), om*real(m)
			v := a*a + b*b
			d := 2 * (-a*om*imag(m) + b*om*real(m)) / v
			if num {
				prod *= v
				dg += d
			} else {
				prod /= v
				dg -= d
			}
			if prod > 1e100 || prod < 1e-100 {
				g += math.Log(prod)
				prod = 1
			}
		}
	}
	add(w.muZ, true)
	add(w.muN, false)
	return g + math.Log(prod), dg
}

// polish checks the crossing u (ln ω) on H itself and refines it by Newton
// steps on g from direct solves; errUncertain when the direct g does not
// agree with the product or the steps do not settle.
func (w *directWorker) polish(u float64) (float64, error) {
	target := math.Log(w.h0 * w.h0 / 2)
	for it := 0; it < directPolish; it++ {
		om := math.Exp(u)
		h, dh, err := w.sw.Eval(complex(0, om))
		if err != nil || h == 0 {
			return 0, errUncertain
		}
		g := logMag2(h) - target
		// d/du ln|H(jω)|² = 2·Re(j·ω·H′(jω)/H(jω)), ω = e^u.
		dg := 2 * real(complex(0, om)*dh/h)
		if it == 0 && !(math.Abs(g) <= directAgree) {
			return 0, errUncertain
		}
		step := g / dg
		if !(math.Abs(step) <= 1e-6) {
			return 0, errUncertain
		}
		u -= step
		if math.Abs(step) <= 4e-15*math.Max(1, math.Abs(u)) {
			return math.Exp(u) / (2 * math.Pi), nil
		}
	}
	return 0, errUncertain
}

// logMag2 returns ln|h|².
func logMag2(h complex128) float64 { return math.Log(real(h)*real(h) + imag(h)*imag(h)) }

// dotReal returns Σ l_i·x_i.
func dotReal(l []float64, x []complex128) complex128 {
	var h complex128
	for i, li := range l {
		if li != 0 {
			h += complex(li, 0) * x[i]
		}
	}
	return h
}

// closeBracket returns the root of g in [a, b], g(a) = ga > 0 > g(b) =
// gb, by Newton steps kept inside the bracket: a step that would leave it,
// or follows one that did not halve |g|, is a bisection. It stops when a
// step or the bracket is below 4·10⁻¹⁵·max(1, |u|).
func closeBracket(g func(u float64) (float64, float64), a, b, ga, gb float64) float64 {
	tol := func(u float64) float64 { return 4e-15 * math.Max(1, math.Abs(u)) }
	// Start from the secant point of the bracket.
	x := b - gb*(b-a)/(gb-ga)
	if !(x > a && x < b) {
		x = 0.5 * (a + b)
	}
	prev := math.Inf(1)
	for it := 0; it < 200; it++ {
		gx, dx := g(x)
		if gx == 0 {
			return x
		}
		if gx > 0 {
			a = x
		} else {
			b = x
		}
		if b-a <= tol(a) {
			return x
		}
		next := x - gx/dx
		if !(next > a && next < b) || math.Abs(gx) > 0.5*prev {
			next = 0.5 * (a + b)
		}
		if math.Abs(next-x) <= tol(x) {
			return next
		}
		x, prev = next, math.Abs(gx)
	}
	return x
}

// scanGrid returns what the f3db scan visits, in u = ln ω (rad/s): the
// regular points directPerDecade a decade from lo = ln(ρ·min|r|) to hi,
// two decades above the largest root (of those above the rounding level,
// directRankGap·max|μ|), and the resonance points of every complex root r,
// natural frequency or zero (see the file comment), ascending, within
// [lo, hi]. Below ρ·min|r| the crossing cannot lie: with
// x = ω/|r| ≤ ρ, each real root's factor |1 + jω/r|² of |H(jω)/H(0)|² is
// in [1, 1 + x²] and each pair's ((1 − x²)² + 4ζ²x²) in [(1 − x²)², (1 + x²)²],
// so with N roots ln|H(jω)/H(0)|² stays within N·x²/(1 − x²) of 0; ρ makes
// that ln 2/2, half the way to the −3 dB level.
func (w *directWorker) scanGrid() (resonance []float64, lo, hi float64) {
	grid, lo, hi, nroots := w.rootSpan(w.grid[:0])
	if nroots == 0 {
		return nil, 0, -1
	}
	half := math.Ln2 / 2
	rho := math.Sqrt(half / (float64(nroots) + half))
	lo, hi = lo+math.Log(rho), hi+2*math.Ln10
	kept := grid[:0]
	for _, u := range grid {
		if u >= lo && u <= hi {
			kept = append(kept, u)
		}
	}
	slices.Sort(kept)
	w.grid = kept
	return kept, lo, hi
}

// rootSpan appends to grid the resonance points of every complex root of
// the loaded circuit, natural frequency or zero (u = ln ω, see scanGrid),
// unsorted, and returns it with lo = ln of the smallest |root|, hi = ln of
// the largest of those above the rounding level (directRankGap·max|μ|)
// and the number of roots (μ ≠ 0).
func (w *directWorker) rootSpan(grid []float64) (_ []float64, lo, hi float64, nroots int) {
	lo, hi = math.Inf(1), math.Inf(-1)
	big := 0.0
	for _, mu := range [...][]complex128{w.muN, w.muZ} {
		for _, m := range mu {
			big = math.Max(big, cmplx.Abs(m))
		}
	}
	for _, mu := range [...][]complex128{w.muN, w.muZ} {
		for _, m := range mu {
			if m == 0 {
				continue
			}
			nroots++
			r := -1 / m
			a := cmplx.Abs(r)
			x0 := math.Log(a)
			lo = math.Min(lo, x0)
			if cmplx.Abs(m) > directRankGap*big {
				hi = math.Max(hi, x0)
			}
			if imag(r) <= 0 {
				continue
			}
			zeta := math.Abs(real(r)) / a
			for k := -6; k <= 6; k++ {
				for _, z := range [...]float64{zeta, zeta * 0.25} {
					if v := 1 + float64(k)*2*z; v > 0 {
						grid = append(grid, x0+0.5*math.Log(v))
					}
				}
			}
		}
	}
	return grid, lo, hi, nroots
}
