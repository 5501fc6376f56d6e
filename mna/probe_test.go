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

// Each probe kind against a closed form (testcircuit.ProbeClosedForms,
// which names the sources), at several frequencies.
func TestProbesClosedForms(t *testing.T) {
	for _, tc := range testcircuit.ProbeClosedForms() {
		for _, f := range probeFreqsHz {
			if got, want := probeH(t, tc.Circuit, tc.Probe, f), tc.Want(jw(f)); !nearC(got, want, 1e-12) {
				t.Errorf("%s at %g Hz: %v, want %v", tc.Name, f, got, want)
			}
		}
	}
}

// The return ratio of a non-inverting amplifier, feedback β = R2/(R1+R2):
// T(s) = a(s)·β with a(s) = a0 for a finite gain, a0/(1 + s·a0/ωt) for a
// single-pole op-amp (Bode's return ratio, common practice), for an op-amp
// and for a controlled voltage source (a voltage gain). The shared matrices are not changed.
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
		{"voltage gain", amp(testcircuit.VCVS("U1", "out", gnd, a0, "in", "n")), func(complex128) complex128 { return a0 }},
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

// Factor, Solve and Adjoint reuse the Solver's memory: no allocation per
// frequency.
func TestSolverNoAlloc(t *testing.T) {
	m, err := mna.BuildMatrices(testcircuit.TowThomas(2, 1e3, 2, 1e5, 1e6))
	if err != nil {
		t.Fatal(err)
	}
	e, err := m.Excite(mna.Excitation{})
	if err != nil {
		t.Fatal(err)
	}
	row, _, err := e.Observe(mna.Observation{Node: "lp2"})
	if err != nil {
		t.Fatal(err)
	}
	w := mna.NewSolver(m)
	x, z := make([]complex128, m.Size()), make([]complex128, m.Size())
	f := 10.0
	allocs := testing.AllocsPerRun(50, func() {
		f *= 1.1
		if w.Factor(jw(f)) != nil || w.Solve(e.B, x) != nil || w.Adjoint(row, z) != nil {
			t.Fatal("solve failed")
		}
	})
	if allocs != 0 {
		t.Errorf("%v allocations per frequency, want 0", allocs)
	}
}

// BenchmarkAdjointTowThomas4 is one factorisation and one adjoint solve
// per frequency on an 8th-order op-amp filter.
func BenchmarkAdjointTowThomas4(b *testing.B) {
	m, err := mna.BuildMatrices(testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6))
	if err != nil {
		b.Fatal(err)
	}
	e, _ := m.Excite(mna.Excitation{})
	row, _, err := e.Observe(mna.Observation{Node: "lp4"})
	if err != nil {
		b.Fatal(err)
	}
	w := mna.NewSolver(m)
	z := make([]complex128, m.Size())
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		if err := w.Factor(jw(100 + float64(i%1000))); err != nil {
			b.Fatal(err)
		}
		if err := w.Adjoint(row, z); err != nil {
			b.Fatal(err)
		}
	}
}

// One Matrices serves several excitations: a test source replacing the
// voltage source gets its own copy, and a drive afterwards still sees the
// source in place (divider: H = R2/(R1+R2), Zin = R1 + R2; common practice).
func TestExciteLeavesSharedMatricesAlone(t *testing.T) {
	const r1, r2 = 1e3, 3.3e3
	c := testcircuit.New(testcircuit.V("Vs", "in", gnd, 5), testcircuit.R("R1", "in", "out", r1), testcircuit.R("R2", "out", gnd, r2))
	m, err := mna.BuildMatrices(c)
	if err != nil {
		t.Fatal(err)
	}
	g0 := mat.DenseCopyOf(m.G)
	zin := mna.SourceImpedance("Vs")
	ez, err := m.Excite(zin.Ex)
	if err != nil {
		t.Fatal(err)
	}
	zsys, err := ez.System(zin.Ob)
	if err != nil {
		t.Fatal(err)
	}
	ed, err := m.Excite(mna.Excitation{})
	if err != nil {
		t.Fatal(err)
	}
	dsys, err := ed.System(mna.Observation{Node: "out"})
	if err != nil {
		t.Fatal(err)
	}
	if !mat.Equal(m.G, g0) || ez.M == m || ed.M != m {
		t.Fatal("a test source changed the shared matrices, or a drive did not use them")
	}
	if z := hAt(t, zsys, 1e3); !nearC(z, r1+r2, 1e-12) {
		t.Errorf("Zin = %v, want R1 + R2 = %g", z, r1+r2)
	}
	if h := hAt(t, dsys, 1e3); !nearC(h, r2/(r1+r2), 1e-12) {
		t.Errorf("H = %v, want R2/(R1+R2) = %g", h, r2/(r1+r2))
	}
	if ed.Amplitude != 5 || ez.Amplitude != 1 {
		t.Errorf("amplitudes %v (drive), %v (test source), want 5 and 1", ed.Amplitude, ez.Amplitude)
	}
}
