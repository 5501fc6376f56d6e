// Package transfer owns the rational transfer function H(s) of a circuit:
// its extraction from the MNA system (Extract), its poles and zeros (the
// finite eigenvalues of the pencil), and the features an engineer reads off
// it: second-order pairs with f0 and Q, corners, asymptotes, the −3 dB
// frequency, the peak, the DC gain, the ODE it satisfies, and the metrics
// (gain@F, f3db, q ...) that requirements and tolerance runs judge. s and ω
// are in rad/s; names that say Hz, dB or Deg are in those units.
package transfer
