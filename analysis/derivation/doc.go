// Package derivation parses a hand-written derivation — an ordinary
// differential equation or a transfer function in s — and reduces it to a
// rational transfer function H(s) = N(s)/D(s) whose coefficients are
// expressions in the circuit's parameter and part names.
//
// # Input forms
//
// An ODE (ParseODE) is two expressions joined by "=":
//
//	R1*C1*y' + y = u
//	2.2e-7*y'' + 3.3e-4*dy/dt + y = 5*u
//	d^2y/dt^2 + 2*zeta*w0*dy/dt + w0^2*y = w0^2*u
//	y^(3) + a2*y'' + a1*y' + a0*y = b0*u
//	y' = (u - y)/(R1*C1)
//
// A transfer function (ParseTF) is one expression in s, optionally
// preceded by "H(s) =" (any single name applied to s):
//
//	1/(1 + s*R1*C1)
//	(s*R2*C1)/(1 + s*(R1*C1+R2*C2) + s^2*R1*R2*C1*C2)
//
// # Lexical rules
//
//   - Numbers: the number token every nodal grammar shares
//     (syntax.ParseNumber), read exactly as in a circuit file: a decimal
//     with optional exponent, SI prefix (f p n u µ m k M G T; case
//     matters: m is milli, M is mega), IEC 60062 code (4k7, 1k5, 4n7) and
//     attached unit (2kHz, 10kΩ, 100nF): 4.7k, 10n, 2.2e-7, 1.5M, 100µ.
//     The unit documents the value and does not change it. In a transfer
//     function a number may not carry the unit s (2s, 2ms): next to the
//     Laplace variable that is a missing "*".
//   - Names: letters, digits and _, dotted for hierarchy (LP1.R1). The name
//     pi is the constant π; sqrt(x) is the only function. In a transfer
//     function the name s is always the Laplace variable (rad/s).
//   - Derivatives, each one token (no spaces inside except around the "/"
//     of the Leibniz form). A parenthesised integer literal after ^ is a
//     derivative order in an ODE (write R^2 for a power; in a transfer
//     function s^(2) is a power). "dNAME/dt" is always a derivative, never
//     a division, and its orders above and below must match. The forms:
//     y' (and more primes), y^(3), dy/dt, d^2y/dt^2, d2y/dt2.
//   - Printed notation, so what nodal prints pastes back: the product dot
//     · (and ×), the minus sign − (U+2212), primes ′ ″ ‴ ⁗ (1 to 4
//     derivatives), the order y⁽⁴⁾, superscript powers s² s⁻³, and square
//     brackets as parentheses.
//   - Precision: a literal is read to half a unit in its last written digit
//     (Number.Tol; 59.97e-9 is ±0.005e-9), whole numbers without exponent,
//     prefix or unit are exact; literal arithmetic folds exactly in
//     big.Rat (Number.Exact) and propagates the precision to first order;
//     Rational.Precision gives it per coefficient.
//   - Operators + - * / ^ and parentheses; ^ binds tighter than unary minus
//     (-x^2 is -(x^2)) and is right-associative. There is no implicit
//     multiplication: write 2*s, not 2s.
//
// # Signals: which name is the output and which the input (ODE)
//
// A name is a signal when it appears with a derivative notation anywhere,
// or when the caller's Known predicate does not resolve it as a parameter
// or part (Signals.Output and Signals.Input name them explicitly instead).
// The output is the signal differentiated on the left-hand side (the
// highest order wins); when nothing is differentiated on the left, the
// first signal on the left. The input is the other signal. Exactly two
// signals are allowed, so a mistyped part name (R11) is reported as an
// unknown name. Terms may stand on either side: output terms are moved to
// the left and input terms to the right. A derivative of the input on the
// left-hand side is rejected (it is ambiguous and almost always a slip);
// plain input terms on the left are moved. The equation must be linear in
// the signals: no products of signals, no signal in a denominator, power
// or sqrt, no constant term.
//
// # Result
//
// Both forms reduce to a Rational: ascending coefficient lists Num and Den
// (index k is the coefficient of s^k) whose entries are coefficient
// expressions (Expr) free of signals and of s. Rational.Evaluate
// substitutes numeric values through a lookup function.
//
// # AST node set
//
// Every node carries its source position (Pos). Expressions (Expr) are:
// *Number (a literal or pi), *Name (a parameter, part, signal or s),
// *Deriv (a derivative of a signal, order ≥ 1), *Unary (negation),
// *Binary (+ - * / ^) and *Call (sqrt). An ODE parses to an *Equation
// (Left, Right), a transfer function to a *TF (Expr). Coefficient
// expressions in a Rational use only *Number, *Name, *Unary, *Binary and
// *Call. Walk visits a tree depth-first.
//
// Errors are syntax.ErrorList values positioned as NAME:LINE:COL, for
// example `ode:1:12: expected a term after "+"`.
package derivation
