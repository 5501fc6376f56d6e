package response

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// ladderLog10Mag estimates log10|H| of a uniform RC ladder of k sections at
// f Hz from the eigenvalue λ of one section's chain matrix
// (λ + 1/λ = 2 + jωRC; |H| ≈ 2/|λ|^k far above the corner: the uniform
// ladder as a cascade of identical two-ports, common practice).
func ladderLog10Mag(k int, r, c, fHz float64) float64 {
	x := 2 + complex(0, 2*math.Pi*fHz*r*c)
	lambda := (x + cmplx.Sqrt(x*x-4)) / 2
	return math.Log10(2) - float64(k)*math.Log10(cmplx.Abs(lambda))
}

// TestSweepUnderflow: a 1,000-section 1 kΩ / 10 nF ladder has |H| far below
// float64's range at 1 MHz (about 10^-1800), so the solve's 0 is marked
// as underflow and no magnitude, phase or delay is given; at 100 Hz it is
// an ordinary number. An RC low-pass, an identically zero output and a
// high-pass at 0 Hz (an exact zero) are never marked.
func TestSweepUnderflow(t *testing.T) {
	const k, r, c = 1000, 1e3, 10e-9
	if est := ladderLog10Mag(k, r, c, 1e6); est > -400 {
		t.Fatalf("the closed form puts |H| at 1 MHz at 1e%.0f; the test needs it below float64's range", est)
	}
	ladder := testcircuit.Build(t, testcircuit.RCLadder(k, r, c), mna.Output{Kind: mna.NodeVoltage, Node: "n1000"})
	lowpass := testcircuit.Build(t, testcircuit.RCLadder(1, r, c), mna.Output{Kind: mna.NodeVoltage, Node: "n1"})
	highpass := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.C("C1", "in", "out", c),
		testcircuit.R("R1", "out", "gnd", r)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	zero := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.R("R1", "in", "gnd", r),
		testcircuit.R("R2", "iso", "gnd", r)), mna.Output{Kind: mna.NodeVoltage, Node: "iso"})
	for _, tc := range []struct {
		name  string
		sys   *mna.System
		freqs []float64
		under []bool
	}{
		{"ladder across the floor", ladder, []float64{100, 1e4, 1e5, 1e6}, []bool{false, false, true, true}},
		{"ladder only above the floor", ladder, []float64{1e5, 1e6}, []bool{true, true}},
		{"RC low-pass", lowpass, []float64{0, 1, 1e3, 1e6, 1e9}, []bool{false, false, false, false, false}},
		{"high-pass at 0 Hz", highpass, []float64{0, 1e3}, []bool{false, false}},
		{"identically zero", zero, []float64{1, 1e6}, []bool{false, false}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			resp, err := Sweep(context.Background(), tc.sys, tc.freqs, 1)
			if err != nil {
				t.Fatal(err)
			}
			for i, want := range tc.under {
				if resp.Underflow[i] != want {
					t.Errorf("%g Hz: Underflow %v, want %v (|H| = %g)", tc.freqs[i], resp.Underflow[i], want, cmplx.Abs(resp.H[i]))
				}
				if want && (resp.Mag[i] != 0 || !math.IsNaN(resp.MagDB[i]) || !math.IsNaN(resp.PhaseDeg[i]) || !math.IsNaN(resp.GroupDelayS[i])) {
					t.Errorf("%g Hz: an underflowed point shows numbers: %g, %g dB, %g°, %g s", tc.freqs[i], resp.Mag[i], resp.MagDB[i], resp.PhaseDeg[i], resp.GroupDelayS[i])
				}
			}
		})
	}
	// At 100 Hz the ladder is an ordinary number, near the closed form.
	resp, err := Sweep(context.Background(), ladder, []float64{100}, 1)
	if err != nil {
		t.Fatal(err)
	}
	if got, est := math.Log10(resp.Mag[0]), ladderLog10Mag(k, r, c, 100); math.Abs(got-est) > 1 {
		t.Errorf("ladder at 100 Hz: log10|H| = %.2f, closed form %.2f", got, est)
	}
}
