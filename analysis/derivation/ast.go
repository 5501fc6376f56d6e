package derivation

import (
	"math/big"
	"strconv"
	"strings"

	"nodal/netlist/syntax"
)

// Pos is a source position: File is the name given to the parser, Line and
// Col count from 1 (Col in runes), Offset is the byte offset. A zero Pos
// marks a node synthesised by the reduction (for example an implicit 1).
type Pos = syntax.Pos

// Node is any node of the derivation AST.
type Node interface {
	// Position returns where the node starts in the source.
	Position() Pos
}

// Expr is an expression node: *Number, *Name, *Deriv, *Unary, *Binary or
// *Call.
type Expr interface {
	Node
	exprNode()
}

// Number is a numeric literal in SI units (prefix applied: 4.7k has Value
// 4700) or the constant pi. Text is the source spelling ("" when
// synthesised). Exact, when not nil, is the exact rational value (a
// literal's decimal, or literal arithmetic folded exactly); Value is then
// its nearest float64. It is nil for pi and for a constant folded from
// one, and for a fold whose exact form grew too long.
//
// Tol is the precision the literal was written to, an absolute SI value:
// half a unit in its last written digit (4.478e-21 is ±0.0005e-21, 4k7
// ±50, 2.2µ ±0.05µ), 0 for a whole number written without exponent,
// prefix or unit (1, 2, 1500000000: exact) and for pi. Folding literal
// arithmetic propagates it to first order.
type Number struct {
	At    Pos
	Value float64
	Text  string
	Exact *big.Rat
	Tol   float64
}

// Name is a parameter, part (dotted hierarchical names such as LP1.R1),
// signal or, in a transfer function, the Laplace variable s.
type Name struct {
	At   Pos
	Name string
}

// Deriv is the Order-th time derivative (Order ≥ 1) of the signal Name,
// whatever the notation (y', y^(2), d^2y/dt^2).
type Deriv struct {
	At    Pos
	Name  string
	Order int
}

// Unary is a negation: Op is '-' (a unary plus is dropped by the parser).
type Unary struct {
	At Pos
	Op byte
	X  Expr
}

// Binary is X Op Y with Op one of '+', '-', '*', '/', '^'. At is the
// position of the operator (as go/ast's OpPos), which is where errors
// about the operation point.
type Binary struct {
	At   Pos
	Op   byte
	X, Y Expr
}

// Call is Fun(Arg); Fun is "sqrt", the only function.
type Call struct {
	At  Pos
	Fun string
	Arg Expr
}

// Equation is a parsed ODE: Left = Right.
type Equation struct {
	At          Pos
	Left, Right Expr
	// Src is the source text, kept for error messages.
	Src string
}

// TF is a parsed transfer function: Expr is a rational expression in s.
type TF struct {
	At   Pos
	Expr Expr
	Src  string
}

// Position returns the source position of the number literal (its At field).
func (n *Number) Position() Pos { return n.At }

// Position returns the source position of the name (its At field).
func (n *Name) Position() Pos { return n.At }

// Position returns the source position of the derivative (its At field).
func (n *Deriv) Position() Pos { return n.At }

// Position returns the source position of the unary minus (its At field).
func (n *Unary) Position() Pos { return n.At }

// Position returns the source position of the binary expression's operator (its At field).
func (n *Binary) Position() Pos { return n.At }

// Position returns the source position of the function name of the call (its At field).
func (n *Call) Position() Pos { return n.At }

// Position returns the source position of the equation (its At field).
func (n *Equation) Position() Pos { return n.At }

// Position returns the source position of the transfer-function expression (its At field).
func (n *TF) Position() Pos { return n.At }

func (*Number) exprNode() {}
func (*Name) exprNode()   {}
func (*Deriv) exprNode()  {}
func (*Unary) exprNode()  {}
func (*Binary) exprNode() {}
func (*Call) exprNode()   {}

// Walk visits n and then its children depth-first, left to right, calling
// fn on each; when fn returns false the children of that node are skipped.
func Walk(n Node, fn func(Node) bool) {
	if n == nil || !fn(n) {
		return
	}
	switch n := n.(type) {
	case *Unary:
		Walk(n.X, fn)
	case *Binary:
		Walk(n.X, fn)
		Walk(n.Y, fn)
	case *Call:
		Walk(n.Arg, fn)
	case *Equation:
		Walk(n.Left, fn)
		Walk(n.Right, fn)
	case *TF:
		Walk(n.Expr, fn)
	}
}

// Format writes e in the package's own input syntax with the fewest
// parentheses that keep its meaning; parsing the result gives an
// equivalent tree. Derivatives are written with primes.
func Format(e Expr) string {
	var b strings.Builder
	format(&b, e, 0)
	return b.String()
}

// precedence levels: 1 + -, 2 * /, 3 unary, 4 ^, 5 atoms.
func prec(e Expr) int {
	switch e := e.(type) {
	case *Binary:
		switch e.Op {
		case '+', '-':
			return 1
		case '*', '/':
			return 2
		default:
			return 4
		}
	case *Unary:
		return 3
	case *Number:
		if e.Value < 0 {
			return 3
		}
	}
	return 5
}

func format(b *strings.Builder, e Expr, min int) {
	p := prec(e)
	if p < min {
		b.WriteByte('(')
		defer b.WriteByte(')')
	}
	switch e := e.(type) {
	case *Number:
		if e.Text != "" {
			b.WriteString(e.Text)
		} else {
			b.WriteString(strconv.FormatFloat(e.Value, 'g', -1, 64))
		}
	case *Name:
		b.WriteString(e.Name)
	case *Deriv:
		b.WriteString(e.Name)
		b.WriteString(strings.Repeat("'", e.Order))
	case *Unary:
		b.WriteByte('-')
		format(b, e.X, 3)
	case *Call:
		b.WriteString(e.Fun)
		b.WriteByte('(')
		format(b, e.Arg, 0)
		b.WriteByte(')')
	case *Binary:
		switch e.Op {
		case '^': // right-associative: a^(b^c) needs no parentheses
			format(b, e.X, 5)
			b.WriteByte('^')
			format(b, e.Y, 3)
		default: // left-associative: the right operand needs a higher level
			format(b, e.X, p)
			if p == 1 {
				b.WriteString(" " + string(e.Op) + " ")
			} else {
				b.WriteByte(e.Op)
			}
			format(b, e.Y, p+1)
		}
	}
}
