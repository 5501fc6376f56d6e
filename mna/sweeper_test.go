package mna_test

import (
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// realEquivalent is the reference solver: gonum's LAPACK getrf/getrs on
// the real 2n×2n form [[A, −B], [B, A]]·[xr; xi] = [br; bi] of
// (A + jB)·x = b with A = G + Re(s)·C, B = Im(s)·C. It is independent of
// the engine's own complex LU and is also benchmarked against it.
type realEquivalent struct {
	n    int
	a    blas64.General
	rhs  blas64.General
	ipiv []int
}

func newRealEquivalent(n int) *realEquivalent {
	return &realEquivalent{
		n:    n,
		a:    blas64.General{Rows: 2 * n, Cols: 2 * n, Stride: 2 * n, Data: make([]float64, 4*n*n)},
		rhs:  blas64.General{Rows: 2 * n, Cols: 1, Stride: 1, Data: make([]float64, 2*n)},
		ipiv: make([]int, 2*n),
	}
}

// solve returns false when getrf finds an exactly zero pivot.
func (r *realEquivalent) solve(sys *mna.System, s complex128, b []complex128, x []complex128) bool {
	n, m := r.n, 2*r.n
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			g, c := sys.G.At(i, j), sys.C.At(i, j)
			re, im := g+real(s)*c, imag(s)*c
			r.a.Data[i*m+j] = re
			r.a.Data[i*m+n+j] = -im
			r.a.Data[(n+i)*m+j] = im
			r.a.Data[(n+i)*m+n+j] = re
		}
		r.rhs.Data[i], r.rhs.Data[n+i] = real(b[i]), imag(b[i])
	}
	if !lapack64.Getrf(r.a, r.ipiv) {
		return false
	}
	lapack64.Getrs(blas.NoTrans, r.a, r.rhs, r.ipiv)
	for i := 0; i < n; i++ {
		x[i] = complex(r.rhs.Data[i], r.rhs.Data[n+i])
	}
	return true
}

// referenceEval returns H and dH/ds = −L·Y⁻¹·C·Y⁻¹·B with the reference
// solver.
func referenceEval(t testing.TB, sys *mna.System, s complex128) (complex128, complex128) {
	n := sys.Size()
	r := newRealEquivalent(n)
	b := make([]complex128, n)
	for i, v := range sys.B {
		b[i] = complex(v, 0)
	}
	x := make([]complex128, n)
	if !r.solve(sys, s, b, x) {
		t.Fatalf("reference solver: singular at %v", s)
	}
	cx := make([]complex128, n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			cx[i] += complex(sys.C.At(i, j), 0) * x[j]
		}
	}
	z := make([]complex128, n)
	r = newRealEquivalent(n)
	if !r.solve(sys, s, cx, z) {
		t.Fatalf("reference solver: singular at %v", s)
	}
	var h, dh complex128
	for i, l := range sys.L {
		h += complex(l, 0) * x[i]
		dh -= complex(l, 0) * z[i]
	}
	return h, dh
}

// The engine agrees with gonum's LAPACK on the real-equivalent form, for H
// and dH/ds, on a ladder and on a 4-stage active filter.
func TestSweeperAgreesWithLAPACK(t *testing.T) {
	systems := map[string]*mna.System{
		"ladder5":    build(t, testcircuit.Ladder(5, 1e3, 50), mna.Input{}, "out", ""),
		"towthomas4": build(t, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), mna.Input{}, "lp4", ""),
	}
	for name, sys := range systems {
		w := mna.NewSweeper(sys)
		for _, f := range []float64{1, 300, 1e3, 2e3, 1e5} {
			s := jw(f)
			h, dh, err := w.Eval(s)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			rh, rdh := referenceEval(t, sys, s)
			if !nearC(h, rh, 1e-9) || !nearC(dh, rdh, 1e-8) {
				t.Errorf("%s f=%g: H %v dH %v, reference %v %v", name, f, h, dh, rh, rdh)
			}
		}
	}
}

// Group delay of the RC low-pass: τ = −Re(H'/H) at s = jω equals
// RC/(1 + (ωRC)²) (closed form of −d/dω(−atan ωRC); group delay as the
// negative phase derivative, Oppenheim & Schafer, Discrete-Time Signal
// Processing; from memory).
func TestGroupDelayRC(t *testing.T) {
	c, fc := rcLowPass()
	rc := 1 / (2 * math.Pi * fc)
	w := mna.NewSweeper(build(t, c, mna.Input{}, "out", ""))
	for _, f := range []float64{1, fc / 3, fc, 7 * fc, 100 * fc} {
		h, dh, err := w.Eval(jw(f))
		if err != nil {
			t.Fatal(err)
		}
		om := 2 * math.Pi * f
		want := rc / (1 + om*rc*om*rc)
		if got := -real(dh / h); !near(got, want, 1e-12) {
			t.Errorf("f=%g: τ = %g s, want %g s", f, got, want)
		}
	}
}

// The steady loop does not allocate.
func TestSweeperNoAlloc(t *testing.T) {
	sys := build(t, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), mna.Input{}, "lp4", "")
	w := mna.NewSweeper(sys)
	f := 10.0
	allocs := testing.AllocsPerRun(100, func() {
		f *= 1.1
		if _, _, err := w.Eval(jw(f)); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Errorf("Eval allocates %v times per point", allocs)
	}
}

// SolveAll gives every node: in the RC low-pass v(in) = 1 and
// v(out) = 1/(1 + jωRC) (common practice).
func TestSolveAll(t *testing.T) {
	c, fc := rcLowPass()
	sys := build(t, c, mna.Input{}, "out", "")
	x, err := sys.SolveAll(jw(fc))
	if err != nil {
		t.Fatal(err)
	}
	vin, vout := x[sys.NodeIndex("in")], x[sys.NodeIndex("out")]
	if !nearC(vin, 1, 1e-15) || !nearC(vout, 1/complex(1, 1), 1e-14) {
		t.Errorf("v(in) = %v, v(out) = %v", vin, vout)
	}
	if sys.Unknowns[sys.BranchIndex("Vs")] != "i(Vs)" || sys.BranchIndex("R1") != -1 || sys.NodeCount() != 2 {
		t.Errorf("unknowns %q", sys.Unknowns)
	}
	if cmplx.Abs(x[sys.BranchIndex("Vs")]+vout*jw(fc)*complex(100e-9, 0)) > 1e-15 {
		t.Errorf("i(Vs) = %v, want −sC·v(out)", x[sys.BranchIndex("Vs")])
	}
}

func benchmarkSweep(b *testing.B, sys *mna.System) {
	w := mna.NewSweeper(sys)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f := 10 * math.Pow(1e5, float64(i%1000)/999)
		if _, _, err := w.Eval(jw(f)); err != nil {
			b.Fatal(err)
		}
	}
}

// One point (H and dH/ds) of the engine's sweep; ns/op is per point.
func BenchmarkEvalLadder5(b *testing.B) {
	benchmarkSweep(b, build(b, testcircuit.Ladder(5, 1e3, 50), mna.Input{}, "out", ""))
}

// One point on 4 Tow–Thomas stages (37 unknowns).
func BenchmarkEvalTowThomas4(b *testing.B) {
	benchmarkSweep(b, build(b, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), mna.Input{}, "lp4", ""))
}

// The same point by gonum's LAPACK getrf/getrs on the real-equivalent
// 2n×2n form, H only: the alternative that was measured.
func BenchmarkLAPACKTowThomas4(b *testing.B) {
	sys := build(b, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), mna.Input{}, "lp4", "")
	n := sys.Size()
	r := newRealEquivalent(n)
	rhs := make([]complex128, n)
	for i, v := range sys.B {
		rhs[i] = complex(v, 0)
	}
	x := make([]complex128, n)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if !r.solve(sys, jw(10*math.Pow(1e5, float64(i%1000)/999)), rhs, x) {
			b.Fatal("singular")
		}
	}
}
