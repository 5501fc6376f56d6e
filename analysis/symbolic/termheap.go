package symbolic

import (
	"container/heap"
	"math/big"
)

// termHeap is the running remainder of a long division: a sparse
// polynomial with fast access to its largest monomial.
//
// Invariants: coef holds exactly the non-zero terms; every key of coef is
// in monos (monos may also hold stale keys, skipped by popMax).
type termHeap struct {
	coef  map[string]*big.Rat
	monos monoHeap
}

func newTermHeap(p Poly) *termHeap {
	h := &termHeap{coef: make(map[string]*big.Rat, len(p.terms))}
	for _, t := range p.terms {
		h.coef[t.mono] = new(big.Rat).Set(t.coef)
		h.monos = append(h.monos, t.mono)
	}
	heap.Init(&h.monos)
	return h
}

// add adds c·m (c is owned by the heap afterwards).
func (h *termHeap) add(m string, c *big.Rat) {
	if old, ok := h.coef[m]; ok {
		old.Add(old, c)
		if old.Sign() == 0 {
			delete(h.coef, m)
		}
		return
	}
	if c.Sign() == 0 {
		return
	}
	h.coef[m] = c
	heap.Push(&h.monos, m)
}

// popMax removes and returns the largest term; any is false when empty.
func (h *termHeap) popMax() (m string, c *big.Rat, any bool) {
	for h.monos.Len() > 0 {
		m = heap.Pop(&h.monos).(string)
		if c, ok := h.coef[m]; ok {
			delete(h.coef, m)
			return m, c, true
		}
	}
	return "", nil, false
}

// monoHeap is a max-heap of monomials in byte order.
type monoHeap []string

func (h monoHeap) Len() int           { return len(h) }
func (h monoHeap) Less(i, j int) bool { return h[i] > h[j] }
func (h monoHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *monoHeap) Push(x any)        { *h = append(*h, x.(string)) }
func (h *monoHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}
