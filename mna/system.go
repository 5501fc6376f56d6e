// Package mna builds and solves the modified nodal analysis (MNA) system
// Y(s) = G + sC of a netlist.Circuit.
package mna

// System is the MNA system of one circuit for one probe (one input and one
// output), made by Build or Excited.System:
//
//	(G + sC)·x = B·u,  y = L·x
//
// so that H(s) = y/u = L·(G + sC)⁻¹·B. G and C are real n×n in compressed
// columns (Sparse; Dense() for a dense copy of a small system), B and L
// real length-n vectors. x holds the node voltages (reference removed, in the
// circuit's node order) then the branch currents.
//
// Invariants: len(Unknowns) == n; Unknowns[i] names row/column i as
// "v(NODE)", "i(PART)" (a branch current) or "y" (the observed quantity,
// when Excited.System adds it as an unknown). G and C may be shared with
// the circuit's Matrices: treat them as read-only unless the System came
// from Build, which makes its own.
type System struct {
	Unknowns []string
	G, C     *Sparse
	B, L     []float64

	Input  Input  // the resolved excitation
	Output Output // the resolved observation
	// SourceAmplitude is the complex small-signal amplitude the file gives
	// the input source (amplitude·e^{j·phase}); H is per unit of it.
	SourceAmplitude complex128

	// DCSingular lists, after Structure, what makes the system singular at
	// s = 0 only (a node reached only through capacitors, a loop of
	// inductors and voltage sources). It is information, not an error: the
	// response is defined at every s ≠ 0. Empty when Y(0) is regular.
	DCSingular []string

	idx    index
	orders *orderCache // the shared fill-reducing order, made on first solve
}

// Size returns n, the number of unknowns.
func (s *System) Size() int { return len(s.Unknowns) }

// Unknown indices, node by node and part by part, kept by Build so that
// later layers (and Structure) need not parse the names in Unknowns.
// nodeIndex maps a node name (never Ground) to its row; branchIndex maps
// a part name to the row of its branch current, for parts that have one.
type index struct {
	nodeIndex   map[string]int
	branchIndex map[string]int
	nodeNames   []string // nodeNames[i] is the node of row i, i < len(nodeNames)
	edges       []edge   // the circuit's conducting branches, for Structure
}

// NodeIndex returns the row of node's voltage in x, or -1 for Ground or an
// unknown name.
func (s *System) NodeIndex(node string) int {
	if i, ok := s.idx.nodeIndex[node]; ok {
		return i
	}
	return -1
}

// BranchIndex returns the row of the branch current of part in x, or -1 when
// the part has no branch current in this system.
func (s *System) BranchIndex(part string) int {
	if i, ok := s.idx.branchIndex[part]; ok {
		return i
	}
	return -1
}

// NodeCount returns the number of node-voltage unknowns; they come first
// in x, the branch currents after them.
func (s *System) NodeCount() int { return len(s.idx.nodeNames) }
