package timeresp

import (
	"errors"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"nodal/analysis/transfer"
)

// errNonFiniteExpm refuses a non-finite matrix before the exponential.
var errNonFiniteExpm = errors.New("non-finite matrix entry before the matrix exponential")

// This file computes step and impulse samples without partial fractions:
// from a state-space realization of the factored H(s) as a cascade of
// first- and second-order sections with real coefficients (each scaled by
// its own natural frequency, so no state is far from O(1)), and the
// matrix exponential by scaling and squaring with the [13/13] Padé
// approximant (Higham, "The scaling and squaring method for the matrix
// exponential revisited", SIAM J. Matrix Anal. Appl. 26 (2005)). The
// cascade is a minimal realization of the transfer function the circuit's
// descriptor pencil (G, C) reduces to once its infinite eigenvalues are
// deflated (poles_zeros.go), and unlike the partial-fraction expansion it
// stays well conditioned for repeated or clustered poles (a Jordan chain
// becomes a bidiagonal block).

// cascade is x′ = A·x + B·u, y = Cy·x + D·u.
type cascade struct {
	a  *mat.Dense
	b  []float64
	cy []float64
	d  float64
}

// section is one factor g·Z(s)/P(s) of the cascade: P monic of degree 1
// or 2, Z monic of degree ≤ deg P (ascending coefficients).
type section struct {
	p, z []float64
}

// errNoRealization says the factored form cannot be realized (more zeros
// than poles, or a non-finite root).
var errNoRealization = errors.New("no state-space realization")

// newCascade realizes H = k·Π(s − zᵢ)/Π(s − pⱼ) (k, roots as in
// transfer.TransferFunction with scale w).
func newCascade(h *transfer.TransferFunction) (*cascade, error) {
	if len(h.Zeros) > len(h.Poles) {
		return nil, errNoRealization
	}
	for _, l := range [][]complex128{h.Poles, h.Zeros} {
		for _, r := range l {
			if cmplx.IsNaN(r) || cmplx.IsInf(r) {
				return nil, errNoRealization
			}
		}
	}
	k, w := h.Scaled()
	pf := realFactors(h.Poles)
	zf := realFactors(h.Zeros)
	// Sections: complex pole pairs, then real poles; merge two real poles
	// when a quadratic zero factor needs a second-order section.
	quadP, linP := splitByDegree(pf)
	quadZ, linZ := splitByDegree(zf)
	for len(quadZ) > len(quadP) && len(linP) >= 2 {
		quadP = append(quadP, transfer.PolyMul(linP[0], linP[1]))
		linP = linP[2:]
	}
	var secs []section
	for _, p := range quadP {
		s := section{p: p, z: []float64{1}}
		if len(quadZ) > 0 {
			s.z, quadZ = quadZ[0], quadZ[1:]
		}
		secs = append(secs, s)
	}
	zOf, linZ := pairNearest(linP, linZ)
	for i, p := range linP {
		s := section{p: p, z: []float64{1}}
		if zOf[i] != nil {
			s.z = zOf[i]
		}
		secs = append(secs, s)
	}
	// Remaining real zeros go into second-order sections with room.
	for i := range secs {
		for len(linZ) > 0 && len(secs[i].z) < len(secs[i].p) {
			secs[i].z, linZ = transfer.PolyMul(secs[i].z, linZ[0]), linZ[1:]
		}
	}
	if len(linZ) > 0 || len(quadZ) > 0 {
		return nil, errNoRealization
	}
	n := len(h.Poles)
	c := &cascade{a: mat.NewDense(max(n, 1), max(n, 1), nil), b: make([]float64, max(n, 1))}
	// u_i = uRow·x + uD·u, the input of the current section.
	uRow := make([]float64, max(n, 1))
	uD := 1.0
	// rest = K/Πgᵢ with K = k·w^(n−m) the gain in rad/s units (kept with
	// a binary exponent: K alone may not fit a float64).
	rest := transfer.NewWideProduct(complex(k, 0))
	for range h.Poles {
		rest.Mul(complex(w, 0))
	}
	for range h.Zeros {
		rest.Div(complex(w, 0))
	}
	at := 0
	for _, s := range secs {
		deg := len(s.p) - 1
		w0 := sectionFreq(s.p)
		// Section gain g: unity at DC when P(0), Z(0) ≠ 0, else scaled by
		// w0 to the power of the degree difference.
		g := math.Pow(w0, float64(deg-(len(s.z)-1)))
		if s.p[0] != 0 && s.z[0] != 0 {
			g = math.Abs(s.p[0] / s.z[0])
		}
		rest.Div(complex(g, 0))
		num := make([]float64, deg+1)
		for i, v := range s.z {
			num[i] = g * v
		}
		// H_i = n_deg + (Σ r_j s^j)/P, r = num − n_deg·P.
		nd := num[deg]
		r := make([]float64, deg)
		for j := 0; j < deg; j++ {
			r[j] = num[j] - nd*s.p[j]
		}
		newRow := make([]float64, len(uRow))
		switch deg {
		case 1:
			// x′ = −p0·x + w0·u, y = (r0/w0)·x + nd·u.
			c.a.Set(at, at, c.a.At(at, at)-s.p[0])
			addRow(c.a, at, uRow, w0)
			c.b[at] += w0 * uD
			newRow[at] = r[0] / w0
		case 2:
			// ξ1′ = w0·ξ2, ξ2′ = −(p0/w0)·ξ1 − p1·ξ2 + w0·u,
			// y = (r0/w0²)·ξ1 + (r1/w0)·ξ2 + nd·u.
			c.a.Set(at, at+1, w0)
			c.a.Set(at+1, at, -s.p[0]/w0)
			c.a.Set(at+1, at+1, -s.p[1])
			addRow(c.a, at+1, uRow, w0)
			c.b[at+1] += w0 * uD
			newRow[at] = r[0] / (w0 * w0)
			newRow[at+1] = r[1] / w0
		}
		for j, v := range uRow {
			newRow[j] += nd * v
		}
		uRow, uD = newRow, nd*uD
		at += deg
	}
	kr := real(rest.Value())
	c.cy = make([]float64, len(uRow))
	for j, v := range uRow {
		c.cy[j] = kr * v
	}
	c.d = kr * uD
	if n == 0 {
		c.a = nil
	}
	return c, nil
}

// pairNearest gives real poles their real zeros, nearest first (by the
// ratio of the root magnitudes; a zero at s = 0 is nearest to none), so
// that a pole and a zero that almost cancel share a section whose gain
// stays near 1 (common practice in cascade design). Apart, the zero's
// section gains 10⁵ or more (the zero 6.30107e6 rad/s beside the pole
// 6.30112e6 of a capacitor current behind a finite-gain follower), the
// augmented matrix's norm grows with it, and the exponential by scaling
// and squaring loses 5e-5 of the response. It returns the zero of each
// pole (nil for none) and the zeros left over, in their order.
func pairNearest(poles, zeros [][]float64) (zOf [][]float64, rest [][]float64) {
	type cand struct {
		i, j int
		d    float64
	}
	var cs []cand
	for i, p := range poles {
		for j, z := range zeros {
			d := math.Inf(1)
			if a, b := math.Abs(p[0]), math.Abs(z[0]); a > 0 && b > 0 {
				d = math.Abs(math.Log(a / b))
			}
			cs = append(cs, cand{i, j, d})
		}
	}
	sort.SliceStable(cs, func(a, b int) bool { return cs[a].d < cs[b].d })
	zOf = make([][]float64, len(poles))
	used := make([]bool, len(zeros))
	for _, c := range cs {
		if zOf[c.i] == nil && !used[c.j] && !math.IsInf(c.d, 1) {
			zOf[c.i], used[c.j] = zeros[c.j], true
		}
	}
	for j, z := range zeros {
		if !used[j] {
			rest = append(rest, z)
		}
	}
	return zOf, rest
}

// splitByDegree separates quadratic factors from linear ones.
func splitByDegree(fs [][]float64) (quad, lin [][]float64) {
	for _, f := range fs {
		if len(f) == 3 {
			quad = append(quad, f)
		} else {
			lin = append(lin, f)
		}
	}
	return quad, lin
}

// addRow adds f·row to row i of a.
func addRow(a *mat.Dense, i int, row []float64, f float64) {
	for j, v := range row {
		if v != 0 {
			a.Set(i, j, a.At(i, j)+f*v)
		}
	}
}

// sectionFreq is the natural frequency of a monic P: √|p0| for degree 2,
// |p0| for degree 1, or, for a root at 0, the other coefficient's size;
// 1 if all vanish.
func sectionFreq(p []float64) float64 {
	w := 0.0
	if len(p) == 3 {
		w = math.Sqrt(math.Abs(p[0]))
		if w == 0 {
			w = math.Abs(p[1])
		}
	} else {
		w = math.Abs(p[0])
	}
	if w == 0 {
		w = 1
	}
	return w
}

// realFactors returns the monic real factors of Π(s − r): [−r, 1] per
// real root, [|r|², −2Re r, 1] per conjugate pair (upper member listed).
func realFactors(roots []complex128) [][]float64 {
	var out [][]float64
	for _, r := range roots {
		switch {
		case imag(r) == 0:
			out = append(out, []float64{-real(r), 1})
		case imag(r) > 0:
			out = append(out, []float64{real(r)*real(r) + imag(r)*imag(r), -2 * real(r), 1})
		}
	}
	return out
}

// stepMatrix returns e^(M·h) for the augmented M = [[A, B], [0, 0]]:
// one step h of the state and of the input's integral.
func (c *cascade) stepMatrix(h float64) (*mat.Dense, error) {
	n, _ := c.a.Dims()
	m := mat.NewDense(n+1, n+1, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			m.Set(i, j, c.a.At(i, j)*h)
		}
		m.Set(i, n, c.b[i]*h)
	}
	return expm(m)
}

// samples returns y at t = 0, h, 2h, … ((count) values) for a unit step
// (step) or impulse (the Dirac part excluded) by one matrix exponential of
// the augmented matrix [[A, B], [0, 0]]·h and repeated products.
func (c *cascade) samples(step bool, h float64, count int) ([]float64, error) {
	ys := make([]float64, count)
	if c.a == nil {
		for i := range ys {
			if step {
				ys[i] = c.d
			}
		}
		return ys, nil
	}
	n, _ := c.a.Dims()
	phi, err := c.stepMatrix(h)
	if err != nil {
		return nil, err
	}
	z := mat.NewVecDense(n+1, nil)
	if step {
		z.SetVec(n, 1)
	} else {
		for i := 0; i < n; i++ {
			z.SetVec(i, c.b[i])
		}
	}
	var next mat.VecDense
	for k := 0; k < count; k++ {
		y := 0.0
		for i := 0; i < n; i++ {
			y += c.cy[i] * z.AtVec(i)
		}
		if step {
			y += c.d
		}
		ys[k] = y
		next.MulVec(phi, z)
		z.CopyVec(&next)
	}
	return ys, nil
}

// padeCoef13 are the coefficients of the [13/13] Padé approximant of eˣ
// (Higham 2005, Table 10.4 of "Functions of Matrices", 2008).
var padeCoef13 = [...]float64{64764752532480000, 32382376266240000, 7771770303897600,
	1187353796428800, 129060195264000, 10559470521600, 670442572800,
	33522128640, 1323241920, 40840800, 960960, 16380, 182, 1}

// theta13 is the largest 1-norm for which the [13/13] approximant is
// accurate to unit roundoff without scaling (Higham 2005).
const theta13 = 5.371920351148152

// expm returns e^A by scaling and squaring with the [13/13] Padé
// approximant; it refuses non-finite input.
func expm(a *mat.Dense) (*mat.Dense, error) {
	n, _ := a.Dims()
	raw := a.RawMatrix()
	for i := 0; i < n; i++ {
		for _, v := range raw.Data[i*raw.Stride : i*raw.Stride+n] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, errNonFiniteExpm
			}
		}
	}
	sq := 0
	if nrm := mat.Norm(a, 1); nrm > theta13 {
		sq = int(math.Ceil(math.Log2(nrm / theta13)))
	}
	as := mat.NewDense(n, n, nil)
	as.Scale(math.Ldexp(1, -sq), a)
	id := mat.NewDiagDense(n, nil)
	for i := 0; i < n; i++ {
		id.SetDiag(i, 1)
	}
	var a2, a4, a6 mat.Dense
	a2.Mul(as, as)
	a4.Mul(&a2, &a2)
	a6.Mul(&a4, &a2)
	b := padeCoef13
	lin := func(c6, c4, c2, c0 float64) *mat.Dense {
		out := mat.NewDense(n, n, nil)
		var t mat.Dense
		t.Scale(c6, &a6)
		out.Add(out, &t)
		t.Scale(c4, &a4)
		out.Add(out, &t)
		t.Scale(c2, &a2)
		out.Add(out, &t)
		if c0 != 0 {
			t.Scale(c0, id)
			out.Add(out, &t)
		}
		return out
	}
	var u, v, t mat.Dense
	t.Mul(&a6, lin(b[13], b[11], b[9], 0))
	t.Add(&t, lin(b[7], b[5], b[3], b[1]))
	u.Mul(as, &t)
	v.Mul(&a6, lin(b[12], b[10], b[8], 0))
	v.Add(&v, lin(b[6], b[4], b[2], b[0]))
	var p, q mat.Dense
	p.Add(&v, &u)
	q.Sub(&v, &u)
	var r mat.Dense
	if err := r.Solve(&q, &p); err != nil {
		return nil, err
	}
	for i := 0; i < sq; i++ {
		var r2 mat.Dense
		r2.Mul(&r, &r)
		r.Copy(&r2)
	}
	return &r, nil
}

// stepTrajectory returns y and y′ of the unit-step response at t = k·h,
// k = 0 … count−1 (y′ = Cy·(A·x + B) + 0: the direct term is constant).
func (c *cascade) stepTrajectory(h float64, count int) (ys, dys []float64, err error) {
	ys, dys = make([]float64, count), make([]float64, count)
	if c.a == nil {
		for i := range ys {
			ys[i] = c.d
		}
		return ys, dys, nil
	}
	n, _ := c.a.Dims()
	phi, err := c.stepMatrix(h)
	if err != nil {
		return nil, nil, err
	}
	z := mat.NewVecDense(n+1, nil)
	z.SetVec(n, 1)
	var next mat.VecDense
	ax := make([]float64, n)
	for k := 0; k < count; k++ {
		y, dy := c.d, 0.0
		for i := 0; i < n; i++ {
			y += c.cy[i] * z.AtVec(i)
			ax[i] = c.b[i]
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				if v := c.a.At(i, j); v != 0 {
					ax[i] += v * z.AtVec(j)
				}
			}
			dy += c.cy[i] * ax[i]
		}
		ys[k], dys[k] = y, dy
		next.MulVec(phi, z)
		z.CopyVec(&next)
	}
	return ys, dys, nil
}

// hermite is the cubic Hermite interpolant of y on [t0, t0+h] from the
// values and slopes at both ends (error O(h⁴·y⁗)).
type hermite struct {
	t0, h, y0, y1, d0, d1 float64
}

func (p hermite) at(t float64) float64 {
	u := (t - p.t0) / p.h
	h00 := (1 + 2*u) * (1 - u) * (1 - u)
	h10 := u * (1 - u) * (1 - u)
	h01 := u * u * (3 - 2*u)
	h11 := u * u * (u - 1)
	return h00*p.y0 + h10*p.h*p.d0 + h01*p.y1 + h11*p.h*p.d1
}

// bisectCubic finds t in [a, b] with g(t) = 0 given a sign change.
func bisectCubic(g func(float64) float64, a, b float64) float64 {
	ga := g(a)
	for it := 0; it < 100 && b-a > 1e-15*math.Abs(b); it++ {
		m := 0.5 * (a + b)
		gm := g(m)
		if (gm > 0) == (ga > 0) {
			a, ga = m, gm
		} else {
			b = m
		}
	}
	return 0.5 * (a + b)
}

// expmStepMetrics computes the step figures of Metrics from the matrix
// exponential: the trajectory on a grid of expmMetricSteps over
// [0, 2·span] with exact values and slopes, each crossing and extremum
// refined on the cubic Hermite interpolant between grid points (accurate
// to ~(h/τ)⁴, below 1e-10 relative here), as Metrics defines them. It
// needs a non-zero final value.
func expmStepMetrics(c *cascade, final, span float64) (Metrics, bool) {
	if final == 0 || math.IsInf(final, 0) || math.IsNaN(final) {
		return Metrics{}, false
	}
	T := 2 * span
	n := expmMetricSteps
	h := T / float64(n)
	ys, dys, err := c.stepTrajectory(h, n+1)
	if err != nil {
		return Metrics{}, false
	}
	seg := func(k int) hermite {
		return hermite{t0: float64(k) * h, h: h, y0: ys[k], y1: ys[k+1], d0: dys[k], d1: dys[k+1]}
	}
	first := func(level float64) (float64, bool) {
		g := func(v float64) float64 { return v/final - level }
		if g(ys[0]) >= 0 {
			return 0, true
		}
		for k := 0; k < n; k++ {
			if g(ys[k+1]) >= 0 {
				p := seg(k)
				return bisectCubic(func(t float64) float64 { return g(p.at(t)) }, p.t0, p.t0+h), true
			}
		}
		return 0, false
	}
	out := Metrics{Final: ptr(final)}
	t10, ok10 := first(0.1)
	t90, ok90 := first(0.9)
	if ok10 && ok90 {
		out.Rise10S, out.Rise90S, out.RiseTimeS = ptr(t10), ptr(t90), ptr(t90-t10)
	}
	// Peak of y/final: grid maximum, refined where the slope changes sign.
	best, bestT := ys[0]/final, 0.0
	for k := 0; k < n; k++ {
		if v := ys[k+1] / final; v > best {
			best, bestT = v, float64(k+1)*h
		}
		if (dys[k]/final > 0) && (dys[k+1]/final <= 0) {
			p := seg(k)
			dt := 1e-6 * h
			tp := bisectCubic(func(t float64) float64 { return (p.at(t+dt) - p.at(t-dt)) / final }, p.t0, p.t0+h)
			if v := p.at(tp) / final; v > best {
				best, bestT = v, tp
			}
		}
	}
	out.OvershootPct = ptr(0)
	if best > 1 {
		out.OvershootPct = ptr((best - 1) * 100)
		out.PeakTimeS, out.Peak = ptr(bestT), ptr(best*final)
	}
	// Settling: the last time |y − final| = 2 %·|final|.
	band := settleBand * math.Abs(final)
	out.SettlingTimeS = ptr(0)
	for k := n - 1; k >= 0; k-- {
		e0, e1 := math.Abs(ys[k]-final)-band, math.Abs(ys[k+1]-final)-band
		if e1 >= 0 {
			if k == n-1 {
				out.SettlingTimeS = nil
				out.Note = "settling time beyond the search horizon"
			} else {
				out.SettlingTimeS = ptr(float64(k+1) * h)
			}
			break
		}
		if e0 >= 0 {
			p := seg(k)
			out.SettlingTimeS = ptr(bisectCubic(func(t float64) float64 { return math.Abs(p.at(t)-final) - band }, p.t0, p.t0+h))
			break
		}
	}
	return out, true
}

// expmMetricSteps is the grid of expmStepMetrics.
const expmMetricSteps = 4000
