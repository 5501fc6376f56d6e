package mna_test

import (
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// TestRoundingResidueIsNoPivot: the input impedance of the README's
// Sallen-Key low-pass with an ideal op-amp (the source removed) is
// singular at s = 0 by its topology (nodes in, a, b reach ground only
// through capacitors: Structure, common practice), yet its stamped
// diagonal 1/10k + 1/22k is rounded, so elimination leaves a residue of
// ε beside 0.74 in one column that, kept as a multiplier, made the last
// pivot 1.1e-16 with magnitudes |L|·|U| as small (H(0) = 1.5e20 Ω came
// out). The componentwise rule drops such residues in every column
// (Higham 2002, Theorem 9.3), on the dense and the sparse path alike,
// while a slow but genuine pivot (a 1 TΩ leak beside 100 Ω, 10⁻¹⁰ of
// its column) stays.
func TestRoundingResidueIsNoPivot(t *testing.T) {
	const lowpass = `title "treble-cut low-pass (ideal op-amp)"
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 10k
R2: resistor (a, b) 22k
C1: capacitor (a, out) 10nF
C2: capacitor (b, gnd) 4.7nF
U1: opamp (b, out, out)
`
	const electrometer = `title "electrometer into a slow filter"
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 1T
C1: capacitor (a, gnd) 1p
R2: resistor (a, out) 100
C2: capacitor (out, gnd) 1m
`
	for _, cs := range []struct {
		name, src string
		probe     mna.Probe
		singular  bool
	}{
		{"Sallen-Key input impedance", lowpass, mna.SourceImpedance("Vin"), true},
		{"electrometer", electrometer, mna.Probe{Ob: mna.Output{Kind: mna.NodeVoltage, Node: "out"}}, false},
	} {
		c, err := netlist.Load(cs.name, []byte(cs.src), nil)
		if err != nil {
			t.Fatal(err)
		}
		sys, err := mna.Build(c, cs.probe.Ex, cs.probe.Ob)
		if err != nil {
			t.Fatal(err)
		}
		if got := len(sys.DCSingular) > 0; got != cs.singular {
			t.Fatalf("%s: structure says DC singular %v (%v), want %v", cs.name, got, sys.DCSingular, cs.singular)
		}
		for path, w := range map[string]*mna.Sweeper{"dense": mna.NewDenseSweeper(sys), "sparse": mna.NewSparseSweeper(sys)} {
			h, _, err := w.Eval(0)
			if (err != nil) != cs.singular {
				t.Errorf("%s, %s path: H(0) = %v, error %v; want singular %v", cs.name, path, h, err, cs.singular)
			}
		}
		if err := mna.NewShiftSolver(sys).Factor(0); (err != nil) != cs.singular {
			t.Errorf("%s: ShiftSolver.Factor(0) error %v, want singular %v", cs.name, err, cs.singular)
		}
	}
}
