// Package check owns the comparison of a hand derivation (numerator and
// denominator coefficients) with the circuit's transfer function:
// coefficient rows, matched poles and zeros, the largest magnitude and phase
// difference over frequency, and a diagnosis of the slip that explains a
// mismatch (a lost factor 2π, a sign, a swapped part).
package check
