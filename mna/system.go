// Package mna builds and solves the modified nodal analysis (MNA) system
// Y(s) = G + sC of a netlist.Circuit.
package mna

import "gonum.org/v1/gonum/mat"

// OutputKind says what an Output observes.
type OutputKind int

const (
	// NodeVoltage observes v(Node) − v(Ref).
	NodeVoltage OutputKind = iota
	// PartCurrent observes the current through a two-terminal part, flowing
	// into its first terminal and out of its second (for an opamp: the
	// current its output pushes into the output node).
	PartCurrent
)

// Output names the observed quantity y.
type Output struct {
	Kind OutputKind
	Node string // NodeVoltage: the node (Ground allowed only as Ref)
	Ref  string // NodeVoltage: the reference node; "" means Ground
	Part string // PartCurrent: the part's hierarchical name
}

// Input names the excitation u: the independent source whose small-signal
// amplitude is set to 1 (phase 0) while every other independent source is
// set to zero. Source "" (with Inject "") means the circuit's only source.
//
// With Inject set, u is instead a unit test current pushed into node Inject
// from Ground with every independent source zeroed (voltage sources
// shorted, current sources opened), as used for output impedance.
type Input struct {
	Source string
	Inject string
}

// System is the MNA system of one circuit for one input and one output:
//
//	(G + sC)·x = B·u,  y = L·x
//
// so that H(s) = y/u = L·(G + sC)⁻¹·B. G and C are real n×n, B and L real
// length-n vectors. x holds the node voltages (reference removed, in the
// circuit's node order) then the branch currents.
//
// Invariants: len(Unknowns) == n; Unknowns[i] names row/column i as
// "v(NODE)" or "i(PART)" (a branch current).
type System struct {
	Unknowns []string
	G, C     *mat.Dense
	B, L     []float64

	Input  Input  // the resolved source name
	Output Output // the resolved output
	// SourceAmplitude is the complex small-signal amplitude the file gives
	// the input source (amplitude·e^{j·phase}); H is per unit of it.
	SourceAmplitude complex128

	// DCSingular lists, after Structure, what makes the system singular at
	// s = 0 only (a node reached only through capacitors, a loop of
	// inductors and voltage sources). It is information, not an error: the
	// response is defined at every s ≠ 0. Empty when Y(0) is regular.
	DCSingular []string

	idx index
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
