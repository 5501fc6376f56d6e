package mna

import (
	"math"
	"slices"
)

// Fill-reducing orders beyond minimum degree, and the rule that chooses
// between them.
//
// Minimum degree (minimumDegree) is best on ladders, trees and the small
// networks of most circuits, but on 2-D meshes (a ground plane's parasitic
// grid) its fill grows faster than n·log n. Nested dissection (George,
// "Nested dissection of a regular finite element mesh", SIAM J. Numer.
// Anal. 10 (1973)) reaches fill O(n log n) and O(n^1.5) operations there,
// the least any order can do on a grid (Hoffman, Martin and Rose, 1973,
// from memory). The order of a circuit is nested dissection's only when
// its predicted fill (symbolicFill) is strictly smaller than minimum
// degree's, and only for circuits of at least ndMinUnknowns unknowns, so
// small circuits and ladders keep minimum degree's order bit for bit.

// ndMinUnknowns is the size below which nested dissection is not tried
// (a 16×16 mesh has 258 unknowns; the circuits of the examples have far
// fewer).
const ndMinUnknowns = 200

// ndLeaf is the size of piece that nested dissection leaves to minimum
// degree (George and Liu, Computer Solution of Large Sparse Positive
// Definite Systems, 1981, stop dissecting at small pieces; the value was
// chosen by the fill of the meshes of BenchmarkEvalMesh).
const ndLeaf = 128

// fillReducingOrder returns the elimination order of p: minimum degree's,
// or nested dissection's when that predicts strictly less fill.
// Minimum degree runs first until its first fill-in: an order with none
// (a ladder, a tree) has the least fill there is, L's pattern being at
// least A's, and is kept without trying nested dissection. Otherwise it
// runs again after nested dissection, bounded by that order's fill, so on
// meshes its costly last steps (cliques of about √n unknowns) are not
// taken once it has lost.
func fillReducingOrder(p *pencil) []int {
	if p.n < ndMinUnknowns {
		return minimumDegree(p)
	}
	if md, _, ok := minimumDegreeBounded(symmetricAdjacency(p), math.MaxInt64, 0); ok {
		return md
	}
	adj := simpleAdjacency(p)
	nd := nestedDissection(adj)
	if md, _, ok := minimumDegreeBounded(symmetricAdjacency(p), symbolicFill(adj, nd), math.MaxInt64); ok {
		return md
	}
	return nd
}

// simpleAdjacency is symmetricAdjacency with every list sorted and free of
// repeats.
func simpleAdjacency(p *pencil) [][]int {
	adj := symmetricAdjacency(p)
	for v, a := range adj {
		slices.Sort(a)
		adj[v] = slices.Compact(a)
	}
	return adj
}

// symbolicFill returns the number of entries strictly below the diagonal
// of the Cholesky factor of the graph adj (simple, symmetric) eliminated
// in the order perm: the fill of L, so that of L+U is 2·fill + n when no
// pivot leaves the diagonal. The row counts come from walking each row's
// subtree of the elimination tree, built on the way (Davis, "Algorithm
// 849: a concise sparse Cholesky factorization package", ACM TOMS 31
// (2005)), in O(fill + nnz).
func symbolicFill(adj [][]int, perm []int) int64 {
	fill, _ := symbolicCounts(adj, perm)
	return fill
}

// symbolicCounts returns symbolicFill and Σ c_k², c_k the count of column
// k of L below the diagonal: the multiply-adds of the factorisation, to
// leading order (George and Liu 1981, §2.2).
func symbolicCounts(adj [][]int, perm []int) (fill, ops int64) {
	n := len(adj)
	inv := make([]int, n)
	for k, v := range perm {
		inv[v] = k
	}
	parent := make([]int, n)
	flag := make([]int, n)
	count := make([]int64, n)
	for k, v := range perm {
		parent[k], flag[k] = -1, k
		for _, u := range adj[v] {
			for i := inv[u]; i < k && flag[i] != k; i = parent[i] {
				if parent[i] == -1 {
					parent[i] = k
				}
				count[i]++
				flag[i] = k
			}
		}
	}
	for _, c := range count {
		fill += c
		ops += c * c
	}
	return fill, ops
}

// dissector holds the working arrays of one nestedDissection.
type dissector struct {
	adj   [][]int
	perm  []int
	tag   []int // tag[v]: the piece v belongs to now (0: ordered)
	next  int   // the next fresh tag
	level []int // BFS level within the piece, -1 unseen
	loc   []int // a leaf's local index of each of its vertices
	queue []int
}

// nestedDissection orders the graph adj (simple, symmetric; not changed)
// by recursive dissection with level-structure separators (George and Liu
// 1981, ch. 8): in each connected piece a pseudo-peripheral vertex roots
// a breadth-first level structure, the vertices of its middle level that
// have a neighbour in the next level form the separator, ordered after
// the pieces it leaves; pieces of at most ndLeaf vertices, and pieces
// whose structure has fewer than three levels, are ordered by minimum
// degree. Every choice is by vertex index, so the order is deterministic.
// Cost O(nnz · depth) with depth O(log n) on meshes and ladders.
func nestedDissection(adj [][]int) []int {
	n := len(adj)
	d := &dissector{adj: adj, perm: make([]int, 0, n), tag: make([]int, n), next: 1,
		level: make([]int, n), loc: make([]int, n), queue: make([]int, 0, n)}
	for v := range d.level {
		d.level[v] = -1
	}
	all := make([]int, n)
	for v := range all {
		all[v] = v
	}
	d.order(all)
	return d.perm
}

// order appends to d.perm an order of piece (vertices in increasing
// index, all of them unordered so far).
func (d *dissector) order(piece []int) {
	t := d.next
	d.next++
	for _, v := range piece {
		d.tag[v] = t
	}
	if len(piece) <= ndLeaf {
		d.leaf(piece, t)
		return
	}
	levels := d.bfs(piece[0], t)
	reached := d.reached(levels)
	d.clearLevels(levels)
	if reached < len(piece) {
		// More than one connected piece: each on its own.
		for _, c := range d.components(piece, t) {
			d.order(c)
		}
		return
	}
	levels = d.bfs(d.pseudoPeripheral(piece[0], t), t)
	h := len(levels)
	if h < 3 {
		d.leaf(piece, t)
		return
	}
	j := h / 2
	var sep []int
	for _, v := range levels[j] {
		for _, u := range d.adj[v] {
			if d.tag[u] == t && d.level[u] == j+1 {
				sep = append(sep, v)
				break
			}
		}
	}
	d.clearLevels(levels)
	sepTag := d.next
	d.next++
	for _, v := range sep {
		d.tag[v] = sepTag
	}
	rest := make([]int, 0, len(piece)-len(sep))
	for _, v := range piece {
		if d.tag[v] == t {
			rest = append(rest, v)
		}
	}
	for _, c := range d.components(rest, t) {
		d.order(c)
	}
	slices.Sort(sep)
	d.perm = append(d.perm, sep...)
	for _, v := range sep {
		d.tag[v] = 0
	}
}

// bfs returns the level structure rooted at root within the vertices
// tagged t, leaving d.level set for them (clearLevels resets it).
func (d *dissector) bfs(root, t int) [][]int {
	q := append(d.queue[:0], root)
	d.level[root] = 0
	var levels [][]int
	for start := 0; start < len(q); {
		end := len(q)
		levels = append(levels, q[start:end])
		l := len(levels)
		for _, v := range q[start:end] {
			for _, u := range d.adj[v] {
				if d.tag[u] == t && d.level[u] < 0 {
					d.level[u] = l
					q = append(q, u)
				}
			}
		}
		start = end
	}
	d.queue = q
	// The levels alias d.queue; move them to a copy of it (one
	// allocation) so the next BFS keeps them.
	c := slices.Clone(q)
	off := 0
	for i, l := range levels {
		levels[i] = c[off : off+len(l) : off+len(l)]
		off += len(l)
	}
	return levels
}

func (d *dissector) reached(levels [][]int) int {
	m := 0
	for _, l := range levels {
		m += len(l)
	}
	return m
}

func (d *dissector) clearLevels(levels [][]int) {
	for _, l := range levels {
		for _, v := range l {
			d.level[v] = -1
		}
	}
}

// pseudoPeripheral returns a vertex of large eccentricity within the
// vertices tagged t (the connected piece of start), by the algorithm of
// Gibbs, Poole and Stockmeyer as refined by George and Liu (1981, §4.3):
// from the root, move to the vertex of least degree in the last level
// while that lengthens the level structure.
func (d *dissector) pseudoPeripheral(start, t int) int {
	r := start
	levels := d.bfs(r, t)
	for {
		last := levels[len(levels)-1]
		x, xdeg := -1, 0
		for _, v := range last {
			deg := 0
			for _, u := range d.adj[v] {
				if d.tag[u] == t {
					deg++
				}
			}
			if x < 0 || deg < xdeg || (deg == xdeg && v < x) {
				x, xdeg = v, deg
			}
		}
		d.clearLevels(levels)
		next := d.bfs(x, t)
		if len(next) <= len(levels) {
			d.clearLevels(next)
			return r
		}
		r, levels = x, next
	}
}

// components splits piece (tagged t) into its connected pieces, each in
// increasing index, in the order of their least vertex.
func (d *dissector) components(piece []int, t int) [][]int {
	var out [][]int
	for _, v := range piece {
		if d.level[v] >= 0 {
			continue
		}
		levels := d.bfs(v, t)
		var c []int
		for _, l := range levels {
			c = append(c, l...)
		}
		out = append(out, c)
	}
	for _, c := range out {
		for _, v := range c {
			d.level[v] = -1
		}
		slices.Sort(c)
	}
	return out
}

// leaf appends minimum degree's order of the subgraph induced by piece
// (tagged t, increasing index, so ties fall as in minimumDegree).
func (d *dissector) leaf(piece []int, t int) {
	for i, v := range piece {
		d.loc[v] = i
	}
	sub := make([][]int, len(piece))
	for i, v := range piece {
		for _, u := range d.adj[v] {
			if d.tag[u] == t {
				sub[i] = append(sub[i], d.loc[u])
			}
		}
	}
	for _, i := range minimumDegreeGraph(sub) {
		d.perm = append(d.perm, piece[i])
		d.tag[piece[i]] = 0
	}
}
