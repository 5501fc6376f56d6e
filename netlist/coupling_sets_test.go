package netlist

import (
	"strings"
	"testing"
)

// TestCouplingSets: the inductance matrix of coupled coils must be
// positive semidefinite (stored energy ½·iᵀLi ≥ 0, common practice). With
// unit diagonal and −k on every pair of three coils the eigenvalues of
// the coupling matrix are 1 − 2k and 1 + k (twice), so −0.8 for k = 0.9;
// the signs (k, k, −k) are the same matrix with one coil's dot reversed.
// Three perfect couplings (K = 1) are singular but valid (from memory).
func TestCouplingSets(t *testing.T) {
	const head = "Vin: voltage source (in, gnd) 1\nR1: resistor (in, a) 50\nL1: inductor (a, gnd) 1m\nL2: inductor (b, gnd) 1m\nL3: inductor (c, gnd) 1m\nR2: resistor (b, gnd) 50\nR3: resistor (c, gnd) 50\n"
	cases := []struct {
		name, couplings, want string
	}{
		{"three at 0.5", "Ka: coupling (L1, L2) 0.5\nKb: coupling (L2, L3) 0.5\nKc: coupling (L1, L3) 0.5\n", ""},
		{"three perfect", "Ka: coupling (L1, L2) 1\nKb: coupling (L2, L3) 1\nKc: coupling (L1, L3) 1\n", ""},
		{"signs 0.9 0.9 -0.9", "Ka: coupling (L1, L2) 0.9\nKb: coupling (L2, L3) 0.9\nKc: coupling (L1, L3) -0.9\n",
			"test.nodal:8:1: coupling Ka: the couplings Ka = 0.9 (L1, L2), Kb = 0.9 (L2, L3), Kc = -0.9 (L1, L3) give an inductance matrix that is not positive semidefinite (smallest eigenvalue of the coupling matrix -0.8)"},
		{"all -0.9", "Ka: coupling (L1, L2) -0.9\nKb: coupling (L2, L3) -0.9\nKc: coupling (L1, L3) -0.9\n", "smallest eigenvalue of the coupling matrix -0.8"},
		{"two on one pair", "Ka: coupling (L1, L2) 0.3\nKb: coupling (L2, L1) 0.3\n", "test.nodal:9:1: coupling Kb: couples L1 and L2, which Ka already couples"},
	}
	for _, tc := range cases {
		_, err := Load("test.nodal", []byte(head+tc.couplings), nil)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%s: %v", tc.name, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%s: error %v, want %q", tc.name, err, tc.want)
		}
	}
}
