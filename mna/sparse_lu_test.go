package mna

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"nodal/netlist"
)

// relDiff is |a − b| / max(|a|, |b|), 0 when both are 0.
func relDiff(a, b complex128) float64 {
	d := cmplx.Abs(a - b)
	if d == 0 {
		return 0
	}
	return d / math.Max(cmplx.Abs(a), cmplx.Abs(b))
}

// referenceCircuits loads every circuit of testdata/reference/circuits
// with the probe its first line names (`# input: SRC   output: NODE`).
func referenceCircuits(t *testing.T) map[string]*System {
	t.Helper()
	files, err := filepath.Glob("../testdata/reference/circuits/*.nodal")
	if err != nil || len(files) < 10 {
		t.Fatalf("reference circuits: %v (%d files)", err, len(files))
	}
	out := map[string]*System{}
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		line, _, _ := bufio.NewReader(bytes.NewReader(src)).ReadLine()
		head := strings.Fields(string(line))
		if len(head) != 5 {
			t.Fatalf("%s: first line %q", f, line)
		}
		c, err := netlist.Load(filepath.Base(f), src, netlist.Overrides{})
		if err != nil {
			t.Fatal(err)
		}
		sys, err := Build(c, Input{Kind: Drive, Source: head[2]}, Output{Kind: NodeVoltage, Node: head[4]})
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		out[filepath.Base(f)] = sys
	}
	return out
}

// TestSparseMatchesDense: the compressed-column path and the dense path
// give the same H, forward and adjoint solves to 1e-12 relative (dH/ds to
// 5e-12) on
// every reference circuit, over six decades and off the jω axis.
func TestSparseMatchesDense(t *testing.T) {
	for name, sys := range referenceCircuits(t) {
		o := sys.order()
		dense, sparse := newLUFactor(o), newSparseLU(o)
		ws := NewSparseSweeper(sys)
		wd := NewSweeper(sys)
		if _, ok := wd.f.(*luFactor); !ok {
			t.Fatalf("%s: %d unknowns not on the dense path", name, sys.Size())
		}
		n := sys.Size()
		for k := 0; k <= 60; k++ {
			w := 2 * math.Pi * math.Pow(10, float64(k)/10)
			for _, s := range []complex128{complex(0, w), complex(-w/3, w)} {
				hd, dd, err1 := wd.Eval(s)
				hs, ds, err2 := ws.Eval(s)
				if (err1 == nil) != (err2 == nil) {
					t.Fatalf("%s at s=%v: dense %v, sparse %v", name, s, err1, err2)
				}
				if err1 != nil {
					continue
				}
				// dH/ds = −L·Y⁻¹·C·Y⁻¹·B cancels in its last solve: the two
				// paths' sums in different orders leave it at 2e-12 at
				// worst (rlc_pickup off the axis); H at 1e-12.
				if relDiff(hd, hs) > 1e-12 || relDiff(dd, ds) > 5e-12 {
					e := math.Max(relDiff(hd, hs), relDiff(dd, ds))
					t.Errorf("%s at s=%v: H %v / %v, dH %v / %v (rel %.1e)", name, s, hd, hs, dd, ds, e)
				}
				if dense.factorAt(s) >= 0 || sparse.factorAt(s) >= 0 {
					t.Fatalf("%s at s=%v: singular", name, s)
				}
				for _, transposed := range []bool{false, true} {
					xd, xs := make([]complex128, n), make([]complex128, n)
					for i := range xd {
						xd[i] = complex(float64(i%3)-1, float64(i%2))
						xs[i] = xd[i]
					}
					if transposed {
						dense.solveTransposed(xd)
						sparse.solveTransposed(xs)
					} else {
						dense.solve(xd)
						sparse.solve(xs)
					}
					var num, den float64
					for i := range xd {
						num = math.Max(num, cmplx.Abs(xd[i]-xs[i]))
						den = math.Max(den, cmplx.Abs(xd[i]))
					}
					if num > 1e-12*den {
						t.Errorf("%s at s=%v (transposed %v): solutions differ by %.1e of %.1e", name, s, transposed, num, den)
					}
				}
			}
		}
	}
}

// TestSparseAdjointIsTranspose: on a system past the dense size the
// Solver takes the sparse path, and Adjoint solves Yᵀ·z = l exactly:
// the residual, formed from G and C directly, is at rounding level.
func TestSparseAdjointIsTranspose(t *testing.T) {
	m, err := BuildMatrices(rcLadder(t, 60, 1e3, 1e-8))
	if err != nil {
		t.Fatal(err)
	}
	w := NewSolver(m)
	if _, ok := w.f.(*sparseLU); !ok {
		t.Fatalf("%d unknowns not on the sparse path", m.Size())
	}
	n := m.Size()
	s := complex(-2e4, 7e4)
	if err := w.Factor(s); err != nil {
		t.Fatal(err)
	}
	r := Row{G: make([]float64, n), C: make([]float64, n)}
	r.G[n/2], r.C[3] = 1, 2e-8
	z := make([]complex128, n)
	if err := w.Adjoint(r, z); err != nil {
		t.Fatal(err)
	}
	// Residual of Yᵀz − l, row by row of Yᵀ (columns of Y).
	var worst float64
	for j := 0; j < n; j++ {
		v := -(complex(r.G[j], 0) + s*complex(r.C[j], 0))
		var scale float64
		for i := 0; i < n; i++ {
			y := complex(m.G.At(i, j), 0) + s*complex(m.C.At(i, j), 0)
			v += y * z[i]
			scale = math.Max(scale, cmplx.Abs(y*z[i]))
		}
		if scale > 0 {
			worst = math.Max(worst, cmplx.Abs(v)/scale)
		}
	}
	if worst > 1e-12 {
		t.Errorf("adjoint residual %.1e relative", worst)
	}
}

// TestRepivotWhenPivotVanishes: Y(s) = G + sC with Y₁₁ = 1 − s vanishing
// at s = 1 (a pivot that is fine at the first frequency). The refactor
// on the pattern of the first point must notice, re-pivot, and agree
// with the dense solve; the next points go back to refactoring.
func TestRepivotWhenPivotVanishes(t *testing.T) {
	g := mat.NewDense(3, 3, []float64{
		1, 2, 0,
		1, 1, 1,
		0, 1, 3,
	})
	c := mat.NewDense(3, 3, []float64{
		-1, 0, 0,
		0, 0, 0,
		0, 0, 1,
	})
	sys := &System{Unknowns: []string{"a", "b", "c"}, G: SparseOf(g), C: SparseOf(c), B: []float64{1, 0, 0}, L: []float64{0, 0, 1}}
	ws, wd := NewSparseSweeper(sys), NewSweeper(sys)
	sl := ws.f.(*sparseLU)
	for _, s := range []complex128{0, 0.5, 1, 1 + 1e-17, 2, complex(1, 1e-9), 1} {
		hd, dd, err1 := wd.Eval(s)
		hs, ds, err2 := ws.Eval(s)
		if err1 != nil || err2 != nil {
			t.Fatalf("s=%v: %v / %v", s, err1, err2)
		}
		if e := math.Max(relDiff(hd, hs), relDiff(dd, ds)); e > 1e-12 {
			t.Errorf("s=%v: H %v / %v, dH %v / %v (rel %.1e)", s, hd, hs, dd, ds, e)
		}
		// Independent check: y = L·Y⁻¹·B by Cramer's rule on the 3×3.
		y := mat.NewCDense(3, 3, nil)
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				y.Set(i, j, complex(g.At(i, j), 0)+s*complex(c.At(i, j), 0))
			}
		}
		det3 := func(m *mat.CDense) complex128 {
			return m.At(0, 0)*(m.At(1, 1)*m.At(2, 2)-m.At(1, 2)*m.At(2, 1)) -
				m.At(0, 1)*(m.At(1, 0)*m.At(2, 2)-m.At(1, 2)*m.At(2, 0)) +
				m.At(0, 2)*(m.At(1, 0)*m.At(2, 1)-m.At(1, 1)*m.At(2, 0))
		}
		d := det3(y)
		y.Set(0, 2, 1)
		y.Set(1, 2, 0)
		y.Set(2, 2, 0)
		if e := relDiff(det3(y)/d, hs); e > 1e-12 {
			t.Errorf("s=%v: H %v, Cramer %v", s, hs, det3(y)/d)
		}
	}
	if sl.repivots < 2 || sl.refactors < 3 {
		t.Errorf("re-pivots %d, refactors %d: want the pivot failures at s = 1 re-pivoted and refactors elsewhere", sl.repivots, sl.refactors)
	}
}

// detSign returns the sign of det Y(σ) from the sparse factorisation at
// the real σ: det A = sgn(prow)·sgn(perm)·Π U_kk, A = R·Y·K with R, K
// positive.
func detSign(t *testing.T, f *sparseLU, sigma float64) int {
	if u := f.factorAt(complex(sigma, 0)); u >= 0 {
		t.Fatalf("singular at σ = %g", sigma)
	}
	sign := permSign(f.prow) * permSign(f.o.perm)
	for _, d := range f.dinv {
		if real(d) < 0 {
			sign = -sign
		}
	}
	return sign
}

// permSign is the parity of a permutation (+1 even, −1 odd).
func permSign(p []int) int {
	seen := make([]bool, len(p))
	sign := 1
	for i := range p {
		if seen[i] {
			continue
		}
		l := 0
		for j := i; !seen[j]; j = p[j] {
			seen[j] = true
			l++
		}
		if l%2 == 0 {
			sign = -sign
		}
	}
	return sign
}

// TestLadderPolesFromSparseDeterminant: the natural frequencies of a
// uniform unloaded RC ladder of K sections are (from memory; the golden
// script testdata/reference/ladder/gen_ladders.py checks the same form
// against scipy's eigenvalues)
//
//	p_j = −(4/RC)·sin²((2j−1)π / (2(2K+1))),  j = 1…K.
//
// det Y(σ) changes sign exactly at them, so its sign, read from the
// sparse factorisation's pivots just inside and just outside each p_j
// (relative 1e-7), alternates: every pole sits within 1e-7 of its closed
// form, and none is missing.
func TestLadderPolesFromSparseDeterminant(t *testing.T) {
	const k, r, c = 120, 1e3, 1e-8
	sys, err := Build(rcLadder(t, k, r, c), Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprint("n", k)})
	if err != nil {
		t.Fatal(err)
	}
	f := newSparseLU(sys.order())
	prev := detSign(t, f, 0.5*(-4/(r*c))*math.Pow(math.Sin(math.Pi/(2*(2*k+1))), 2))
	for j := 1; j <= k; j++ {
		p := -(4 / (r * c)) * math.Pow(math.Sin(float64(2*j-1)*math.Pi/(2*(2*k+1))), 2)
		before, after := detSign(t, f, p*(1-1e-7)), detSign(t, f, p*(1+1e-7))
		if before != prev || after != -before {
			t.Fatalf("pole %d (%g rad/s): det signs %d, %d, %d around it", j, p, prev, before, after)
		}
		prev = after
	}
}

// TestSparseLadderMatchesGolden: the sparse path (every ladder of the
// golden is past the dense size) reproduces the 60-digit reference
// |H| of testdata/reference/ladder at the far and first nodes.
func TestSparseLadderMatchesGolden(t *testing.T) {
	raw, err := os.ReadFile("../testdata/reference/ladder/ladders.json")
	if err != nil {
		t.Fatal(err)
	}
	var gold struct {
		R       float64 `json:"r_ohm"`
		C       float64 `json:"c_farad"`
		Ladders []struct {
			Sections int       `json:"sections"`
			FreqHz   []float64 `json:"freq_hz"`
			MagFar   []float64 `json:"mag_far"`
			MagFirst []float64 `json:"mag_first"`
		} `json:"ladders"`
	}
	if err := json.Unmarshal(raw, &gold); err != nil {
		t.Fatal(err)
	}
	for _, l := range gold.Ladders {
		for _, node := range []string{fmt.Sprint("n", l.Sections), "n1"} {
			sys, err := Build(rcLadder(t, l.Sections, gold.R, gold.C), Input{}, Output{Kind: NodeVoltage, Node: node})
			if err != nil {
				t.Fatal(err)
			}
			w := NewSparseSweeper(sys)
			want := l.MagFar
			if node == "n1" {
				want = l.MagFirst
			}
			for i, fHz := range l.FreqHz {
				h, _, err := w.Eval(complex(0, 2*math.Pi*fHz))
				if err != nil {
					t.Fatal(err)
				}
				if e := math.Abs(cmplx.Abs(h)-want[i]) / want[i]; e > 1e-9 {
					t.Errorf("%d sections, %s at %g Hz: |H| %g, golden %g (rel %.1e)", l.Sections, node, fHz, cmplx.Abs(h), want[i], e)
				}
			}
		}
	}
}

// TestSparseSweeperNoAlloc: after the first point, Eval on the sparse
// path allocates nothing, nor does EvalPair after the first pair (which
// makes the twin).
func TestSparseSweeperNoAlloc(t *testing.T) {
	sys, err := Build(rcLadder(t, 200, 1e3, 1e-8), Input{}, Output{Kind: NodeVoltage, Node: "n200"})
	if err != nil {
		t.Fatal(err)
	}
	w := NewSweeper(sys)
	if _, ok := w.f.(*sparseLU); !ok {
		t.Fatal("not on the sparse path")
	}
	i := 0
	allocs := testing.AllocsPerRun(100, func() {
		i++
		if _, _, err := w.Eval(complex(0, float64(i))); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Errorf("%v allocations per point", allocs)
	}
	allocs = testing.AllocsPerRun(100, func() {
		i += 2
		if _, _, _, _, err1, err2 := w.EvalPair(complex(0, float64(i)), complex(0, float64(i+1))); err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
	})
	if allocs != 0 || w.f.(*sparseLU).twin == nil {
		t.Errorf("%v allocations per pair (twin made: %v)", allocs, w.f.(*sparseLU).twin != nil)
	}
}

// rcLadder is the uniform RC ladder of k sections from circuit text: a
// source into n0, R from n(j−1) to nj, C from nj to ground.
func rcLadder(t testing.TB, k int, r, c float64) *netlist.Circuit {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "Vin: voltage source (n0, gnd) 1\n")
	for j := 1; j <= k; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) %g\nC%d: capacitor (n%d, gnd) %g\n", j, j-1, j, r, j, j, c)
	}
	ckt, err := netlist.Load("ladder.nodal", []byte(b.String()), netlist.Overrides{})
	if err != nil {
		t.Fatal(err)
	}
	return ckt
}

// BenchmarkEvalPathLadder compares one point (H and dH/ds) of the dense
// and sparse paths on RC ladders around the switch denseMaxUnknowns.
func BenchmarkEvalPathLadder(b *testing.B) {
	for _, k := range []int{4, 8, 12, 16, 24, 32, 64, 998} {
		sys, err := Build(rcLadder(b, k, 1e3, 1e-8), Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprint("n", k)})
		if err != nil {
			b.Fatal(err)
		}
		for _, path := range []string{"dense", "sparse"} {
			b.Run(fmt.Sprintf("n=%d/%s", sys.Size(), path), func(b *testing.B) {
				w := &Sweeper{sys: sys, o: sys.order(), x: make([]complex128, sys.Size()), z: make([]complex128, sys.Size())}
				if path == "dense" {
					w.f = newLUFactor(w.o)
				} else {
					w.f = newSparseLU(w.o)
				}
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					if _, _, err := w.Eval(complex(0, 1e3+float64(i%100))); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkSweepLadder: a sweep of 1,000 log-spaced points (1 Hz–1 MHz)
// on RC ladders of 1,000 to 100,000 unknowns, building included (stamps,
// ordering, first factorisation): one op is the whole sweep. R = 1 Ω and
// C = 1 pF keep every node voltage in the normal float64 range over the
// sweep; with 1 kΩ and 10 nF the far sections' voltages fall below
// 10⁻³⁰⁸ at the upper frequencies and subnormal arithmetic (tens of
// times slower on x86) dominates the time.
func BenchmarkSweepLadder(b *testing.B) {
	for _, k := range []int{1000, 10000, 100000} {
		b.Run(fmt.Sprintf("unknowns=%d", k), func(b *testing.B) {
			ckt := rcLadder(b, k-2, 1, 1e-12) // k−2 sections: k unknowns with n0 and the source branch
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				sys, err := Build(ckt, Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprint("n", k-2)})
				if err != nil {
					b.Fatal(err)
				}
				w := NewSweeper(sys)
				for p := 0; p < 1000; p++ {
					f := math.Pow(10, 6*float64(p)/999)
					if _, _, err := w.Eval(complex(0, 2*math.Pi*f)); err != nil {
						b.Fatal(err)
					}
				}
			}
		})
	}
}

// TestCloneSharesSymbolic: a clone starts from the original's pivots and
// patterns (its first point is a refactorisation, not a full factor) and
// gives bit-for-bit the original's answers.
func TestCloneSharesSymbolic(t *testing.T) {
	sys, err := Build(rcLadder(t, 50, 1e3, 1e-8), Input{}, Output{Kind: NodeVoltage, Node: "n50"})
	if err != nil {
		t.Fatal(err)
	}
	w := NewSweeper(sys)
	if _, _, err := w.Eval(complex(0, 10)); err != nil {
		t.Fatal(err)
	}
	c := w.Clone()
	for _, s := range []complex128{complex(0, 1e3), complex(0, 1e5), complex(-1e4, 3e4)} {
		h1, d1, err1 := w.Eval(s)
		h2, d2, err2 := c.Eval(s)
		if err1 != nil || err2 != nil || h1 != h2 || d1 != d2 {
			t.Errorf("s=%v: %v %v / %v %v (%v, %v)", s, h1, d1, h2, d2, err1, err2)
		}
	}
	if f := c.f.(*sparseLU); f.refactors != 3 || f.repivots != 0 {
		t.Errorf("clone: %d refactors, %d re-pivots; want its first points refactored", f.refactors, f.repivots)
	}
}

// TestFlushedSweepMatchesGradual: on an RC ladder long enough that most
// of its solution is below float64's normal range over the sweep (1,500
// sections of 1 kΩ and 10 nF, 1 Hz to 1 MHz), a Sweeper that flushes
// subnormal entries gives, at every point where the response computed
// with gradual underflow everywhere has a normal |H|, bit for bit that
// H and dH/ds; where that |H| is below the normal range, an |H| below it
// too (the point is an underflow either way). The far, middle and first
// nodes take the kept flushes, the solves redone and the points that
// never flush; each must occur.
func TestFlushedSweepMatchesGradual(t *testing.T) {
	const k = 1500
	ckt := rcLadder(t, k, 1e3, 10e-9)
	var kept, redone, normal, under int
	for _, node := range []string{fmt.Sprint("n", k), fmt.Sprint("n", k/2), "n1"} {
		sys, err := Build(ckt, Input{}, Output{Kind: NodeVoltage, Node: node})
		if err != nil {
			t.Fatal(err)
		}
		fast, exact := NewSweeper(sys), NewSweeper(sys)
		for p := 0; p <= 300; p++ {
			s := complex(0, 2*math.Pi*math.Pow(10, 6*float64(p)/300))
			exact.f.(*sparseLU).flushSkip = math.MaxInt // gradual underflow throughout
			he, de, err1 := exact.Eval(s)
			hf, df, err2 := fast.Eval(s)
			if err1 != nil || err2 != nil {
				t.Fatalf("%s at %v: %v / %v", node, s, err1, err2)
			}
			if cmplx.Abs(he) >= 0x1p-1022 {
				normal++
				if hf != he || df != de {
					t.Errorf("%s at %v Hz: flushed H %v dH %v, gradual %v %v", node, imag(s)/(2*math.Pi), hf, df, he, de)
				}
			} else {
				under++
				if cmplx.Abs(hf) >= 0x1p-1022 {
					t.Errorf("%s at %v Hz: flushed |H| %g, gradual %g (below the normal range)", node, imag(s)/(2*math.Pi), cmplx.Abs(hf), cmplx.Abs(he))
				}
			}
		}
		f := fast.f.(*sparseLU)
		kept, redone = kept+f.flushKept, redone+f.flushRedone
	}
	if kept == 0 || redone == 0 || normal == 0 || under == 0 {
		t.Errorf("flushes kept %d, redone %d; points normal %d, below the range %d: want each path taken", kept, redone, normal, under)
	}
}

// BenchmarkSweepCableLadder: BenchmarkSweepLadder on the cable ladder of
// the whole-process measurements (1 kΩ and 10 nF a section, as
// /work-style generated files use): above a few hundred hertz most of the
// far sections' voltages are below float64's normal range, so this
// measures the sweep with its flushed solves (see sparseLU.transfer);
// the output is the far node, whose |H| underflows at most points.
func BenchmarkSweepCableLadder(b *testing.B) {
	for _, k := range []int{10000, 100000} {
		b.Run(fmt.Sprintf("unknowns=%d", k), func(b *testing.B) {
			ckt := rcLadder(b, k-2, 1e3, 10e-9)
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				sys, err := Build(ckt, Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprint("n", k-2)})
				if err != nil {
					b.Fatal(err)
				}
				w := NewSweeper(sys)
				for p := 0; p < 1000; p++ {
					f := math.Pow(10, 6*float64(p)/999)
					if _, _, err := w.Eval(complex(0, 2*math.Pi*f)); err != nil {
						b.Fatal(err)
					}
				}
			}
		})
	}
}
