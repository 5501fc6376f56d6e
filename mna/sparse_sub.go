package mna

// Sub returns the square part of m on the given rows and columns
// (len(rows) == len(cols) = k): entry (a, b) of the result is
// m(rows[a], cols[b]). It costs O(n + nnz) and never makes an n×n array,
// so a diagonal block of a large circuit's pencil can be factored on its
// own (analysis/stability). It panics if the lengths differ.
func (m *Sparse) Sub(rows, cols []int) *Sparse {
	if len(rows) != len(cols) {
		panic("mna: Sub of a non-square part")
	}
	rowAt := make([]int, m.n)
	for i := range rowAt {
		rowAt[i] = -1
	}
	for a, i := range rows {
		rowAt[i] = a
	}
	var ts []triplet
	for b, j := range cols {
		for e := m.colPtr[j]; e < m.colPtr[j+1]; e++ {
			if a := rowAt[m.rowIdx[e]]; a >= 0 {
				ts = append(ts, triplet{a, b, m.val[e]})
			}
		}
	}
	return newSparse(len(rows), ts)
}

// GainEntries calls fn for every control term of every gain element
// (controlled sources and op-amps): the entry (i, j) of G by which part's
// equations read its control quantity (rows and columns of Ground are
// left out). These are the only entries of G and C that are not the stamp
// of a passive part or of a zeroed source, apart from an op-amp's own
// branch row (BranchIndex of the op-amp).
func (m *Matrices) GainEntries(fn func(part string, i, j int)) {
	for part, ctl := range m.controls {
		for _, r := range ctl.rows {
			for _, c := range ctl.cols {
				if r >= 0 && c >= 0 {
					fn(part, r, c)
				}
			}
		}
	}
}

// GainParts returns the names of the circuit's gain elements (the parts
// whose control Excite with BrokenControl can break), in the circuit's
// part order.
func (m *Matrices) GainParts() []string {
	var out []string
	for i := range m.c.Parts {
		if _, ok := m.controls[m.c.Parts[i].Name]; ok {
			out = append(out, m.c.Parts[i].Name)
		}
	}
	return out
}
