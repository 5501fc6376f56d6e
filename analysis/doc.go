// Package analysis is the root of the analyses nodal runs on an MNA
// system; it holds no code of its own, only its subpackages, each owning
// one concern:
//
//   - response: frequency grids and sweeps (Response: H at frequencies).
//   - transfer: the transfer function, its extraction, poles and zeros,
//     and its features (pairs, f0, Q, −3 dB, peak, DC gain, ODE, metrics).
//   - timeresp: step and impulse responses by partial fractions.
//   - transient: the integration of the full sparse descriptor system
//     (TR-BDF2 with Richardson extrapolation) and the check of a step or
//     impulse response's samples against it.
//   - steady: the steady state under a sum of sinusoids and a DC level.
//   - check: comparing a hand derivation with the circuit's transfer
//     function.
//   - variation: tolerance runs (Monte Carlo, worst case, sensitivity,
//     Bode envelope) over a circuit's toleranced values.
//   - require: requirement verdicts and the verification run.
//   - stdvalue: standard values (E-series) and rounding a circuit to them.
//   - symbolic, derivation, signal: exact symbolic analysis, the grammar
//     of hand derivations and the grammar of drive signals.
//
// No package here prints, reads flags or touches files.
package analysis
