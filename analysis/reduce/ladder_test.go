package reduce

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladder is the uniform RC ladder of k sections (r in series, c to
// ground at each node), driven at n0, observed at the open end nk.
func ladder(t testing.TB, k int, r, c float64) *mna.System {
	t.Helper()
	parts := []netlist.Part{testcircuit.V("Vin", "n0", netlist.Ground, 1)}
	for j := 1; j <= k; j++ {
		a, b := fmt.Sprint("n", j-1), fmt.Sprint("n", j)
		parts = append(parts, testcircuit.R(fmt.Sprint("R", j), a, b, r), testcircuit.C(fmt.Sprint("C", j), b, netlist.Ground, c))
	}
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprint("n", k)})
}

// ladderPole is the j-th pole (rad/s, j = 1…k) of the uniform RC ladder
// of k sections open at the far end: p_j = −(4/RC)·sin²((2j−1)π/(2(2k+1)))
// (closed form of the tridiagonal pencil, from memory; confirmed with
// scipy.linalg.eig on the pencil, see testdata/ladder_poles.py).
func ladderPole(j, k int, r, c float64) float64 {
	s := math.Sin(float64(2*j-1) * math.Pi / float64(2*(2*k+1)))
	return -4 / (r * c) * s * s
}

// TestLadderPolesClosedForm: the dominant poles of a reduced model of the
// 1,000-section ladder (1 kΩ, 10 nF) over 1 mHz–10 Hz against the closed
// form. The lowest poles (where the first expansion point sits) must be
// accurate to 10⁻⁴; every reduced pole below a third of the range's top
// within 1 %; all of them in the left half-plane (PRIMA's congruence on
// an RC network).
func TestLadderPolesClosedForm(t *testing.T) {
	const k, r, c = 1000, 1e3, 10e-9
	sys := ladder(t, k, r, c)
	m, err := Reduce(context.Background(), sys, Options{FromHz: 1e-3, ToHz: 10})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Stable {
		t.Errorf("reduced poles %v: not all in the left half-plane", m.TF.Poles)
	}
	if m.Order < 3 || m.Order > 40 {
		t.Fatalf("order %d: want a handful of dominant poles", m.Order)
	}
	top := 2 * math.Pi * m.ToHz / 3
	for j, p := range m.TF.Poles {
		want := ladderPole(j+1, k, r, c)
		if -want > top {
			break
		}
		rel := cmplx.Abs(p-complex(want, 0)) / math.Abs(want)
		tol := 1e-2
		if j < 3 {
			tol = 1e-4
		}
		if rel > tol {
			t.Errorf("pole %d: %v rad/s, closed form %g: relative error %.3g > %g", j+1, p, want, rel, tol)
		}
	}
}

// TestLadderReducedMatchesDirect: the reduced model of the 1,000-section
// ladder matches direct solves (System.H, a path independent of the check
// grid) within 0.01 dB and 0.1° at 301 frequencies offset from the check
// grid over the range.
func TestLadderReducedMatchesDirect(t *testing.T) {
	sys := ladder(t, 1000, 1e3, 10e-9)
	m, err := Reduce(context.Background(), sys, Options{FromHz: 1e-3, ToHz: 10})
	if err != nil {
		t.Fatal(err)
	}
	if m.MaxErrDB > DefaultTolDB || m.MaxErrDeg > DefaultTolDeg {
		t.Errorf("reported error %g dB / %g° above the tolerance", m.MaxErrDB, m.MaxErrDeg)
	}
	const pts = 301
	for i := 0; i < pts; i++ {
		f := 1e-3 * math.Pow(1e4, (float64(i)+0.37)/pts)
		s := complex(0, 2*math.Pi*f)
		hd, err := sys.H(s)
		if err != nil {
			t.Fatal(err)
		}
		ratio := m.TF.EvalFactored(s) / hd
		db := 20 * math.Log10(cmplx.Abs(ratio))
		deg := cmplx.Phase(ratio) * 180 / math.Pi
		if math.Abs(db) > 0.01 || math.Abs(deg) > 0.1 {
			t.Errorf("%.4g Hz: reduced model off by %.3g dB / %.3g°", f, db, deg)
		}
	}
	if m.TF.DirectDC == nil || math.Abs(*m.TF.DirectDC-1) > 1e-12 {
		t.Errorf("DC gain from the direct solve: %v, want 1", m.TF.DirectDC)
	}
}

// TestReduceRefusesUnverified: a largest order too small to match gives
// ErrNotVerified, never a model.
func TestReduceRefusesUnverified(t *testing.T) {
	sys := ladder(t, 1000, 1e3, 10e-9)
	m, err := Reduce(context.Background(), sys, Options{FromHz: 1e-3, ToHz: 10, MaxOrder: 3})
	if !errors.Is(err, ErrNotVerified) || m != nil {
		t.Fatalf("got %v, %v; want ErrNotVerified and no model", m, err)
	}
}

// TestReduceSmallCircuitIsExact: on a 3-section ladder the Krylov space is
// exhausted and the reduced model is the circuit itself: its poles are the
// closed-form ones to 10⁻⁹.
func TestReduceSmallCircuitIsExact(t *testing.T) {
	const k, r, c = 3, 1e3, 1e-6
	sys := ladder(t, k, r, c)
	m, err := Reduce(context.Background(), sys, Options{FromHz: 1, ToHz: 1e4})
	if err != nil {
		t.Fatal(err)
	}
	if m.Order != k {
		t.Fatalf("order %d, want %d", m.Order, k)
	}
	for j, p := range m.TF.Poles {
		want := ladderPole(j+1, k, r, c)
		if rel := cmplx.Abs(p-complex(want, 0)) / math.Abs(want); rel > 1e-9 {
			t.Errorf("pole %d: %v, want %g (rel %.3g)", j+1, p, want, rel)
		}
	}
}

// lossyLine is a transmission line of k LC sections (250 nH with 0.1 Ω in
// series, 100 pF to ground: cut-off near 32 MHz, 5 ns a section) between
// a 50 Ω source and a 50 Ω load, observed at the load.
func lossyLine(t testing.TB, k int) *mna.System {
	t.Helper()
	parts := []netlist.Part{testcircuit.V("Vin", "in", netlist.Ground, 1), testcircuit.R("Rs", "in", "a0", 50)}
	for j := 1; j <= k; j++ {
		a, b, m := fmt.Sprint("a", j-1), fmt.Sprint("a", j), fmt.Sprint("b", j)
		parts = append(parts, testcircuit.L(fmt.Sprint("L", j), a, m, 250e-9), testcircuit.R(fmt.Sprint("R", j), m, b, 0.1),
			testcircuit.C(fmt.Sprint("C", j), b, netlist.Ground, 100e-12))
	}
	parts = append(parts, testcircuit.R("Rl", fmt.Sprint("a", k), netlist.Ground, 50))
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprint("a", k)})
}

// TestLineReducedAndRefused: the 200-section line (603 unknowns, a 1 µs
// delay: 5 turns of phase by 5 MHz) reduces over 10 kHz–5 MHz with
// complex expansion points and matches direct solves; up to 60 MHz, past
// the cut-off where every section matters, the reduction ends (no hang)
// with ErrNotVerified and no model.
func TestLineReducedAndRefused(t *testing.T) {
	sys := lossyLine(t, 200)
	m, err := Reduce(context.Background(), sys, Options{FromHz: 1e4, ToHz: 5e6})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 97; i++ {
		f := 1e4 * math.Pow(500, (float64(i)+0.5)/97)
		s := complex(0, 2*math.Pi*f)
		hd, err := sys.H(s)
		if err != nil {
			t.Fatal(err)
		}
		r := m.TF.EvalFactored(s) / hd
		if db, deg := 20*math.Log10(cmplx.Abs(r)), cmplx.Phase(r)*180/math.Pi; math.Abs(db) > 0.01 || math.Abs(deg) > 0.1 {
			t.Errorf("%.4g Hz: off by %.3g dB / %.3g°", f, db, deg)
		}
	}
	if !m.Stable {
		t.Errorf("RLC line: reduced poles not all stable: %v", m.TF.Poles)
	}
	m, err = Reduce(context.Background(), sys, Options{FromHz: 1e4, ToHz: 6e7})
	if !errors.Is(err, ErrNotVerified) || m != nil {
		t.Fatalf("to 60 MHz: got %v, %v; want ErrNotVerified", m, err)
	}
}

// BenchmarkReduceLadder10k: the reduction (check grid of direct solves
// included, building not) of the 10,000-section ladder over the range
// transfer picks for it, 10 µHz–100 mHz.
func BenchmarkReduceLadder10k(b *testing.B) {
	sys := ladder(b, 10000, 1e3, 10e-9)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Reduce(context.Background(), sys, Options{FromHz: 1e-5, ToHz: 0.1}); err != nil {
			b.Fatal(err)
		}
	}
}
