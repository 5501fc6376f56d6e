package timeresp

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"
)

// Pole clustering tolerances. Roots of a polynomial with an m-fold root
// come out split by about ε^(1/m) (ε the rounding of the coefficients), so a
// double pole splits by ~1e-8 and a triple by ~1e-5 relative; poles closer
// than clusterRel relative to their size are treated as one repeated pole.
// Values within axisRel of an axis (relative to the pole's magnitude) are
// put on it. There is no absolute floor: the poles come from
// transfer.Extract, which already sets the roots at s = 0 exactly (its rank
// test), so a small pole next to large ones is genuine. A 1 TΩ·1 pF input
// behind a 1 kΩ·1 nF filter has poles at −1e-3 and −1e9 rad/s; a floor of
// 1e-12 of the largest pole made the first one s = 0 and the step a ramp.
const (
	clusterRel = 1e-5
	axisRel    = 1e-9
)

// poleGroup is a distinct pole p of multiplicity mult.
type poleGroup struct {
	p    complex128
	mult int
}

// clusterPoles merges numerically coincident poles (single linkage) into
// groups at their centroid, puts values within tolerance of the real or
// imaginary axis onto it, and checks that complex groups come in
// conjugate pairs of equal multiplicity. Groups are sorted by real part
// descending (slowest/most unstable first), then imaginary part descending.
func clusterPoles(ps []complex128) ([]poleGroup, error) {
	for _, p := range ps {
		if cmplx.IsInf(p) || cmplx.IsNaN(p) {
			return nil, fmt.Errorf("pole %v is not finite", p)
		}
	}
	parent := make([]int, len(ps))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			i = parent[i]
		}
		return i
	}
	for i := range ps {
		for j := i + 1; j < len(ps); j++ {
			tol := clusterRel * math.Max(cmplx.Abs(ps[i]), cmplx.Abs(ps[j]))
			if cmplx.Abs(ps[i]-ps[j]) <= tol {
				parent[find(j)] = find(i)
			}
		}
	}
	sums := map[int]complex128{}
	counts := map[int]int{}
	var roots []int
	for i, p := range ps {
		r := find(i)
		if counts[r] == 0 {
			roots = append(roots, r)
		}
		sums[r] += p
		counts[r]++
	}
	groups := make([]poleGroup, 0, len(roots))
	for _, r := range roots {
		c := sums[r] / complex(float64(counts[r]), 0)
		re, im := real(c), imag(c)
		tolAxis := axisRel * cmplx.Abs(c)
		if math.Abs(im) <= clusterRel*cmplx.Abs(c) {
			im = 0
		}
		if math.Abs(re) <= tolAxis {
			re = 0
		}
		groups = append(groups, poleGroup{complex(re, im), counts[r]})
	}
	sort.Slice(groups, func(i, j int) bool {
		a, b := groups[i].p, groups[j].p
		if real(a) != real(b) {
			return real(a) > real(b)
		}
		return imag(a) > imag(b)
	})
	for _, g := range groups {
		if imag(g.p) == 0 {
			continue
		}
		ok := false
		for _, h := range groups {
			tol := clusterRel * cmplx.Abs(g.p)
			if h.mult == g.mult && cmplx.Abs(h.p-cmplx.Conj(g.p)) <= tol {
				ok = true
				break
			}
		}
		if !ok {
			return nil, fmt.Errorf("complex pole %v (multiplicity %d) has no conjugate partner", g.p, g.mult)
		}
	}
	return groups, nil
}

// laurent returns, for Y(s) = k·Π(s − zeros[i]) / Π_g (s − groups[g].p)^mult,
// the principal-part coefficients at every group: res[g][j] multiplies
// 1/(s − p_g)^(j+1), j = 0 … mult−1.
//
// Method: with u = s − p_g, the Taylor series of
// F(u) = (s − p_g)^m·Y(s) = k·Π(u + (p_g − z_i)) · Π_{l≠g} (u + (p_g − p_l))^(−m_l)
// is built to order m−1 by exact series multiplication and division by
// linear factors; res[g][j] = F_(m−1−j) (the usual derivative formula
// r_j = F^(m−1−j)(0)/(m−1−j)!). No differencing, no linear solve.
func laurent(k float64, zeros []complex128, groups []poleGroup) [][]complex128 {
	res := make([][]complex128, len(groups))
	for g, grp := range groups {
		m := grp.mult
		f := make([]complex128, m)
		f[0] = complex(k, 0)
		for _, z := range zeros {
			mulLinear(f, grp.p-z)
		}
		for l, other := range groups {
			if l == g {
				continue
			}
			for n := 0; n < other.mult; n++ {
				divLinear(f, grp.p-other.p)
			}
		}
		r := make([]complex128, m)
		for j := 0; j < m; j++ {
			r[j] = f[m-1-j]
		}
		res[g] = r
	}
	return res
}

// mulLinear replaces the truncated series a(u) by a(u)·(u + d).
func mulLinear(a []complex128, d complex128) {
	for n := len(a) - 1; n >= 0; n-- {
		v := d * a[n]
		if n > 0 {
			v += a[n-1]
		}
		a[n] = v
	}
}

// divLinear replaces the truncated series a(u) by a(u)/(u + d), d ≠ 0.
func divLinear(a []complex128, d complex128) {
	prev := complex(0, 0)
	for n := range a {
		a[n] = (a[n] - prev) / d
		prev = a[n]
	}
}

// Mode is one term of a time response,
//
//	t^Power · e^(SigmaPerS·t) · (Cos·cos(OmegaRad·t) + Sin·sin(OmegaRad·t)),
//
// with t in s, SigmaPerS in 1/s, OmegaRad ≥ 0 in rad/s. A real pole has
// OmegaRad = 0 and Sin = 0; a conjugate pair p, p̄ is one Mode with
// OmegaRad = Im p > 0. Cos and Sin carry the 1/Power! of the expansion.
type Mode struct {
	Power     int
	SigmaPerS float64
	OmegaRad  float64
	Cos       float64
	Sin       float64
}

// modes turns the principal parts of a real rational function into the
// real time functions of its inverse Laplace transform:
// r/(s−p)^(j+1) ↔ r·t^j/j!·e^(pt); a conjugate pair gives 2·Re(r·t^j/j!·e^(pt)).
func modes(groups []poleGroup, res [][]complex128) []Mode {
	var out []Mode
	for g, grp := range groups {
		if imag(grp.p) < 0 {
			continue // folded into its partner
		}
		fact := 1.0
		for j, r := range res[g] {
			if j > 0 {
				fact *= float64(j)
			}
			m := Mode{Power: j, SigmaPerS: real(grp.p), OmegaRad: imag(grp.p)}
			if m.OmegaRad == 0 {
				m.Cos = real(r) / fact
			} else {
				m.Cos = 2 * real(r) / fact
				m.Sin = -2 * imag(r) / fact
			}
			out = append(out, m)
		}
	}
	return out
}

// modesAt returns the sum of the modes at t and its time derivative.
func modesAt(ms []Mode, t float64) (y, dy float64) {
	for _, m := range ms {
		e := math.Exp(m.SigmaPerS * t)
		c, s := 1.0, 0.0
		if m.OmegaRad != 0 {
			s, c = math.Sincos(m.OmegaRad * t)
		}
		trig := m.Cos*c + m.Sin*s
		dtrig := (m.SigmaPerS*m.Cos+m.OmegaRad*m.Sin)*c + (m.SigmaPerS*m.Sin-m.OmegaRad*m.Cos)*s
		tp := 1.0
		for i := 0; i < m.Power; i++ {
			tp *= t
		}
		y += tp * e * trig
		dy += tp * e * dtrig
		if m.Power > 0 {
			tp1 := 1.0
			for i := 0; i < m.Power-1; i++ {
				tp1 *= t
			}
			dy += float64(m.Power) * tp1 * e * trig
		}
	}
	return y, dy
}
