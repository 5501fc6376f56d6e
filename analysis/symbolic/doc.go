// Package symbolic derives a circuit's transfer function H(s) = N(s)/D(s)
// in the parts' own names: N and D are polynomials in s whose coefficients
// are exact polynomials, with rational coefficients, in part values (R1, C2,
// LP1.L3), controlled-source gains (Gain1) and op-amp parameters (U1.a0).
//
// # Method
//
// The circuit is written as a modified nodal analysis (MNA) system
// Y(s)·x = B·u, y = L·x + F·u over the ring Q[symbols, s]. Resistors are
// stamped as conductances G = 1/R held as auxiliary symbols; every entry of
// Y is then a polynomial. By Cramer's rule
//
//	H(s) = −det [Y B; L −F] / det Y
//
// and both determinants are computed exactly, without rounding: by
// expansion by minors with every minor memoised (the default for up to 62
// unknowns, measured faster on sparse MNA matrices) or by fraction-free
// (Bareiss) elimination with exact multivariate division (Options.Method;
// both give identical polynomials). A resistor's conductance enters a rank-one stamp,
// so each determinant is affine (degree ≤ 1) in every G. Multiplying N and D
// by the product of all resistances and replacing G by 1/R therefore maps
// every monomial to a monomial with R in the numerator: the result reads as
// an engineer writes it, with no division anywhere.
//
// # Symbols
//
//   - resistor, capacitor, inductor, controlled source (its gain): the part name
//     ("R1", "C2", "Gain1"); capacitors enter as s·C, inductors as a branch
//     v = s·L·i, so L is polynomial too.
//   - coupling: the mutual inductance M = K·√(L1·L2) is not polynomial in
//     K, L1 and L2, so it is its own symbol, the coupling's name followed by
//     ".M" ("Link1.M"). When it is substituted numerically it uses the nominal
//     inductances.
//   - opamp: an ideal op-amp (no a0, no gbw) is a nullor (v+ = v−, free
//     output current) and contributes no symbol. A finite DC gain is the
//     symbol NAME.a0 ("U1.a0"); an output resistance NAME.rout. A
//     gain-bandwidth product enters as ωt = 2π·gbw in rad/s, symbol
//     NAME.wt; it is substituted numerically unless Options.Keep names
//     "NAME.wt" explicitly. An ideal op-amp's rout has no effect (the
//     nullor fixes the loop) and is ignored.
//   - s is the Laplace variable in rad/s; no part may be named "s".
//
// Options.Keep keeps only the named symbols (a part name keeps all symbols
// of that part) and substitutes every other value numerically, as the exact
// rational given by the shortest decimal that round-trips to the float64
// value (strconv 'g', -1).
//
// # Cancellation
//
// Common factors of N and D are removed when they are: the common monomial
// factor (including powers of s), the common rational content, and any
// polynomial among a set of cheap candidates (the distinct MNA entries, the
// Bareiss pivots and the s-coefficients of N and D) that divides both
// exactly. The result is not guaranteed to be in lowest terms: a common
// factor that is none of these candidates stays.
//
// # Normalisation
//
// After cancellation the lowest-order non-zero coefficient of D reads "1"
// when it is a single term free of symbols; when it is a single term c·m it
// is divided by c; otherwise N and D are scaled so that all coefficients are
// coprime integers and the first displayed term of that coefficient is
// positive.
package symbolic
