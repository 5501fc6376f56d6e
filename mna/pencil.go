package mna

import (
	"container/heap"
	"math"
	"sync"
)

// pencil is the pair (G, C) of Y(s) = G + sC with the names of its
// unknowns, seen through the union of their patterns in compressed
// columns: entry e of column j is row rowIdx[e], with G's value gv[e] and
// C's cv[e] (0 where the matrix has no entry). A Sparse is never changed
// in place, so the copies stay true.
type pencil struct {
	n              int
	colPtr, rowIdx []int
	gv, cv         []float64
	g, c           *Sparse
	unknowns       []string
}

// newPencil merges the patterns of g and c (both n×n or larger) over the
// first n = len(unknowns) rows and columns, in O(nnz + n).
func newPencil(g, c *Sparse, unknowns []string) *pencil {
	n := len(unknowns)
	p := &pencil{n: n, colPtr: make([]int, n+1), g: g, c: c, unknowns: unknowns}
	p.rowIdx = make([]int, 0, g.NNZ()+c.NNZ())
	for j := 0; j < n; j++ {
		a, ae := g.colPtr[j], g.colPtr[j+1]
		b, be := c.colPtr[j], c.colPtr[j+1]
		for a < ae || b < be {
			ra, rb := n, n
			if a < ae {
				ra = g.rowIdx[a]
			}
			if b < be {
				rb = c.rowIdx[b]
			}
			r := min(ra, rb)
			if r >= n {
				break
			}
			var gv, cv float64
			if ra == r {
				gv, a = g.val[a], a+1
			}
			if rb == r {
				cv, b = c.val[b], b+1
			}
			p.rowIdx = append(p.rowIdx, r)
			p.gv = append(p.gv, gv)
			p.cv = append(p.cv, cv)
		}
		p.colPtr[j+1] = len(p.rowIdx)
	}
	return p
}

// at returns entry e of G + sC.
func (p *pencil) at(e int, s complex128) complex128 {
	c := p.cv[e]
	return complex(p.gv[e]+real(s)*c, imag(s)*c)
}

// luOrder is what every factorisation of one pencil shares, computed once
// and read-only afterwards (safe for concurrent use): the union pattern
// and the fill-reducing elimination order, perm[k] the unknown eliminated
// at step k and inv its inverse.
type luOrder struct {
	p    *pencil
	perm []int
	inv  []int
}

func newLUOrder(p *pencil) *luOrder { return newLUOrderWith(p, fillReducingOrder(p)) }

// newLUOrderWith is the luOrder of p eliminating perm (a permutation of
// 0 … n−1) in its order.
func newLUOrderWith(p *pencil, perm []int) *luOrder {
	o := &luOrder{p: p, perm: perm}
	o.inv = make([]int, p.n)
	for k, u := range o.perm {
		o.inv[u] = k
	}
	return o
}

// orderCache computes the luOrder of a System or Matrices once, on first
// use, for every Sweeper and Solver made from it (and their workers).
type orderCache struct {
	once sync.Once
	o    *luOrder
}

// get returns the cached order when it was made for these very matrices
// (a System whose G or C was replaced gets a fresh one).
func (c *orderCache) get(g, cm *Sparse, unknowns []string) *luOrder {
	if c == nil {
		return newLUOrder(newPencil(g, cm, unknowns))
	}
	c.once.Do(func() { c.o = newLUOrder(newPencil(g, cm, unknowns)) })
	if o := c.o; o.p.g == g && o.p.c == cm && o.p.n == len(unknowns) {
		return o
	}
	return newLUOrder(newPencil(g, cm, unknowns))
}

// pivotKeep is the threshold of threshold partial pivoting: the diagonal
// pivot is kept while it is at least this fraction of the column's largest
// candidate (0.1 is the usual choice of sparse LU codes; growth stays
// bounded by (1 + 1/pivotKeep) per step).
const pivotKeep = 0.1

// minimumDegree returns an elimination order of the unknowns that keeps
// fill-in low: the minimum-degree rule of Tinney and Walker ("Direct
// solutions of sparse network equations by optimally ordered triangular
// factorization", Proc. IEEE 55 (1967), scheme 2), on the symmetrised
// pattern of G and C: repeatedly the unknown with the fewest neighbours in
// the elimination graph, its neighbours then joined into a clique. Degrees
// are exact (the elimination graph is held explicitly, as adjacency
// lists) and the next unknown comes from a heap ordered by (degree,
// index), so the order is deterministic. Cost: Σ over steps of the
// neighbour lists touched, O(n log n) for a ladder or any network whose
// fill stays bounded.
func minimumDegree(p *pencil) []int { return minimumDegreeGraph(symmetricAdjacency(p)) }

// symmetricAdjacency returns the neighbour lists of the symmetrised
// pattern of p without the diagonal (a neighbour may be listed twice).
func symmetricAdjacency(p *pencil) [][]int {
	n := p.n
	adj := make([][]int, n)
	for j := 0; j < n; j++ {
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			if i := p.rowIdx[e]; i != j {
				adj[i] = append(adj[i], j)
				adj[j] = append(adj[j], i)
			}
		}
	}
	return adj
}

// minimumDegreeGraph is minimumDegree on the graph adj (consumed: its
// lists become the elimination graph), ties broken by vertex index.
func minimumDegreeGraph(adj [][]int) []int {
	perm, _, _ := minimumDegreeBounded(adj, math.MaxInt64, math.MaxInt64)
	return perm
}

// minimumDegreeBounded is minimumDegreeGraph that also returns the fill
// of its order (the entries of L below the diagonal: the degree of each
// unknown in the elimination graph when it is eliminated, symbolicFill's
// count) and gives up, returning ok false and no order, as soon as that
// fill is sure to exceed maxFill (the fill so far and the edges left in
// the elimination graph, each an entry of L to come, exceed it) or the
// fill-in (the edges elimination adds to the graph) exceeds maxFillIn, so
// an order known to be beaten costs no more than the work up to there.
func minimumDegreeBounded(adj [][]int, maxFill, maxFillIn int64) (perm []int, fill int64, ok bool) {
	n := len(adj)
	mark := make([]int, n) // mark[u] == stamp: u seen in this pass
	stamp := 0
	done := make([]bool, n)
	dedup := func(v int) {
		stamp++
		mark[v] = stamp
		out := adj[v][:0]
		for _, u := range adj[v] {
			if !done[u] && mark[u] != stamp {
				mark[u] = stamp
				out = append(out, u)
			}
		}
		adj[v] = out
	}
	h := make(degHeap, 0, n)
	var edges int64 // of the elimination graph
	for v := 0; v < n; v++ {
		dedup(v)
		h = append(h, degItem{len(adj[v]), v})
		edges += int64(len(adj[v]))
	}
	edges /= 2
	heap.Init(&h)
	perm = make([]int, 0, n)
	nb := make([]int, 0)
	var fillIn int64
	for len(perm) < n {
		it := heap.Pop(&h).(degItem)
		v := it.v
		if done[v] || it.deg != len(adj[v]) {
			continue // a stale entry
		}
		done[v] = true
		perm = append(perm, v)
		fill += int64(len(adj[v]))
		edges -= int64(len(adj[v]))
		nb = append(nb[:0], adj[v]...)
		adj[v] = nil
		var grown int64 // twice the fill-in of this step
		for _, u := range nb {
			before := len(adj[u]) - 1 // v goes
			adj[u] = append(adj[u], nb...)
			dedup(u)
			grown += int64(len(adj[u]) - before)
			heap.Push(&h, degItem{len(adj[u]), u})
		}
		fillIn += grown / 2
		edges += grown / 2
		// Every edge left in the elimination graph is an entry of L to
		// come, so fill + edges is a lower bound of the final fill.
		if fillIn > maxFillIn || fill+edges > maxFill {
			return nil, fill, false
		}
	}
	return perm, fill, true
}

// degItem is an unknown and its degree when pushed.
type degItem struct{ deg, v int }

// degHeap is a min-heap of degItem by (deg, v).
type degHeap []degItem

func (h degHeap) Len() int { return len(h) }
func (h degHeap) Less(a, b int) bool {
	return h[a].deg < h[b].deg || (h[a].deg == h[b].deg && h[a].v < h[b].v)
}
func (h degHeap) Swap(a, b int) { h[a], h[b] = h[b], h[a] }
func (h *degHeap) Push(x any)   { *h = append(*h, x.(degItem)) }
func (h *degHeap) Pop() any {
	old := *h
	it := old[len(old)-1]
	*h = old[:len(old)-1]
	return it
}
