package mna

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// pairCase is a system and the frequencies (rad/s, complex) to evaluate
// in pairs on it.
type pairCase struct {
	name string
	sys  *System
	s    []complex128
}

// TestEvalPairMatchesEval: EvalPair(sa, sb) gives, point by point, what
// Eval gives at sa then sb on a Sweeper of its own — bit for bit where
// |H| is in float64's normal range, below that range where Eval's is,
// the same errors — and X the solution at sb. The cases (the design
// claim of EvalPair, sparse_lu_pair.go): every reference circuit on the
// sparse path over six decades on and off the jω axis; a 1,500-section
// cable ladder whose far node underflows (the flushed solves of each
// point settled on their own); and the 3×3 system whose pivot vanishes at
// s = 1 (TestRepivotWhenPivotVanishes), paired so that the failing point
// comes first, second and in both places, which must re-pivot and still
// agree with the dense solve to 1e-12. The side-by-side path must be
// taken on every case.
func TestEvalPairMatchesEval(t *testing.T) {
	var cases []pairCase
	var decades []complex128
	for k := 0; k <= 60; k++ {
		w := 2 * math.Pi * math.Pow(10, float64(k)/10)
		decades = append(decades, complex(0, w), complex(-w/3, w))
	}
	for name, sys := range referenceCircuits(t) {
		cases = append(cases, pairCase{name, sys, decades})
	}
	var sweep []complex128
	for p := 0; p <= 300; p++ {
		sweep = append(sweep, complex(0, 2*math.Pi*math.Pow(10, 6*float64(p)/300)))
	}
	ckt := rcLadder(t, 1500, 1e3, 10e-9)
	for _, node := range []string{"n1500", "n750"} {
		ladder, err := Build(ckt, Input{}, Output{Kind: NodeVoltage, Node: node})
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, pairCase{"ladder 1500 at " + node, ladder, sweep})
	}
	g := mat.NewDense(3, 3, []float64{1, 2, 0, 1, 1, 1, 0, 1, 3})
	c := mat.NewDense(3, 3, []float64{-1, 0, 0, 0, 0, 0, 0, 0, 1})
	vanishing := &System{Unknowns: []string{"a", "b", "c"}, G: SparseOf(g), C: SparseOf(c), B: []float64{1, 0, 0}, L: []float64{0, 0, 1}}
	cases = append(cases, pairCase{"pivot vanishing at s = 1", vanishing,
		[]complex128{0, 0.5, 2, 1, 1, 3, 1, 1 + 1e-17, 0.25, complex(1, 1e-9), 4, 5}})

	var ladderUnder, kept, redone int
	for _, tc := range cases {
		pair, one, dense := NewSparseSweeper(tc.sys), NewSparseSweeper(tc.sys), NewSweeper(tc.sys)
		one.f.(*sparseLU).flushSkip = math.MaxInt        // gradual underflow throughout
		if _, _, err := pair.Eval(tc.s[0]); err != nil { // the pattern
			t.Fatalf("%s: %v", tc.name, err)
		}
		var normal, under int
		for i := 0; i+1 < len(tc.s); i += 2 {
			ha, dha, hb, dhb, errA, errB := pair.EvalPair(tc.s[i], tc.s[i+1])
			xb := append([]complex128(nil), pair.X()...)
			for lane, got := range []struct {
				h, dh complex128
				err   error
			}{{ha, dha, errA}, {hb, dhb, errB}} {
				s := tc.s[i+lane]
				h, dh, err := one.Eval(s)
				if (err == nil) != (got.err == nil) {
					t.Fatalf("%s at s=%v: pair error %v, one at a time %v", tc.name, s, got.err, err)
				}
				if err != nil {
					continue
				}
				switch {
				case cmplx.Abs(h) >= 0x1p-1022:
					normal++
					if got.h != h || got.dh != dh {
						t.Errorf("%s at s=%v: pair H %v dH %v, one at a time %v %v", tc.name, s, got.h, got.dh, h, dh)
					}
				case cmplx.Abs(got.h) >= 0x1p-1022:
					t.Errorf("%s at s=%v: pair |H| %g, one at a time %g (below the normal range)", tc.name, s, cmplx.Abs(got.h), cmplx.Abs(h))
				default:
					under++
				}
				if tc.sys.Size() <= denseMaxUnknowns {
					hd, _, err := dense.Eval(s)
					if err != nil || relDiff(hd, got.h) > 1e-12 {
						t.Errorf("%s at s=%v: pair H %v, dense %v (%v)", tc.name, s, got.h, hd, err)
					}
				}
			}
			for u, v := range one.X() {
				if xb[u] != v && cmplx.Abs(v) >= 0x1p-1022 {
					t.Errorf("%s at s=%v: X[%d] after the pair %v, one at a time %v", tc.name, tc.s[i+1], u, xb[u], v)
					break
				}
			}
		}
		f := pair.f.(*sparseLU)
		if f.twin == nil || f.refactors < 2 || normal == 0 {
			t.Errorf("%s: twin %v, %d refactors, %d normal points: want pairs solved side by side", tc.name, f.twin != nil, f.refactors, normal)
		}
		if strings.HasPrefix(tc.name, "ladder") {
			ladderUnder += under
			kept += f.flushKept + f.twin.flushKept
			redone += f.flushRedone + f.twin.flushRedone
		}
		if tc.name == "pivot vanishing at s = 1" && f.repivots < 3 {
			t.Errorf("%s: %d re-pivots; want the pairs holding s = 1 factored one at a time", tc.name, f.repivots)
		}
	}
	if ladderUnder == 0 || kept == 0 || redone == 0 {
		t.Errorf("ladders: %d points below the range, flushed solves kept %d, redone %d: want each path taken", ladderUnder, kept, redone)
	}
}

// BenchmarkEvalPairLadder: 1,000 log-spaced points (1 Hz–1 MHz) on RC
// ladders, one point per Eval against two per EvalPair, after the first
// point (the pattern): one op is the 1,000 points. "cable" is 1 kΩ and
// 10 nF a section, most of whose far voltages underflow (flushed solves);
// "normal" is 1 Ω and 1 pF, every value in the normal range. nnz(L+U) as
// in BenchmarkEvalMesh.
func BenchmarkEvalPairLadder(b *testing.B) {
	for _, k := range []int{1000, 10000} {
		for _, kind := range []struct {
			name string
			r, c float64
		}{{"cable", 1e3, 10e-9}, {"normal", 1, 1e-12}} {
			sys, err := Build(rcLadder(b, k-2, kind.r, kind.c), Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprint("n", k-2)})
			if err != nil {
				b.Fatal(err)
			}
			s := make([]complex128, 1000)
			for p := range s {
				s[p] = complex(0, 2*math.Pi*math.Pow(10, 6*float64(p)/999))
			}
			for _, mode := range []string{"one", "pair"} {
				b.Run(fmt.Sprintf("unknowns=%d/%s/%s", k, kind.name, mode), func(b *testing.B) {
					w := NewSweeper(sys)
					if _, _, err := w.Eval(s[0]); err != nil {
						b.Fatal(err)
					}
					b.ReportAllocs()
					b.ResetTimer()
					for i := 0; i < b.N; i++ {
						for p := 0; p < len(s); p += 2 {
							var err1, err2 error
							if mode == "pair" {
								_, _, _, _, err1, err2 = w.EvalPair(s[p], s[p+1])
							} else {
								_, _, err1 = w.Eval(s[p])
								_, _, err2 = w.Eval(s[p+1])
							}
							if err1 != nil || err2 != nil {
								b.Fatal(err1, err2)
							}
						}
					}
					b.ReportMetric(float64(factorNNZ(b, w)), "nnz(L+U)")
				})
			}
		}
	}
}

// TestPow2InvAndRecip: the two scalar kernels of the factorisations
// against their definitions, bit for bit. pow2Inv(m) is 2^−e with
// m = f·2^e, f in [0.5, 1) (math.Frexp; math.Ldexp gives +Inf past the
// range), and 1 for m ≤ 0, Inf and NaN; recip(z) is Go's 1/z (Smith's
// method in the runtime; equal as numbers) for finite non-zero z. Values: the edges of the
// normal and subnormal ranges, and 100,000 random bit patterns.
func TestPow2InvAndRecip(t *testing.T) {
	vals := []float64{0x1p-1074, 0x1p-1073, 3 * 0x1p-1074, 0x1p-1023, 0x1p-1022, 0x1.8p-1022, 0x1p-1021, 0.5, 0.75, 1, 1.5, 2,
		0x1p1021, 0x1.fffp1021, 0x1p1022, 0x1.8p1022, 0x1p1023, math.MaxFloat64, 0, math.Copysign(0, -1), -1, math.Inf(1), math.Inf(-1), math.NaN()}
	rng := uint64(0x9e3779b97f4a7c15)
	for i := 0; i < 100000; i++ {
		rng ^= rng << 13
		rng ^= rng >> 7
		rng ^= rng << 17
		vals = append(vals, math.Float64frombits(rng))
	}
	for _, m := range vals {
		want := 1.0
		if m > 0 && !math.IsInf(m, 1) {
			_, e := math.Frexp(m)
			want = math.Ldexp(1, -e)
		}
		if got := pow2Inv(m); math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("pow2Inv(%g) = %g, want %g", m, got, want)
		}
	}
	one := complex(1, 0)
	for i := 0; i+1 < len(vals); i++ {
		z := complex(vals[i], vals[i+1])
		if cmplx.IsNaN(z) || cmplx.IsInf(z) || z == 0 {
			continue
		}
		got, want := recip(z), one/z
		if got != want {
			t.Errorf("recip(%v) = %v, want 1/z = %v", z, got, want)
		}
		// Bit for bit, zeros' signs included, Smith's two branches as
		// written before recip was shaped for the inliner (the runtime's
		// 0 − ratio can differ from −ratio in the sign of a zero).
		a, b := real(z), imag(z)
		var old complex128
		if math.Abs(a) >= math.Abs(b) {
			ratio := b / a
			denom := a + ratio*b
			old = complex(1/denom, -ratio/denom)
		} else {
			ratio := a / b
			denom := b + ratio*a
			old = complex(ratio/denom, -1/denom)
		}
		if math.Float64bits(real(got)) != math.Float64bits(real(old)) || math.Float64bits(imag(got)) != math.Float64bits(imag(old)) {
			t.Errorf("recip(%v) = %v, Smith's branches %v", z, got, old)
		}
	}
}

// TestAdjointSolvePairMatches: the adjoint that weighs a flushed solve,
// solved for both points of a pair in one pass (adjointSolvePair), is
// bit for bit each point's adjointSolve, sensitivities at the back
// solve's flushes included, on the 1,500-section cable ladder at points
// where both flush (the design claim of sparse_lu_pair.go).
func TestAdjointSolvePairMatches(t *testing.T) {
	sys, err := Build(rcLadder(t, 1500, 1e3, 10e-9), Input{}, Output{Kind: NodeVoltage, Node: "n1500"})
	if err != nil {
		t.Fatal(err)
	}
	w := NewSparseSweeper(sys)
	if _, _, err := w.Eval(complex(0, 2*math.Pi*10)); err != nil {
		t.Fatal(err)
	}
	f := w.f.(*sparseLU)
	var tested int
	for _, fHz := range [][2]float64{{1e3, 1.1e3}, {1e4, 3e4}, {2e5, 1e6}} {
		sa, sb := complex(0, 2*math.Pi*fHz[0]), complex(0, 2*math.Pi*fHz[1])
		g, ok := f.factorPair(sa, sb)
		if !ok {
			t.Fatalf("%v Hz: no pair refactorisation", fHz)
		}
		f.rhsSteps(sys.B)
		g.rhsSteps(sys.B)
		f.solveFlushedPair(g, f.w, g.w, flushBelow, flushBelow)
		if !f.weighable() || !g.weighable() {
			continue
		}
		tested++
		f.adjointStart(sys.L)
		g.adjointStart(sys.L)
		f.adjointSolvePair(g)
		for lane, h := range []*sparseLU{f, g} {
			pair, sens := append([]complex128(nil), h.w3...), append([]float64(nil), h.sens...)
			h.adjointStart(sys.L)
			h.adjointSolve()
			for k := range pair {
				if pair[k] != h.w3[k] || math.Float64bits(sens[k]) != math.Float64bits(h.sens[k]) {
					t.Fatalf("%v Hz, point %d, step %d: pair adjoint %v (sens %g), alone %v (%g)", fHz, lane, k, pair[k], sens[k], h.w3[k], h.sens[k])
				}
			}
		}
	}
	if tested == 0 {
		t.Error("no pair where both points flushed")
	}
}
