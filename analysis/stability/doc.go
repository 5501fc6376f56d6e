// Package stability decides whether a circuit is stable from its natural
// frequencies: every finite generalised eigenvalue of the MNA pencil
// (G, C), that is every root of det(G + sC), s in rad/s. The pencil is the
// whole circuit with every independent source zeroed, so a mode that
// cancels out of one transfer function (uncontrollable from its input or
// unobservable at its output) is still counted: it still runs away inside
// the circuit.
//
// Convention: a circuit is Stable when every natural frequency lies in the
// open left half-plane, Marginal when the rightmost ones lie on the jω
// axis and are simple (an ideal integrator, a lossless tank), Unstable
// otherwise (a right half-plane frequency, or a repeated one on the axis).
// Past MaxUnknowns unknowns (large.go) a circuit may also be Passive (no
// natural frequency in the right half-plane, proven from its parts, but
// not proven strictly stable) or Unchecked (an active block too large to
// solve in which no unstable frequency was found); Result.Reason says how
// a class was reached and Result.AllNatural whether every natural
// frequency was computed.
//
// The package depends on mna, netlist, transfer (the block triangular
// form) and gonum; it never prints.
package stability
