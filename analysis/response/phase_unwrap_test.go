package response_test

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strings"
	"testing"

	"nodal/analysis/response"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// bufferedRC is n stages of R 1 kΩ into C 1 µF, each read by a
// unity-gain VCVS that drives the next: H = ∏ 1/(1 + sRC), RC = 1 ms.
func bufferedRC(t testing.TB, n int) *mna.System {
	t.Helper()
	parts := []netlist.Part{testcircuit.V("V1", "m0", gnd, 1)}
	prev := "m0"
	for k := 1; k <= n; k++ {
		a, m := fmt.Sprint("a", k), fmt.Sprint("m", k)
		parts = append(parts, testcircuit.R(fmt.Sprint("R", k), prev, a, 1e3), testcircuit.C(fmt.Sprint("C", k), a, gnd, 1e-6),
			testcircuit.VCVS(fmt.Sprint("E", k), m, gnd, 1, a, gnd))
		prev = m
	}
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: prev})
}

// bufferedRCPhaseDeg is the exact unwrapped phase of n buffered RC
// stages, −n·atan(ωRC) in degrees (closed form, common practice).
func bufferedRCPhaseDeg(n int, fHz float64) float64 {
	return -float64(n) * math.Atan(2*math.Pi*fHz*1e-3) * 180 / math.Pi
}

// TestPhaseUnwrapBufferedRC: ten buffered RC stages at one point a decade
// around the corner (159.155 Hz) give −57.106°, −450°, −842.894°, the sum
// of −atan(ωRC) (closed form, common practice), not the −90° and −122.9°
// a nearest-turn unwrap of the three values gives.
func TestPhaseUnwrapBufferedRC(t *testing.T) {
	fs := []float64{15.9155, 159.155, 1591.55}
	r, err := response.Sweep(context.Background(), bufferedRC(t, 10), fs, 1)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range fs {
		if want := bufferedRCPhaseDeg(10, f); math.Abs(r.PhaseDeg[i]-want) > 1e-9 || r.PhaseUnresolved[i] {
			t.Errorf("%g Hz: phase %.12g° (unresolved %v), want %.12g°", f, r.PhaseDeg[i], r.PhaseUnresolved[i], want)
		}
	}
}

// TestPhaseUnwrapRandomCoarse: 1 to 30 buffered RC stages swept at a
// few random frequencies (log-uniform over 0.1 Hz … 100 kHz, sorted, from
// 2 to 6 of them) give the closed form −n·atan(ωRC) (common practice) to
// 1e-9° at every point, whatever the spacing.
func TestPhaseUnwrapRandomCoarse(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for n := 1; n <= 30; n++ {
		sys := bufferedRC(t, n)
		for trial := range 4 {
			fs := make([]float64, 2+rng.IntN(5))
			for i := range fs {
				fs[i] = math.Pow(10, -1+6*rng.Float64())
			}
			slices.Sort(fs)
			r, err := response.Sweep(context.Background(), sys, fs, 2)
			if err != nil {
				t.Fatal(err)
			}
			for i, f := range fs {
				if want := bufferedRCPhaseDeg(n, f); math.Abs(r.PhaseDeg[i]-want) > 1e-9 || r.PhaseUnresolved[i] {
					t.Errorf("%d stages, trial %d, %g Hz: phase %.12g° (unresolved %v), want %.12g°", n, trial, f, r.PhaseDeg[i], r.PhaseUnresolved[i], want)
				}
			}
		}
	}
}

// TestPhaseUnwrapLadder1000: the 1000-section RC ladder (1 kΩ, 10 nF) at
// 2 points per decade from 1 Hz to 10 kHz gives the phase of
// testdata/ladder1000_phase.txt (gen_ladder_phase.py: chain-matrix
// recursion, mpmath, unwrapped from DC on a fine grid; common practice)
// to 1e-6°, and the same phase as a dense sweep (200 per decade) at the
// same frequencies.
func TestPhaseUnwrapLadder1000(t *testing.T) {
	data, err := os.ReadFile("testdata/ladder1000_phase.txt")
	if err != nil {
		t.Fatal(err)
	}
	var fs, want []float64
	for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		var f, p float64
		if _, err := fmt.Sscan(line, &f, &p); err != nil {
			t.Fatalf("golden line %q: %v", line, err)
		}
		fs, want = append(fs, f), append(want, p)
	}
	sys := buildV(t, testcircuit.RCLadder(1000, 1e3, 10e-9), "n1000")
	coarse, err := response.Sweep(context.Background(), sys, fs, 0)
	if err != nil {
		t.Fatal(err)
	}
	dense, err := response.Sweep(context.Background(), sys, response.LogGrid(1, 1e4, 200), 0)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range fs {
		if math.Abs(coarse.PhaseDeg[i]-want[i]) > 1e-6 || coarse.PhaseUnresolved[i] {
			t.Errorf("%g Hz: coarse phase %.10g° (unresolved %v), want %.10g°", f, coarse.PhaseDeg[i], coarse.PhaseUnresolved[i], want[i])
		}
		j := slices.IndexFunc(dense.FreqHz, func(g float64) bool { return math.Abs(g-f) <= 1e-12*f })
		if j < 0 {
			t.Fatalf("%g Hz is not on the dense grid", f)
		}
		if math.Abs(dense.PhaseDeg[j]-coarse.PhaseDeg[i]) > 1e-6 || dense.PhaseUnresolved[j] {
			t.Errorf("%g Hz: dense phase %.10g° (unresolved %v), coarse %.10g°", f, dense.PhaseDeg[j], dense.PhaseUnresolved[j], coarse.PhaseDeg[i])
		}
	}
}

// TestPhaseUnwrapAxisPole: a lossless series L (1 H) into a shunt C
// (1 F) has H = 1/(1 − ω²LC) (closed form, common practice): real, 0°
// below ω0 = 1 rad/s, and past the pole pair on the jω axis −180°, the
// limit of a pole pair just left of the axis (common practice), whether
// the pole falls on a point, between two or between 0 Hz and the first.
func TestPhaseUnwrapAxisPole(t *testing.T) {
	sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", gnd, 1), testcircuit.L("L1", "in", "out", 1),
		testcircuit.C("C1", "out", gnd, 1)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	f0 := 1 / (2 * math.Pi)
	for _, tc := range []struct {
		name string
		fs   []float64
		want []float64 // NaN on the pole
	}{
		{"on a point", []float64{f0 / 2, f0, f0 * 1.001}, []float64{0, math.NaN(), -180}},
		{"between points", []float64{f0 / 2, f0 * 2, f0 * 3}, []float64{0, -180, -180}},
		{"midpoint on the pole", []float64{f0 / 2, f0 * 2}, []float64{0, -180}},
		{"before the first", []float64{f0 * 2, f0 * 4}, []float64{-180, -180}},
	} {
		r, err := response.Sweep(context.Background(), sys, tc.fs, 1)
		if err != nil {
			t.Fatal(err)
		}
		for i := range tc.fs {
			got := r.PhaseDeg[i]
			if math.IsNaN(tc.want[i]) != math.IsNaN(got) || math.Abs(got-tc.want[i]) > 1e-9 || r.PhaseUnresolved[i] {
				t.Errorf("%s: %g Hz: phase %g° (unresolved %v), want %g°", tc.name, tc.fs[i], got, r.PhaseUnresolved[i], tc.want[i])
			}
		}
	}
}

// TestPhaseUnwrapSum: the sum of two sweeps of ten buffered RC stages
// (2H, the same phase) at one point a decade is refined by solving both
// terms between the points: −10·atan(ωRC) (closed form, common practice).
func TestPhaseUnwrapSum(t *testing.T) {
	fs := []float64{15.9155, 159.155, 1591.55}
	var terms []*response.Response
	for range 2 {
		r, err := response.Sweep(context.Background(), bufferedRC(t, 10), fs, 1)
		if err != nil {
			t.Fatal(err)
		}
		terms = append(terms, r)
	}
	sum, err := response.Sum(context.Background(), "twice", terms...)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range fs {
		if want := bufferedRCPhaseDeg(10, f); math.Abs(sum.PhaseDeg[i]-want) > 1e-9 || sum.PhaseUnresolved[i] {
			t.Errorf("%g Hz: phase %.12g° (unresolved %v), want %.12g°", f, sum.PhaseDeg[i], sum.PhaseUnresolved[i], want)
		}
	}
}

// TestPhaseUnwrapOutOfOrder: a point list in any order (down in
// frequency, repeated points, back up, 0 Hz) gives the phase continuous
// from DC at every point, as the sorted list does: ten buffered RC stages
// against the closed form −n·atan(ωRC) (common practice) to 1e-9°, and
// none marked unresolved (a step down used to be left unresolved).
func TestPhaseUnwrapOutOfOrder(t *testing.T) {
	sys := bufferedRC(t, 10)
	for _, fs := range [][]float64{
		{1591.55, 15.9155, 1591.55, 159.155, 159.155, 0.1},
		{1e5, 1e4, 1e3, 100, 10, 1, 0},
		{0, 1e5, 0.5, 1e5},
	} {
		r, err := response.Sweep(context.Background(), sys, fs, 2)
		if err != nil {
			t.Fatal(err)
		}
		for i, f := range fs {
			if want := bufferedRCPhaseDeg(10, f); math.Abs(r.PhaseDeg[i]-want) > 1e-9 || r.PhaseUnresolved[i] {
				t.Errorf("%v, point %d (%g Hz): phase %.12g° (unresolved %v), want %.12g°", fs, i, f, r.PhaseDeg[i], r.PhaseUnresolved[i], want)
			}
		}
	}
}
