package response_test

import (
	"context"
	"math"
	"testing"

	"nodal/analysis/response"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// highQPair is two buffered series R-L-C low-pass sections (R 0.2 Ω,
// resonances near 1.0 and 1.2 kHz, Q about 50): H = ∏ 1/(1 + sRCᵢ + s²LᵢCᵢ).
// It returns the system, the sections' (L, C) and R.
func highQPair(t testing.TB) (*mna.System, [2][2]float64, float64) {
	t.Helper()
	const r = 0.2
	lc := [2][2]float64{{15.9155e-3, 1.59155e-6}, {13.2629e-3, 1.32629e-6}}
	parts := []netlist.Part{
		testcircuit.V("Vin", "in", gnd, 1),
		testcircuit.R("R1", "in", "a", r), testcircuit.L("L1", "a", "b", lc[0][0]), testcircuit.C("C1", "b", gnd, lc[0][1]),
		testcircuit.VCVS("E1", "c", gnd, 1, "b", gnd),
		testcircuit.R("R2", "c", "d", r), testcircuit.L("L2", "d", "e", lc[1][0]), testcircuit.C("C2", "e", gnd, lc[1][1]),
	}
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: "e"}), lc, r
}

// sectionPhaseRad is the phase of 1/(1 + jωRC − ω²LC) continuous from DC:
// −atan2(ωRC, 1 − ω²LC), in (−π, 0] (closed form, common practice).
func sectionPhaseRad(w, r, l, c float64) float64 { return -math.Atan2(w*r*c, 1-w*w*l*c) }

// TestPhaseMarksHighQ: two high-Q sections between the points 100 Hz and
// 10 kHz turn the phase by −360° where the group delay at both ends sees
// almost nothing; with the circuit's resonances as marks (|Im p|/2π of
// each section's poles, from the quadratic formula) the sweep gives the
// closed-form phase to 1e-9°. Without marks the turn is not seen — the
// reason the commands pass them (cmd/nodal resonanceMarks).
func TestPhaseMarksHighQ(t *testing.T) {
	sys, lc, r := highQPair(t)
	var marks []float64
	for _, s := range lc {
		l, c := s[0], s[1]
		// poles of 1 + sRC + s²LC: s = (−RC ± j√(4LC − (RC)²))/(2LC)
		marks = append(marks, math.Sqrt(4*l*c-r*r*c*c)/(2*l*c)/(2*math.Pi))
	}
	fs := []float64{100, 10e3}
	want := func(f float64) float64 {
		w := 2 * math.Pi * f
		return (sectionPhaseRad(w, r, lc[0][0], lc[0][1]) + sectionPhaseRad(w, r, lc[1][0], lc[1][1])) * 180 / math.Pi
	}
	for _, tc := range []struct {
		name  string
		marks []float64
		ok    bool
	}{{"with marks", marks, true}, {"without marks", nil, false}} {
		got, err := response.SweepWith(context.Background(), sys, fs, response.SweepOptions{Workers: 1, PhaseMarksHz: tc.marks})
		if err != nil {
			t.Fatal(err)
		}
		for i, f := range fs {
			right := math.Abs(got.PhaseDeg[i]-want(f)) <= 1e-9
			if tc.ok && !right {
				t.Errorf("%s: %g Hz: phase %.12g°, want %.12g°", tc.name, f, got.PhaseDeg[i], want(f))
			}
			if !tc.ok && i == 1 && right {
				t.Errorf("%s: %g Hz: the hidden turn was seen without marks (%.6g°); the test no longer shows why marks are needed", tc.name, f, got.PhaseDeg[i])
			}
		}
	}
}

// bufferedCR is n stages of C 1 µF into R 1 kΩ to ground, each read by a
// VCVS of gain g (1 for all but the last, which has gain last) that drives
// the next: H = last·∏ sRC/(1 + sRC), a zero of order n at DC.
func bufferedCR(t testing.TB, n int, last float64) *mna.System {
	t.Helper()
	parts := []netlist.Part{testcircuit.V("V1", "m0", gnd, 1)}
	prev := "m0"
	for k := 1; k <= n; k++ {
		a, m := "a"+string(rune('0'+k)), "m"+string(rune('0'+k))
		g := 1.0
		if k == n {
			g = last
		}
		parts = append(parts, testcircuit.C("C"+a, prev, a, 1e-6), testcircuit.R("R"+a, a, gnd, 1e3), testcircuit.VCVS("E"+a, m, gnd, g, a, gnd))
		prev = m
	}
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: prev})
}

// TestPhaseAnchorAtDCZero: where H has a zero of order n at DC the phase
// is continuous from its low-frequency limit n·90° (c·s^n with c > 0;
// +180° more for c < 0), whatever the order of the points: three buffered
// CR high-pass stages give 3·(90° − atan ωRC) (closed form, common
// practice) at 1 Hz and 100 kHz listed either way round; an inverting last
// stage adds 180°.
func TestPhaseAnchorAtDCZero(t *testing.T) {
	for _, tc := range []struct {
		last  float64
		extra float64 // degrees
	}{{1, 0}, {-1, 180}} {
		sys := bufferedCR(t, 3, tc.last)
		want := func(f float64) float64 {
			return 3*(90-math.Atan(2*math.Pi*f*1e-3)*180/math.Pi) + tc.extra
		}
		for _, fs := range [][]float64{{1, 100e3}, {100e3, 1}, {100e3, 10, 1, 1e4}} {
			r, err := response.Sweep(context.Background(), sys, fs, 1)
			if err != nil {
				t.Fatal(err)
			}
			for i, f := range fs {
				if math.Abs(r.PhaseDeg[i]-want(f)) > 1e-9 || r.PhaseUnresolved[i] {
					t.Errorf("gain %g, points %v: %g Hz: phase %.12g° (unresolved %v), want %.12g°", tc.last, fs, f, r.PhaseDeg[i], r.PhaseUnresolved[i], want(f))
				}
			}
		}
	}
}
