package stability

import (
	"cmp"
	"errors"
	"math"
	"math/cmplx"
	"slices"
)

// ErrUnstable marks a circuit whose natural frequencies are not all in
// the open left half-plane: its response metrics do not exist (no steady
// state). The tolerance engines count such runs; verify fails them.
var ErrUnstable = errors.New("the circuit is not stable")

// Class is the stability of a circuit (see the package comment).
type Class int

const (
	// Stable: every natural frequency in the open left half-plane.
	Stable Class = iota
	// Marginal: the rightmost natural frequencies lie on the jω axis and
	// are simple, or repeated with as many independent modes as their
	// multiplicity (ofMatrices, semisimpleAxis); none is in the right
	// half-plane.
	Marginal
	// Unstable: a natural frequency in the right half-plane, or a repeated
	// one on the jω axis (Classify; ofMatrices makes it Marginal when the
	// repeated root is semisimple).
	Unstable
	// Unchecked: the circuit has more than MaxUnknowns unknowns and a
	// diagonal block of its pencil larger than MaxUnknowns with active
	// parts in it, where nodal found no natural frequency in the right
	// half-plane but cannot prove there is none (Result.Reason says so);
	// nothing is claimed, and no requirement on stability passes.
	Unchecked
	// Passive: proven to have every natural frequency in the closed left
	// half-plane, those on the jω axis simple, by the passivity of the
	// parts (passive.go), but not proven strictly inside it (a lossless
	// mode or a frequency at s = 0 is possible; Result.Reason says which).
	// Not Stable: no requirement on stability passes.
	Passive
)

// MaxUnknowns is the size of the largest system, or of the largest
// diagonal block of its block triangular form, whose natural frequencies
// are computed (a dense eigenvalue problem, O(n³)).
const MaxUnknowns = 1000

// ErrUnchecked is the error of a stability question nodal cannot answer
// (the classes Unchecked and Passive); it is wrapped with the reason.
var ErrUnchecked = errors.New("stability not proven")

// Reason says how a Result was reached.
type Reason int

const (
	// ReasonComputed: every natural frequency was computed (Natural), as
	// one pencil or block by block.
	ReasonComputed Reason = iota
	// ReasonPassive: every part is passive (resistors, capacitors,
	// inductors and couplings of positive values, zeroed sources), the
	// circuit has no natural frequency at s = 0 and none on the jω axis
	// by the propagation of passive.go: strictly stable, with no
	// frequency computed.
	ReasonPassive
	// ReasonPassiveZero: every part is passive and s = 0 is a natural
	// frequency (a node reached only through capacitors and current
	// sources, or a loop of inductors and voltage sources).
	ReasonPassiveZero
	// ReasonPassiveLossless: every part is passive; a lossless mode on the
	// jω axis is not ruled out (an inductor or capacitor no resistor
	// damps, as seen by the propagation).
	ReasonPassiveLossless
	// ReasonPassiveBlock: a diagonal block larger than MaxUnknowns holds
	// only passive stamps (closed half-plane); the other blocks were
	// computed and are stable or marginal.
	ReasonPassiveBlock
	// ReasonPassiveBlocks: every diagonal block larger than MaxUnknowns
	// holds only passive stamps and is proven strictly stable as
	// ReasonPassive proves a whole circuit; the other blocks were computed
	// (Natural) and decide the class.
	ReasonPassiveBlocks
	// ReasonFound: a natural frequency in the right half-plane was found
	// in a large block by shift-and-invert Arnoldi and checked by its
	// residual (Result.Backward); Natural holds only the frequencies found
	// and those of the blocks computed.
	ReasonFound
	// ReasonSomeNatural: a computed block is unstable; a larger block was
	// not fully computed.
	ReasonSomeNatural
	// ReasonNotFound: a diagonal block larger than MaxUnknowns has active
	// parts; shift-and-invert Arnoldi over Result.SearchedRad found no
	// natural frequency in the right half-plane, which proves nothing.
	ReasonNotFound
	// ReasonRepeatedAxis: every natural frequency was computed, block by
	// block, and some are repeated on the jω axis across blocks spanning
	// more than MaxUnknowns unknowns, so whether they have as many modes
	// as their multiplicity (marginal) or form a Jordan chain (unstable)
	// was not decided.
	ReasonRepeatedAxis
)

// String is the reason in words, without figures (cmd/nodal adds them).
func (r Reason) String() string {
	switch r {
	case ReasonPassive:
		return "every part is passive and no natural frequency can lie on the jω axis"
	case ReasonPassiveZero:
		return "every part is passive, and s = 0 is a natural frequency (a node reached only through capacitors or current sources, or a loop of inductors and voltage sources)"
	case ReasonPassiveLossless:
		return "every part is passive, but a lossless mode on the jω axis is not ruled out"
	case ReasonPassiveBlock:
		return "a block of the circuit too large to solve holds only passive parts, which keeps its natural frequencies in the closed left half-plane but does not prove them strictly inside"
	case ReasonPassiveBlocks:
		return "every block of the circuit too large to solve holds only passive parts and can have no natural frequency on the jω axis; the other blocks were solved"
	case ReasonFound:
		return "a natural frequency in the right half-plane was found by shift-and-invert Arnoldi and checked by its residual"
	case ReasonSomeNatural:
		return "a block of the circuit has a natural frequency in the right half-plane or repeated on the jω axis"
	case ReasonNotFound:
		return "a block of the circuit too large to solve has active parts; shift-and-invert Arnoldi found no natural frequency in the right half-plane, which does not prove there is none"
	case ReasonRepeatedAxis:
		return "a natural frequency is repeated on the jω axis across blocks too large to solve together, so whether it has as many modes as its multiplicity (marginal) or grows (unstable) was not decided"
	}
	return "every natural frequency was computed"
}

// String is the word used in output and JSON: "stable", "marginal",
// "unstable", "not checked" or "passive".
func (c Class) String() string {
	switch c {
	case Marginal:
		return "marginal"
	case Unstable:
		return "unstable"
	case Unchecked:
		return "not checked"
	case Passive:
		return "passive"
	}
	return "stable"
}

// Tolerances of Classify (dimensionless).
const (
	// AxisTol: |Re λ| at or below AxisTol·|λ| is on the jω axis (a tank
	// with Q above about 5·10⁸ counts as lossless).
	AxisTol = 1e-9
	// repeatTol: two axis frequencies closer than repeatTol times the
	// larger magnitude are one repeated frequency (two exact zeros are).
	repeatTol = 1e-6
)

// Classify snaps roots on the jω axis within AxisTol, sorts them by
// decreasing real part, and returns the class with the offending roots:
// for Unstable every root in the closed right half-plane, for Marginal
// those on the axis, for Stable none. roots is changed in place. A root
// at s = 0 must be exactly 0 (FiniteEigenvalues decides it by a rank
// test); no magnitude is judged "zero" here, so the class does not depend
// on the units of the circuit's values.
func Classify(roots []complex128) (Class, []complex128) {
	for i, r := range roots {
		if imag(r) != 0 && math.Abs(real(r)) <= AxisTol*cmplx.Abs(r) {
			roots[i] = complex(0, imag(r))
		}
	}
	slices.SortStableFunc(roots, func(a, b complex128) int {
		if c := cmp.Compare(real(b), real(a)); c != 0 {
			return c
		}
		return cmp.Compare(imag(b), imag(a))
	})
	var axis, right []complex128
	for _, r := range roots {
		switch {
		case real(r) > 0:
			right = append(right, r)
		case real(r) == 0:
			axis = append(axis, r)
		}
	}
	repeated := false
	for i := range axis {
		for j := i + 1; j < len(axis); j++ {
			sc := repeatTol * math.Max(cmplx.Abs(axis[i]), cmplx.Abs(axis[j]))
			if cmplx.Abs(axis[i]-axis[j]) <= sc {
				repeated = true
			}
		}
	}
	switch {
	case len(right) > 0 || repeated:
		return Unstable, append(right, axis...)
	case len(axis) > 0:
		return Marginal, axis
	}
	return Stable, nil
}
