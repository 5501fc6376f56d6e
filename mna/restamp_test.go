package mna_test

import (
	"errors"
	"math/rand/v2"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// restampCircuits are circuits with every part kind, each with the probe
// restamped: controlled sources of all four kinds, an op-amp with a0, gbw
// and rout, coupled inductors, an injected current.
func restampCircuits() []struct {
	name string
	c    *netlist.Circuit
	in   mna.Input
	out  mna.Output
} {
	gnd := netlist.Ground
	tc := testcircuit.New
	type cs = struct {
		name string
		c    *netlist.Circuit
		in   mna.Input
		out  mna.Output
	}
	return []cs{
		{"butterworth ladder n=5", testcircuit.Ladder(5, 1e3, 50), mna.Input{}, mna.Output{Node: "out"}},
		{"tow-thomas 2 stages", testcircuit.TowThomas(2, 1e3, 2, 2e5, 1e6), mna.Input{}, mna.Output{Node: "lp2"}},
		{"rc ladder 20 (sparse path)", testcircuit.RCLadder(20, 1e3, 1e-9), mna.Input{}, mna.Output{Node: "n20"}},
		{"wien", testcircuit.Wien(1e4, 1e-8), mna.Input{}, mna.Output{Node: "out"}},
		{"controlled sources", tc(
			testcircuit.V("Vs", "in", gnd, 1),
			testcircuit.R("R1", "in", "a", 1e3),
			testcircuit.C("C1", "a", gnd, 1e-9),
			testcircuit.VCVS("E1", "b", gnd, 2.5, "a", gnd),
			testcircuit.R("R2", "b", "c", 2e3),
			testcircuit.VCCS("G1", "c", gnd, 1e-3, "b", gnd),
			testcircuit.R("R3", "c", gnd, 4.7e3),
			testcircuit.CCVS("H1", "d", gnd, 100, "Vs"),
			testcircuit.R("R4", "d", "e", 1e3),
			testcircuit.CCCS("F1", "e", gnd, 0.5, "H1"),
			testcircuit.R("R5", "e", "out", 1e3),
			testcircuit.C("C2", "out", gnd, 2e-9),
		), mna.Input{}, mna.Output{Node: "out"}},
		{"op-amp with rout, coupled inductors, injection", tc(
			testcircuit.I("Ib", "in", gnd, 1),
			testcircuit.R("R1", "in", gnd, 1e3),
			testcircuit.L("L1", "in", "m", 1e-3),
			testcircuit.L("L2", "x", gnd, 2e-3),
			testcircuit.K("K1", "L1", "L2", 0.6),
			testcircuit.R("Rx", "x", gnd, 50),
			testcircuit.R("R2", "m", "n", 1e3),
			testcircuit.OpAmp("U1", "n", "out", "out", 2e5, 1e6, 75),
			testcircuit.C("C1", "n", gnd, 1e-9),
		), mna.Input{Inject: "in"}, mna.Output{Node: "out"}},
	}
}

// perturb returns a copy of c with every value (and an op-amp's a0, gbw
// and rout) scaled by a random factor in [0.8, 1.2] ([0.9, 1] for a
// coupling factor, which must stay ≤ 1).
func perturb(c *netlist.Circuit, rng *rand.Rand) *netlist.Circuit {
	d := c.Clone()
	f := func() float64 { return 0.8 + 0.4*rng.Float64() }
	for i := range d.Parts {
		p := &d.Parts[i]
		switch p.Kind {
		case netlist.OpAmp:
			p.A0, p.GBWHz, p.Rout = p.A0*f(), p.GBWHz*f(), p.Rout*f()
		case netlist.Coupling:
			p.Value *= 0.9 + 0.1*rng.Float64()
		default:
			p.Value *= f()
		}
	}
	return d
}

// TestRestampMatchesBuild checks that a restamped system has bit-for-bit
// the G, C, B and L that Build gives the perturbed circuit, and that a
// Sweeper made before the restamp sees the new values (H bit-identical to
// a fresh system's: the same order, the same values).
func TestRestampMatchesBuild(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range restampCircuits() {
		t.Run(tc.name, func(t *testing.T) {
			r, err := mna.NewRestamper(tc.c, tc.in, tc.out)
			if err != nil {
				t.Fatal(err)
			}
			sw := mna.NewSweeper(r.System())
			clone := r.Clone()
			csw := mna.NewSweeper(clone.System())
			for trial := 0; trial < 20; trial++ {
				v := perturb(tc.c, rng)
				held, hsw := r, sw
				if trial%2 == 1 {
					held, hsw = clone, csw
				}
				if err := held.Restamp(v); err != nil {
					t.Fatal(err)
				}
				want, err := mna.Build(v, tc.in, tc.out)
				if err != nil {
					t.Fatal(err)
				}
				got := held.System()
				sameSparse(t, "G", got.G, want.G)
				sameSparse(t, "C", got.C, want.C)
				sameVec(t, "B", got.B, want.B)
				sameVec(t, "L", got.L, want.L)
				s := complex(0, 2*3.141592653589793*1234.5)
				h, _, err := hsw.Eval(s)
				if err != nil {
					t.Fatal(err)
				}
				hw, _, err := mna.NewSweeper(want).Eval(s)
				if err != nil {
					t.Fatal(err)
				}
				if h != hw {
					t.Errorf("trial %d: H = %v after restamp, %v rebuilt", trial, h, hw)
				}
			}
		})
	}
}

func sameSparse(t *testing.T, what string, got, want *mna.Sparse) {
	t.Helper()
	if got.NNZ() != want.NNZ() {
		t.Fatalf("%s: %d entries, rebuilt %d", what, got.NNZ(), want.NNZ())
	}
	n, _ := want.Dims()
	want.Each(func(i, j int, v float64) {
		if g := got.At(i, j); g != v {
			t.Errorf("%s[%d,%d] = %v, rebuilt %v (n=%d)", what, i, j, g, v, n)
		}
	})
}

func sameVec(t *testing.T, what string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: length %d, rebuilt %d", what, len(got), len(want))
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("%s[%d] = %v, rebuilt %v", what, i, got[i], want[i])
		}
	}
}

// TestRestampRefuses checks the probes and circuits a Restamper cannot
// hold: a source-impedance probe (its excitation changes stamps), the
// current of a resistor (its row holds 1/R), another topology, a value
// that cannot be stamped.
func TestRestampRefuses(t *testing.T) {
	c := testcircuit.Wien(1e4, 1e-8)
	if _, err := mna.NewRestamper(c, mna.SourceImpedance("Vs").Ex, mna.Output{Node: "out"}); !errors.Is(err, mna.ErrNotRestampable) {
		t.Errorf("source impedance: %v; want ErrNotRestampable", err)
	}
	if _, err := mna.NewRestamper(c, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "R2"}); !errors.Is(err, mna.ErrNotRestampable) {
		t.Errorf("resistor current: %v; want ErrNotRestampable", err)
	}
	r, err := mna.NewRestamper(c, mna.Input{}, mna.Output{Node: "out"})
	if err != nil {
		t.Fatal(err)
	}
	if err := r.Restamp(testcircuit.RCLadder(2, 1e3, 1e-9)); !errors.Is(err, mna.ErrPatternChanged) {
		t.Errorf("another topology: %v; want ErrPatternChanged", err)
	}
	bad := c.Clone()
	bad.Parts[1].Value = -1
	var pe *mna.PartError
	if err := r.Restamp(bad); !errors.As(err, &pe) {
		t.Errorf("negative resistance: %v; want a *PartError", err)
	}
}
