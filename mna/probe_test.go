package mna_test

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// probeH builds the system of one probe and returns H(j2πf).
func probeH(t *testing.T, c *netlist.Circuit, p mna.Probe, fHz float64) complex128 {
	t.Helper()
	sys, err := mna.Build(c, p.Ex, p.Ob)
	if err != nil {
		t.Fatalf("Build %+v: %v", p, err)
	}
	return hAt(t, sys, fHz)
}

var probeFreqsHz = []float64{0.5, 10, 159.15, 1e3, 2.2e4, 1e6}

// Each probe kind against a closed form of circuit theory (common
// practice: series and parallel impedances, the voltage divider,
// Thévenin's theorem; Bode's return ratio, H. W. Bode, Network Analysis
// and Feedback Amplifier Design, 1945, for the loop gain a·β of a
// non-inverting amplifier).
func TestProbesClosedForms(t *testing.T) {
	const r1, r2, r3, cv = 1e3, 3.3e3, 4.7e3, 100e-9
	seriesRC := testcircuit.New( // Vs — R1 — C1 — gnd, a second source Ib elsewhere
		testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.R("R1", "in", "m", r1),
		testcircuit.C("C1", "m", gnd, cv),
		testcircuit.I("Ib", "x", gnd, 1e-3),
		testcircuit.R("R3", "x", gnd, r3),
	)
	parallelRC := testcircuit.New( // Is into R1 ∥ C1
		testcircuit.I("Is", "a", gnd, 1),
		testcircuit.R("R1", "a", gnd, r1),
		testcircuit.C("C1", "a", gnd, cv),
	)
	divider := testcircuit.New(
		testcircuit.V("Vs", "in", gnd, 5),
		testcircuit.R("R1", "in", "out", r1),
		testcircuit.R("R2", "out", gnd, r2),
	)
	floating := testcircuit.New( // a —R1— b, a —R2— gnd, b —R3— gnd
		testcircuit.R("R1", "a", "b", r1),
		testcircuit.R("R2", "a", gnd, r2),
		testcircuit.R("R3", "b", gnd, r3),
	)
	par := func(a, b complex128) complex128 { return a * b / (a + b) }
	cases := []struct {
		name string
		c    *netlist.Circuit
		p    mna.Probe
		want func(s complex128) complex128
	}{
		{"Zin of series RC, R + 1/(sC)", seriesRC, mna.SourceImpedance("Vs"),
			func(s complex128) complex128 { return r1 + 1/(s*cv) }},
		{"Zin seen by a current source, R ∥ 1/(sC)", parallelRC, mna.SourceImpedance(""),
			func(s complex128) complex128 { return par(r1, 1/(s*cv)) }},
		{"Thévenin Zout of a divider, R1 ∥ R2", divider, mna.NodeImpedance("out", ""),
			func(complex128) complex128 { return r1 * r2 / (r1 + r2) }},
		{"impedance between two nodes, R1 ∥ (R2 + R3)", floating, mna.NodeImpedance("a", "b"),
			func(complex128) complex128 { return par(r1, r2+r3) }},
		{"transfer impedance a→b to gnd, R2·R3/(R1+R2+R3)", floating,
			mna.Probe{Ex: mna.Excitation{Kind: mna.Injection, Inject: "a"}, Ob: mna.Observation{Node: "b"}},
			func(complex128) complex128 { return r2 * r3 / (r1 + r2 + r3) }},
		{"difference of two nodes, divider in − out = R1/(R1+R2)", divider,
			mna.Probe{Ob: mna.Observation{Node: "in", Ref: "out"}},
			func(complex128) complex128 { return r1 / (r1 + r2) }},
		{"current through a resistor, 1/(R1+R2)", divider,
			mna.Probe{Ob: mna.Observation{Kind: mna.PartCurrent, Part: "R2"}},
			func(complex128) complex128 { return 1 / (r1 + r2) }},
		{"current through a capacitor, sC/(1 + sRC)", seriesRC,
			mna.Probe{Ex: mna.Excitation{Source: "Vs"}, Ob: mna.Observation{Kind: mna.PartCurrent, Part: "C1"}},
			func(s complex128) complex128 { return s * cv / (1 + s*r1*cv) }},
		{"current a voltage source delivers, 1/(R + 1/(sC))", seriesRC,
			mna.Probe{Ex: mna.Excitation{Source: "Vs"}, Ob: mna.Observation{Kind: mna.SourceCurrent, Part: "Vs"}},
			func(s complex128) complex128 { return 1 / (r1 + 1/(s*cv)) }},
		{"current through the driven current source, −1", parallelRC,
			mna.Probe{Ob: mna.Observation{Kind: mna.PartCurrent, Part: "Is"}},
			func(complex128) complex128 { return -1 }},
	}
	for _, tc := range cases {
		for _, f := range probeFreqsHz {
			s := jw(f)
			if got, want := probeH(t, tc.c, tc.p, f), tc.want(s); !nearC(got, want, 1e-12) {
				t.Errorf("%s at %g Hz: %v, want %v", tc.name, f, got, want)
			}
		}
	}
}

// The return ratio of a non-inverting amplifier, feedback β = R2/(R1+R2):
// T(s) = a(s)·β with a(s) = a0 for a finite gain, a0/(1 + s·a0/ωt) for a
// single-pole op-amp (Bode's return ratio, common practice), for an op-amp
// and for a vcvs gain element. The shared matrices are not changed.
func TestBrokenControlLoopGain(t *testing.T) {
	const r1, r2, a0, gbw = 9e3, 1e3, 2e4, 1e6
	beta := r2 / (r1 + r2)
	wt := 2 * math.Pi * gbw
	amp := func(g netlist.Part) *netlist.Circuit {
		return testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), g,
			testcircuit.R("R1", "out", "n", r1), testcircuit.R("R2", "n", gnd, r2), testcircuit.R("RL", "out", gnd, 10e3))
	}
	cases := []struct {
		name string
		c    *netlist.Circuit
		a    func(s complex128) complex128
	}{
		{"opamp a0", amp(testcircuit.OpAmp("U1", "in", "n", "out", a0, 0, 0)), func(complex128) complex128 { return a0 }},
		{"opamp a0, gbw", amp(testcircuit.OpAmp("U1", "in", "n", "out", a0, gbw, 0)),
			func(s complex128) complex128 { return a0 / (1 + s*a0/complex(wt, 0)) }},
		{"vcvs", amp(testcircuit.VCVS("U1", "out", gnd, a0, "in", "n")), func(complex128) complex128 { return a0 }},
	}
	for _, tc := range cases {
		m, err := mna.BuildMatrices(tc.c)
		if err != nil {
			t.Fatal(err)
		}
		g0 := mat.DenseCopyOf(m.G)
		e, err := m.Excite(mna.Excitation{Kind: mna.BrokenControl, Part: "U1"})
		if err != nil {
			t.Fatal(err)
		}
		sys, err := e.System(mna.Observation{Kind: mna.ControlReturn})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if !mat.Equal(m.G, g0) || e.M == m {
			t.Errorf("%s: breaking the control changed the shared matrices", tc.name)
		}
		for _, f := range probeFreqsHz {
			s := jw(f)
			tr := -hAt(t, sys, f)
			if want := tc.a(s) * complex(beta, 0); !nearC(tr, want, 1e-12) {
				t.Errorf("%s at %g Hz: T = %v, want a·β = %v", tc.name, f, tr, want)
			}
		}
	}
	// An ideal op-amp has no finite gain to break.
	ideal := amp(testcircuit.OpAmp("U1", "in", "n", "out", 0, 0, 0))
	var le *mna.LookupError
	if _, err := mna.Build(ideal, mna.Excitation{Kind: mna.BrokenControl, Part: "U1"}, mna.Observation{Kind: mna.ControlReturn}); !errors.As(err, &le) {
		t.Errorf("ideal op-amp: %v, want a *LookupError", err)
	}
}

// One adjoint solve gives the transfer from every injection point to one
// output: z_j = Y⁻ᵀl at node j equals the forward solve with a unit
// current into node j, one at a time, at several frequencies; z·b for a
// source drive equals the system's H.
func TestAdjointEqualsForwardSolves(t *testing.T) {
	c := testcircuit.TowThomas(2, 1e3, 2, 1e5, 1e6)
	m, err := mna.BuildMatrices(c)
	if err != nil {
		t.Fatal(err)
	}
	drive, err := m.Excite(mna.Excitation{})
	if err != nil {
		t.Fatal(err)
	}
	for _, ob := range []mna.Observation{{Node: "lp2"}, {Node: "bp1", Ref: "lp2"}, {Kind: mna.PartCurrent, Part: "C1_2"}, {Kind: mna.PartCurrent, Part: "Rq1"}} {
		row, ob, err := drive.Observe(ob)
		if err != nil {
			t.Fatalf("%+v: %v", ob, err)
		}
		sys, err := drive.System(ob)
		if err != nil {
			t.Fatal(err)
		}
		w := mna.NewSolver(m)
		n := m.Size()
		z, x, b := make([]complex128, n), make([]complex128, n), make([]float64, n)
		for _, f := range []float64{3, 300, 1e3, 4e3, 1e5} {
			s := jw(f)
			if err := w.Factor(s); err != nil {
				t.Fatal(err)
			}
			if err := w.Adjoint(row, z); err != nil {
				t.Fatal(err)
			}
			scale := 0.0 // entries at round-off (into an op-amp output) compare against the largest
			for _, zj := range z {
				scale = math.Max(scale, cmplx.Abs(zj))
			}
			for j := 0; j < n; j++ {
				clear(b)
				b[j] = 1
				if err := w.Solve(b, x); err != nil {
					t.Fatal(err)
				}
				if fwd := row.At(s, x) - complex(row.Feed, 0); !(cmplx.Abs(z[j]-fwd) <= 1e-10*scale) {
					t.Errorf("%s at %g Hz, injection %s: adjoint %v, forward %v", ob.Part+ob.Node, f, m.Unknowns[j], z[j], fwd)
				}
			}
			var h complex128
			for i, bi := range drive.B {
				h += z[i] * complex(bi, 0)
			}
			h += complex(row.Feed, 0)
			if want := hAt(t, sys, f); !nearC(h, want, 1e-10) {
				t.Errorf("%s at %g Hz: z·b = %v, H = %v", ob.Part+ob.Node, f, h, want)
			}
		}
	}
}
