package netlist

import (
	"fmt"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// couplingPSDTol: the smallest eigenvalue of a set's coupling matrix may
// be this far below 0 (rounding of coefficients such as ±1).
const couplingPSDTol = 1e-12

// CouplingProblem checks the couplings among parts: two couplings of one
// pair of inductors are an error, and so is a set of inductors joined by
// couplings whose inductance matrix is not positive semidefinite, as the
// stored energy ½·iᵀLi ≥ 0 of passive coils requires (common practice).
// L = D·K·D with D = diag(√Lᵢ) and K the matrix of unit diagonal and the
// coupling factors off it, so the test is on the factors alone; a single
// coupling with |K| ≤ 1 always passes. It returns the coupling to blame
// and the message, or nil. Couplings whose inductors are not resolved
// (empty names) are skipped.
func CouplingProblem(parts []Part) (*Part, string) {
	pairs := map[[2]string]*Part{}
	var keys [][2]string
	for i := range parts {
		p := &parts[i]
		if p.Kind != Coupling || p.Coupled[0] == "" || p.Coupled[1] == "" || p.Coupled[0] == p.Coupled[1] {
			continue
		}
		k := p.Coupled
		if k[0] > k[1] {
			k[0], k[1] = k[1], k[0]
		}
		if prev, dup := pairs[k]; dup {
			return p, fmt.Sprintf("couples %s and %s, which %s already couples: give one coupling per pair", k[0], k[1], prev.Name)
		}
		pairs[k] = p
		keys = append(keys, k)
	}
	if len(keys) < 2 {
		return nil, ""
	}
	// Sets: connected components of the inductors under the couplings.
	root := map[string]string{}
	var find func(x string) string
	find = func(x string) string {
		r, ok := root[x]
		if !ok || r == x {
			root[x] = x
			return x
		}
		r = find(r)
		root[x] = r
		return r
	}
	for _, k := range keys {
		root[find(k[0])] = find(k[1])
	}
	groups := map[string][][2]string{}
	var order []string
	for _, k := range keys {
		r := find(k[0])
		if _, ok := groups[r]; !ok {
			order = append(order, r)
		}
		groups[r] = append(groups[r], k)
	}
	for _, r := range order {
		if p, msg := checkCouplingSet(groups[r], pairs); p != nil {
			return p, msg
		}
	}
	return nil, ""
}

// checkCouplingSet tests one connected set (see CouplingProblem).
func checkCouplingSet(set [][2]string, pairs map[[2]string]*Part) (*Part, string) {
	if len(set) < 2 {
		return nil, ""
	}
	idx := map[string]int{}
	for _, k := range set {
		for _, l := range k {
			if _, ok := idx[l]; !ok {
				idx[l] = len(idx)
			}
		}
	}
	n := len(idx)
	km := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		km.SetSym(i, i, 1)
	}
	var text []string
	for _, k := range set {
		p := pairs[k]
		km.SetSym(idx[k[0]], idx[k[1]], p.Value)
		text = append(text, fmt.Sprintf("%s = %g (%s, %s)", p.Name, p.Value, k[0], k[1]))
	}
	sort.Strings(text)
	var eig mat.EigenSym
	first := pairs[set[0]]
	if !eig.Factorize(km, false) {
		return first, "the coupling matrix of its set of inductors could not be checked"
	}
	if lo := eig.Values(nil)[0]; lo < -couplingPSDTol {
		return first, fmt.Sprintf("the couplings %s give an inductance matrix that is not positive semidefinite (smallest eigenvalue of the coupling matrix %.3g): no passive set of coils has these factors",
			strings.Join(text, ", "), lo)
	}
	return nil, ""
}
