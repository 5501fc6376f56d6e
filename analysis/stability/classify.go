package stability

import (
	"cmp"
	"errors"
	"fmt"
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
	// are simple; none is in the right half-plane.
	Marginal
	// Unstable: a natural frequency in the right half-plane, or a repeated
	// one on the jω axis.
	Unstable
	// Unchecked: the circuit has more than MaxUnknowns unknowns, past which
	// nodal does not solve the dense eigenvalue problem of its natural
	// frequencies; nothing is claimed, and no requirement on stability
	// passes.
	Unchecked
)

// MaxUnknowns is the size of the largest MNA system whose natural
// frequencies are computed (a dense eigenvalue problem, O(n³)).
const MaxUnknowns = 1000

// ErrUnchecked is the error of a stability question about a circuit past
// MaxUnknowns.
var ErrUnchecked = fmt.Errorf("stability not checked: the circuit has more than %d unknowns", MaxUnknowns)

// String is the word used in output and JSON: "stable", "marginal" or
// "unstable".
func (c Class) String() string {
	switch c {
	case Marginal:
		return "marginal"
	case Unstable:
		return "unstable"
	case Unchecked:
		return "not checked"
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
