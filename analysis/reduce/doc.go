// Package reduce finds the dominant poles and zeros of a large MNA system
// — those that shape its response over a frequency range — as the roots
// of a reduced model of small order, and verifies that model against
// direct sparse solves of the full system before returning it.
//
// The method is multi-point rational Krylov projection in the manner of
// PRIMA (Odabasioglu, Celik and Pileggi, "PRIMA: passive reduced-order
// interconnect macromodeling algorithm", IEEE TCAD 17 (1998)): an
// orthonormal basis V of the Krylov spaces of (G + s_i·C)⁻¹·C started at
// (G + s_i·C)⁻¹·B, for expansion points s_i on the real axis and on the jω
// axis, is built with the sparse LU at each point (Arnoldi's
// orthogonalisation, Gram-Schmidt applied twice); the congruence
// Gr = VᵀGV, Cr = VᵀCV, Br = VᵀB, Lr = VᵀL gives the reduced model
// Hr(s) = Lrᵀ(Gr + sCr)⁻¹Br. Its poles are the eigenvalues of the small
// pencil (Gr, Cr), its zeros those of the pencil bordered by Br and Lr.
// Each expansion point matches moments of H there; V holds B's own
// directions, and for an RC or RLC network (G + Gᵀ and C positive
// semi-definite) the congruence keeps the reduced pencil passive, so its
// poles are stable.
//
// The order grows until the reduced H(s), rebuilt from its printed gain,
// poles and zeros, matches H(jω) from direct solves at every point of a
// dense check grid over the range within the tolerances (0.01 dB and 0.1°
// by default); a new expansion point goes where the error is largest
// (greedy placement). No model is returned that failed the check.
package reduce
