package transfer

import (
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// TestExtractProbeClosedForms: the extracted H of every probe kind
// (testcircuit.ProbeClosedForms) and of impedances with a pole at s = 0
// equals its closed form (common practice: series and parallel
// impedances) to 1e-12 relative around its roots. An impedance with a
// pole at s = 0 is the case that needs it: the unrounded origin pole
// (10⁻¹² of the characteristic frequency) must not centre a second pass
// 10⁻⁶ below every other root, where the gain point's G + sC rounds away
// the capacitors' admittances and the gain loses digits (10⁻¹⁰…10⁻⁸).
func TestExtractProbeClosedForms(t *testing.T) {
	cases := testcircuit.ProbeClosedForms()
	const r, c = 10e3, 100e-9
	// Zin of the Wien network: R + 1/(sC) + R ∥ 1/(sC), poles 0 and −1/(RC).
	cases = append(cases, testcircuit.ProbeCase{Name: "Zin of the Wien network", Circuit: testcircuit.Wien(r, c), Probe: mna.SourceImpedance("Vs"),
		Want: func(s complex128) complex128 { return r + 1/(s*c) + 1/(1/r+s*c) }})
	for _, tc := range cases {
		t.Run(tc.Name, func(t *testing.T) {
			sys, err := mna.Build(tc.Circuit, tc.Probe.Ex, tc.Probe.Ob)
			if err != nil {
				t.Fatal(err)
			}
			tf := mustExtract(t, sys)
			for _, w := range []complex128{100i, 1e3i, complex(-300, 700), 1e4i, complex(2e3, -5e4)} {
				got, want := tf.EvalFactored(w), tc.Want(w)
				if d := cmplx.Abs(got - want); d > 1e-12*cmplx.Abs(want) {
					t.Errorf("H(%v) = %v, want %v (rel %.2g)", w, got, want, d/cmplx.Abs(want))
				}
			}
		})
	}
}
