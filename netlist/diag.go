package netlist

import "nodal/netlist/syntax"

// The positions and diagnostics of the circuit language are those of the
// text toolkit every grammar shares (package syntax); these names are the
// same types, so a circuit diagnostic and a --ode diagnostic read alike.

// Pos is a position in a source file (syntax.Pos): Line and Col count
// from 1, Col in runes; Offset is the byte offset.
type Pos = syntax.Pos

// Severity says whether a diagnostic stops elaboration (syntax.Severity).
type Severity = syntax.Severity

const (
	// SevError makes Parse or Elaborate fail.
	SevError = syntax.SevError
	// SevWarning is reported but does not fail.
	SevWarning = syntax.SevWarning
)

// Diagnostic is one positioned message about the circuit text
// (syntax.Diagnostic): FILE:LINE:COL: message, the line and a caret.
type Diagnostic = syntax.Diagnostic

// ErrorList is a list of diagnostics, like go/scanner.ErrorList
// (syntax.ErrorList).
type ErrorList = syntax.ErrorList
