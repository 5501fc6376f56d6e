package mna

import (
	"fmt"
	"strings"

	"nodal/netlist"
)

// Structure checks the topology of the system before any solve and reports
// what makes G + sC singular for every s as a *StructureError:
//
//   - a node, or a group of nodes, with no path to Ground through any part;
//   - a loop of branches that fix a voltage (voltage sources, controlled or not, opamp
//     outputs) whose circulating current nothing determines;
//   - a group of nodes reached only through current sources (a cut-set of
//     current sources) whose net current nothing determines;
//   - any other structural rank deficiency of the pattern of G and C
//     (for example an opamp whose inputs are tied together), naming the
//     unknowns left undetermined.
//
// What is singular only at s = 0 (nodes reached only through capacitors,
// loops of inductors and voltage sources) is recorded in DCSingular and is
// not an error. Build runs Structure; it may be run again after editing G
// or C.
func (s *System) Structure() error {
	s.DCSingular = nil
	var probs []Problem
	nn := len(s.idx.nodeNames)
	all := func(edge) bool { return true }
	floating := s.groupsWithoutGround(all)
	for _, grp := range floating {
		probs = append(probs, Problem{
			Msg:   fmt.Sprintf("%s not connected to %s by any part", s.nodePhrase(grp), netlist.Ground),
			Nodes: s.nodeNamesOf(grp),
		})
	}
	onFloating := make([]bool, nn)
	for _, grp := range floating {
		for _, r := range grp {
			onFloating[r] = true
		}
	}

	// Cut-sets: groups that reach Ground only through current sources
	// (singular for every s) or only through current sources and
	// capacitors (singular at s = 0).
	probs = append(probs, s.cutSets(onFloating, func(e edge) bool { return e.kind != edgeCurrent }, true)...)
	for _, p := range s.cutSets(onFloating, func(e edge) bool { return e.kind != edgeCurrent && e.kind != edgeCapacitive }, false) {
		s.DCSingular = append(s.DCSingular, p.Msg)
	}

	// Loops of voltage-fixing branches (for every s) and of those with
	// inductors (at s = 0).
	probs = append(probs, s.loops(func(e edge) bool { return e.kind == edgeVoltage }, true)...)
	for _, p := range s.loops(func(e edge) bool { return e.kind == edgeVoltage || e.kind == edgeInductive }, false) {
		s.DCSingular = append(s.DCSingular, p.Msg)
	}

	if len(probs) == 0 {
		if p, ok := s.rankProblem(true); ok {
			probs = append(probs, p)
		}
	}
	if len(s.DCSingular) == 0 {
		if p, ok := s.rankProblem(false); ok {
			s.DCSingular = append(s.DCSingular, p.Msg)
		}
	}
	if len(probs) > 0 {
		return &StructureError{Problems: probs}
	}
	return nil
}

// unionFind is a disjoint-set forest over node rows 0…nn−1 and Ground (nn).
type unionFind []int

func newUnionFind(n int) unionFind {
	u := make(unionFind, n)
	for i := range u {
		u[i] = i
	}
	return u
}

func (u unionFind) find(i int) int {
	for u[i] != i {
		u[i] = u[u[i]]
		i = u[i]
	}
	return i
}

// union joins the sets of i and j and reports whether they were apart.
func (u unionFind) union(i, j int) bool {
	ri, rj := u.find(i), u.find(j)
	if ri == rj {
		return false
	}
	u[ri] = rj
	return true
}

// row maps an edge end (-1 for Ground) to a union-find element.
func (s *System) row(r int) int {
	if r < 0 {
		return len(s.idx.nodeNames)
	}
	return r
}

// groupsWithoutGround returns, in node order, the groups of node rows
// joined by the edges that keep() selects and not joined to Ground.
func (s *System) groupsWithoutGround(keep func(edge) bool) [][]int {
	nn := len(s.idx.nodeNames)
	u := newUnionFind(nn + 1)
	for _, e := range s.idx.edges {
		if keep(e) {
			u.union(s.row(e.a), s.row(e.b))
		}
	}
	gnd := u.find(nn)
	byRoot := map[int]int{}
	var groups [][]int
	for r := 0; r < nn; r++ {
		root := u.find(r)
		if root == gnd {
			continue
		}
		gi, ok := byRoot[root]
		if !ok {
			gi = len(groups)
			byRoot[root] = gi
			groups = append(groups, nil)
		}
		groups[gi] = append(groups[gi], r)
	}
	return groups
}

// cutSets finds the groups of nodes cut off from Ground when the edges that
// keep() rejects are removed, and reports those whose summed KCL rows
// vanish (in G and C when forAllS, in G alone otherwise): no equation then
// fixes the group's net current. Groups already floating are skipped.
func (s *System) cutSets(floating []bool, keep func(edge) bool, forAllS bool) []Problem {
	var probs []Problem
	n := s.Size()
	gr, cr := s.G.transpose(), s.C.transpose() // by rows
	addRow := func(m *Sparse, r int, f float64, sum []float64) {
		for e := m.colPtr[r]; e < m.colPtr[r+1]; e++ {
			sum[m.rowIdx[e]] += f * m.val[e]
		}
	}
	for _, grp := range s.groupsWithoutGround(keep) {
		if floating[grp[0]] {
			continue
		}
		in := map[int]bool{}
		for _, r := range grp {
			in[r] = true
		}
		sumG := make([]float64, n)
		sumC := make([]float64, n)
		for _, r := range grp {
			addRow(gr, r, 1, sumG)
			addRow(cr, r, 1, sumC)
		}
		var cut []string
		for _, e := range s.idx.edges {
			if keep(e) || in[s.row(e.a)] == in[s.row(e.b)] {
				continue
			}
			cut = append(cut, e.part)
			// A crossing source with a branch current has its own row
			// i − (…) = 0 in G; substitute it so the sum is in terms of
			// the other unknowns.
			if k := e.branch; k >= 0 && e.kind == edgeCurrent && sumG[k] != 0 {
				addRow(gr, k, -sumG[k]/s.G.At(k, k), sumG)
			}
		}
		if !allZero(sumG) || (forAllS && !allZero(sumC)) {
			continue
		}
		through := "current sources"
		if !forAllS {
			through = "capacitors and current sources"
		}
		probs = append(probs, Problem{
			Msg: fmt.Sprintf("%s reached only through %s (%s): nothing fixes the net current into %s; %s",
				s.nodePhrase(grp), through, strings.Join(cut, ", "), pronoun(len(grp)), singularWhen(forAllS)),
			Nodes: s.nodeNamesOf(grp),
			Parts: cut,
		})
	}
	return probs
}

// singularWhen says for which s a defect makes the system singular.
func singularWhen(forAllS bool) string {
	if forAllS {
		return "the system is singular for every frequency"
	}
	return "the system is singular at DC (s = 0) only"
}

func pronoun(n int) string {
	if n == 1 {
		return "it"
	}
	return "them"
}

func allZero(v []float64) bool {
	for _, x := range v {
		if x != 0 {
			return false
		}
	}
	return true
}

// loops finds loops of the edges keep() selects, all of which must have a
// branch current. A loop is reported when the circulating current e (±1 on
// the loop's branch currents) satisfies G·e = 0 (and C·e = 0 when
// forAllS): nothing then determines it.
func (s *System) loops(keep func(edge) bool, forAllS bool) []Problem {
	nn := len(s.idx.nodeNames)
	var probs []Problem
	adj := make([][]arc, nn+1)
	u := newUnionFind(nn + 1)
	for ei, e := range s.idx.edges {
		if !keep(e) || e.branch < 0 {
			continue
		}
		a, b := s.row(e.a), s.row(e.b)
		if u.union(a, b) {
			adj[a] = append(adj[a], arc{b, ei})
			adj[b] = append(adj[b], arc{a, ei})
			continue
		}
		// e closes a loop: find the tree path b → a.
		path := treePath(adj, b, a)
		if path == nil && a != b {
			continue
		}
		n := s.Size()
		circ := make([]float64, n)
		circ[e.branch] = 1 // current a → b through e
		at := b
		parts := []string{}
		nodes := []string{s.endName(a)}
		if b != a {
			nodes = append(nodes, s.endName(b))
		}
		for _, ei := range path {
			pe := s.idx.edges[ei]
			// continue the loop current from `at` through pe
			if s.row(pe.a) == at {
				circ[pe.branch] += 1
				at = s.row(pe.b)
			} else {
				circ[pe.branch] -= 1
				at = s.row(pe.a)
			}
			parts = append(parts, pe.part)
			if at != a {
				nodes = append(nodes, s.endName(at))
			}
		}
		if !s.annihilates(circ, forAllS) {
			continue
		}
		parts = append([]string{e.part}, parts...)
		what := "voltage-fixing parts"
		if !forAllS {
			what = "inductors and voltage-fixing parts"
		}
		probs = append(probs, Problem{
			Msg: fmt.Sprintf("%s %s form a loop through nodes %s: nothing fixes the current around it; %s",
				what, strings.Join(parts, ", "), quoteList(nodes), singularWhen(forAllS)),
			Nodes: nodes,
			Parts: parts,
		})
	}
	return probs
}

// arc is one direction of a tree edge: the far end and the edge index.
type arc struct {
	to, edge int
}

// treePath returns the edge indices of the path from 'from' to 'to' in the
// forest adj, in order (nil if from == to or no path).
func treePath(adj [][]arc, from, to int) []int {
	if from == to {
		return nil
	}
	prev := make([]arc, len(adj)) // prev[v]: the arc by which v was reached
	seen := make([]bool, len(adj))
	seen[from] = true
	queue := []int{from}
	for len(queue) > 0 {
		v := queue[0]
		queue = queue[1:]
		for _, a := range adj[v] {
			if seen[a.to] {
				continue
			}
			seen[a.to] = true
			prev[a.to] = arc{to: v, edge: a.edge}
			if a.to == to {
				var path []int
				for w := to; w != from; w = prev[w].to {
					path = append(path, prev[w].edge)
				}
				for i, j := 0, len(path)-1; i < j; i, j = i+1, j-1 {
					path[i], path[j] = path[j], path[i]
				}
				return path
			}
			queue = append(queue, a.to)
		}
	}
	return nil
}

func (s *System) endName(r int) string {
	if r >= len(s.idx.nodeNames) {
		return netlist.Ground
	}
	return s.idx.nodeNames[r]
}

// annihilates reports whether G·v = 0 (and C·v = 0 when both).
func (s *System) annihilates(v []float64, both bool) bool {
	n := s.Size()
	sg, sc := make([]float64, n), make([]float64, n)
	s.G.mulVecAdd(v, sg)
	s.C.mulVecAdd(v, sc)
	return allZero(sg) && (!both || allZero(sc))
}

func (s *System) nodeNamesOf(rows []int) []string {
	names := make([]string, len(rows))
	for i, r := range rows {
		names[i] = s.idx.nodeNames[r]
	}
	return names
}

// nodePhrase is `node "x" is` or `nodes "x", "y" are`.
func (s *System) nodePhrase(rows []int) string {
	if len(rows) == 1 {
		return fmt.Sprintf("node %q is", s.idx.nodeNames[rows[0]])
	}
	return fmt.Sprintf("nodes %s are", quoteList(s.nodeNamesOf(rows)))
}

// rankProblem checks the structural rank of the pattern of G and C (or of
// G alone, at s = 0) by maximum bipartite matching of equations to
// unknowns. A deficient pattern is singular for every choice of values.
func (s *System) rankProblem(forAllS bool) (Problem, bool) {
	n := s.Size()
	adj := make([][]int, n)
	add := func(i, j int, _ float64) {
		if i < n && j < n {
			adj[i] = append(adj[i], j)
		}
	}
	s.G.Each(add)
	if forAllS {
		s.C.Each(add)
	}
	matchCol := make([]int, n) // column j → row, -1 free
	for j := range matchCol {
		matchCol[j] = -1
	}
	// seen[j] == round marks column j visited in this augmenting search
	// (no n-sized clearing per row). A cheap greedy pass first matches
	// most rows directly.
	seen := make([]int, n)
	round := 0
	var try func(i int) bool
	try = func(i int) bool {
		for _, j := range adj[i] {
			if seen[j] == round {
				continue
			}
			seen[j] = round
			if matchCol[j] < 0 || try(matchCol[j]) {
				matchCol[j] = i
				return true
			}
		}
		return false
	}
	matched := make([]bool, n)
	for i := 0; i < n; i++ {
		for _, j := range adj[i] {
			if matchCol[j] < 0 {
				matchCol[j], matched[i] = i, true
				break
			}
		}
	}
	var rows []string
	for i := 0; i < n; i++ {
		if matched[i] {
			continue
		}
		round++
		if !try(i) {
			rows = append(rows, s.equationName(i))
		}
	}
	if len(rows) == 0 {
		return Problem{}, false
	}
	var cols []string
	for j := 0; j < n; j++ {
		if matchCol[j] < 0 {
			cols = append(cols, s.Unknowns[j])
		}
	}
	when := "for every frequency"
	if !forAllS {
		when = "at DC (s = 0)"
	}
	return Problem{
		Msg: fmt.Sprintf("the equations cannot determine %s %s (structurally singular; unmatched: %s); check opamp feedback and controlled-source senses",
			strings.Join(cols, ", "), when, strings.Join(rows, ", ")),
	}, true
}

// equationName describes row i: the KCL of a node or the branch equation
// of a part.
func (s *System) equationName(i int) string {
	if i < len(s.idx.nodeNames) {
		return fmt.Sprintf("current law at %q", s.idx.nodeNames[i])
	}
	u := s.Unknowns[i]
	return fmt.Sprintf("equation of %s", strings.TrimSuffix(strings.TrimPrefix(u, "i("), ")"))
}
