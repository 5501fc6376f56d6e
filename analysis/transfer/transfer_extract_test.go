package transfer

import (
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
)

// directH evaluates H(s) = L·(G+sC)⁻¹·B independently of Extract, by
// solving the equivalent real system [[G+aC, −bC], [bC, G+aC]]·[xr; xi] =
// [B; 0] for s = a + jb with gonum.
func directH(t *testing.T, sys *mna.System, s complex128) complex128 {
	t.Helper()
	n := len(sys.B)
	a, b := real(s), imag(s)
	m := mat.NewDense(2*n, 2*n, nil)
	rhs := mat.NewVecDense(2*n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			re := sys.G.At(i, j) + a*sys.C.At(i, j)
			im := b * sys.C.At(i, j)
			m.Set(i, j, re)
			m.Set(i+n, j+n, re)
			m.Set(i, j+n, -im)
			m.Set(i+n, j, im)
		}
		rhs.SetVec(i, sys.B[i])
	}
	var x mat.VecDense
	if err := x.SolveVec(m, rhs); err != nil {
		t.Fatalf("direct solve at s=%v: %v", s, err)
	}
	var h complex128
	for i := 0; i < n; i++ {
		h += complex(sys.L[i]*x.AtVec(i), sys.L[i]*x.AtVec(i+n))
	}
	return h
}

// relErr is |a−b|/|b| (|a−b| when b = 0).
func relErr(a, b complex128) float64 {
	if b == 0 {
		return cmplx.Abs(a)
	}
	return cmplx.Abs(a-b) / cmplx.Abs(b)
}

// mustExtract runs Extract and fails the test on error.
func mustExtract(t *testing.T, sys *mna.System) *TransferFunction {
	t.Helper()
	tf, err := Extract(sys)
	if err != nil {
		t.Fatalf("Extract: %v", err)
	}
	return tf
}

// checkInvariants verifies the documented TransferFunction invariants and
// agreement of the factored and polynomial forms with a direct solve.
func checkInvariants(t *testing.T, sys *mna.System, tf *TransferFunction, tol float64, omegas ...float64) {
	t.Helper()
	if len(tf.Den)-1 != len(tf.Poles) || len(tf.Num)-1 != len(tf.Zeros) {
		t.Fatalf("degrees: num %d zeros %d den %d poles %d", len(tf.Num), len(tf.Zeros), len(tf.Den), len(tf.Poles))
	}
	for _, d := range tf.Den {
		if d != 0 {
			if d != 1 {
				t.Errorf("lowest non-zero Den coefficient %g, want 1", d)
			}
			break
		}
	}
	for _, roots := range [][]complex128{tf.Poles, tf.Zeros, tf.Cancelled} {
		for i := 0; i < len(roots); i++ {
			if imag(roots[i]) > 0 {
				if i+1 >= len(roots) || roots[i+1] != cmplx.Conj(roots[i]) {
					t.Errorf("root %v not followed by its conjugate in %v", roots[i], roots)
				}
				i++
			} else if imag(roots[i]) < 0 {
				t.Errorf("lower root %v without preceding partner in %v", roots[i], roots)
			}
		}
	}
	for _, w := range omegas {
		s := complex(0, w)
		want := directH(t, sys, s)
		if e := relErr(tf.EvalFactored(s), want); e > tol {
			t.Errorf("factored H(j%g) = %v, direct %v (rel err %.2g)", w, tf.EvalFactored(s), want, e)
		}
		if e := relErr(tf.Eval(s), want); e > tol {
			t.Errorf("polynomial H(j%g) = %v, direct %v (rel err %.2g)", w, tf.Eval(s), want, e)
		}
	}
}

func TestFirstOrderCorner(t *testing.T) {
	// Source: common practice — RC low-pass H = 1/(1+sRC), corner 1/(2πRC).
	const r, c = 1.5e3, 47e-9
	sys := newStamper().V("in", "0").R("in", "out", r).C("out", "0", c).Out("out", "0").System()
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-12, 10, 1e4, 1e7)
	if len(tf.Poles) != 1 || len(tf.Zeros) != 0 {
		t.Fatalf("poles %v zeros %v", tf.Poles, tf.Zeros)
	}
	if e := relErr(tf.Poles[0], complex(-1/(r*c), 0)); e > 1e-13 {
		t.Errorf("pole %v, want %g (rel %g)", tf.Poles[0], -1/(r*c), e)
	}
	if math.Abs(tf.Num[0]-1) > 1e-13 || math.Abs(tf.Den[1]-r*c) > 1e-13*r*c {
		t.Errorf("num %v den %v, want [1] [1 %g]", tf.Num, tf.Den, r*c)
	}
}

// sortedByImag returns a copy of roots sorted by imaginary part.
func sortedByImag(r []complex128) []complex128 {
	out := append([]complex128(nil), r...)
	sort.Slice(out, func(a, b int) bool { return imag(out[a]) < imag(out[b]) })
	return out
}

// wideOmegas spans the frequencies at which the forms are compared.
var wideOmegas = []float64{1, 37, 1e3, 6.3e3, 2e4, 1e5, 1e6, 1e8}

// pairOf returns ω0 and Q of a complex pole p: ω0 = |p|, Q = |p|/(−2 Re p).
func pairOf(p complex128) (w0, q float64) {
	return cmplx.Abs(p), cmplx.Abs(p) / (-2 * real(p))
}

func TestSallenKeyUnityGain(t *testing.T) {
	// Source: Sedra & Smith, Microelectronic Circuits (edition not checked;
	// formula from memory), unity-gain Sallen-Key low-pass:
	// ω0 = 1/√(R1R2C1C2), Q = √(R1R2C1C2)/(C2(R1+R2)), C1 the feedback
	// capacitor, C2 to ground. Ideal op-amp stamped as a nullor follower.
	const r1, r2, c1, c2 = 10e3, 22e3, 22e-9, 4.7e-9
	sys := newStamper().V("in", "0").R("in", "a", r1).R("a", "b", r2).
		C("a", "out", c1).C("b", "0", c2).Amp("b", "out", "out", math.Inf(1)).
		Out("out", "0").System()
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-11, wideOmegas...)
	if len(tf.Poles) != 2 || len(tf.Zeros) != 0 {
		t.Fatalf("poles %v zeros %v", tf.Poles, tf.Zeros)
	}
	w0, q := pairOf(tf.Poles[0])
	wantW0 := 1 / math.Sqrt(r1*r2*c1*c2)
	wantQ := math.Sqrt(r1*r2*c1*c2) / (c2 * (r1 + r2))
	if math.Abs(w0/wantW0-1) > 1e-12 || math.Abs(q/wantQ-1) > 1e-12 {
		t.Errorf("ω0 %g Q %g, want %g %g", w0, q, wantW0, wantQ)
	}
	if math.Abs(tf.Num[0]-1) > 1e-12 {
		t.Errorf("dc gain %g, want 1", tf.Num[0])
	}
}

func TestSallenKeyEqualComponent(t *testing.T) {
	// Source: Van Valkenburg, Analog Filter Design (1982), equal-component
	// Sallen-Key low-pass with amplifier gain K: ω0 = 1/(RC), Q = 1/(3−K)
	// (from memory). Amplifier stamped as an ideal VCVS of gain K.
	const r, c = 4.7e3, 10e-9
	for _, k := range []float64{1, 1.586, 2, 2.5, 2.9} {
		sys := newStamper().V("in", "0").R("in", "a", r).R("a", "b", r).
			C("a", "out", c).C("b", "0", c).Amp("b", "0", "out", k).
			Out("out", "0").System()
		tf := mustExtract(t, sys)
		checkInvariants(t, sys, tf, 1e-10, wideOmegas...)
		if len(tf.Poles) != 2 {
			t.Fatalf("K=%g: poles %v", k, tf.Poles)
		}
		w0, q := pairOf(tf.Poles[0])
		if math.Abs(w0*r*c-1) > 1e-12 || math.Abs(q*(3-k)-1) > 1e-10 {
			t.Errorf("K=%g: ω0 %g Q %g, want %g %g", k, w0, q, 1/(r*c), 1/(3-k))
		}
		if math.Abs(tf.Num[0]-k) > 1e-12*k {
			t.Errorf("K=%g: dc gain %g", k, tf.Num[0])
		}
	}
}

func TestMultipleFeedbackBandPass(t *testing.T) {
	// Source: Van Valkenburg, Analog Filter Design (1982), Delyiannis–Friend
	// multiple-feedback band-pass (from memory; equal-capacitor forms there:
	// Q = ½√(R2/R1), centre gain −R2/(2R1)). General values, re-derived by
	// hand from the two node equations: R1 input, C1 to the inverting
	// input, C2 to the output, R2 output to inverting input:
	// H = −sR2C1/(1 + sR1(C1+C2) + s²R1R2C1C2), so
	// ω0 = 1/√(R1R2C1C2), Q = √(R2/R1)·√(C1C2)/(C1+C2),
	// centre gain −R2C1/(R1(C1+C2)). Both values cases are checked.
	for _, v := range [][4]float64{{3.3e3, 150e3, 10e-9, 6.8e-9}, {1e3, 100e3, 22e-9, 22e-9}} {
		r1, r2, c1, c2 := v[0], v[1], v[2], v[3]
		checkMFB(t, r1, r2, c1, c2)
		if c1 == c2 {
			tf := mustExtract(t, mfbBandPass(r1, r2, c1, c2))
			w0, q := pairOf(tf.Poles[0])
			if math.Abs(q/(0.5*math.Sqrt(r2/r1))-1) > 1e-12 {
				t.Errorf("equal-C Q %g, want %g", q, 0.5*math.Sqrt(r2/r1))
			}
			if h := tf.EvalFactored(complex(0, w0)); relErr(h, complex(-r2/(2*r1), 0)) > 1e-11 {
				t.Errorf("equal-C centre gain %v, want %g", h, -r2/(2*r1))
			}
		}
	}
}

// mfbBandPass stamps the multiple-feedback band-pass.
func mfbBandPass(r1, r2, c1, c2 float64) *mna.System {
	return newStamper().V("in", "0").R("in", "a", r1).C("a", "n", c1).
		C("a", "out", c2).R("n", "out", r2).Amp("0", "n", "out", math.Inf(1)).
		Out("out", "0").System()
}

func checkMFB(t *testing.T, r1, r2, c1, c2 float64) {
	t.Helper()
	sys := mfbBandPass(r1, r2, c1, c2)
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-11, wideOmegas...)
	if len(tf.Poles) != 2 || len(tf.Zeros) != 1 || tf.Zeros[0] != 0 {
		t.Fatalf("poles %v zeros %v", tf.Poles, tf.Zeros)
	}
	w0, q := pairOf(tf.Poles[0])
	wantW0 := 1 / math.Sqrt(r1*r2*c1*c2)
	wantQ := math.Sqrt(r2/r1) * math.Sqrt(c1*c2) / (c1 + c2)
	if math.Abs(w0/wantW0-1) > 1e-12 || math.Abs(q/wantQ-1) > 1e-12 {
		t.Errorf("ω0 %g Q %g, want %g %g", w0, q, wantW0, wantQ)
	}
	hc := tf.EvalFactored(complex(0, wantW0))
	if want := -r2 * c1 / (r1 * (c1 + c2)); relErr(hc, complex(want, 0)) > 1e-11 {
		t.Errorf("centre gain %v, want %g", hc, want)
	}
}

// butterworthLadder returns the doubly terminated LC ladder (shunt C
// first) of order n for cutoff wc (rad/s) and terminations r, with
// g_k = 2 sin((2k−1)π/(2n)) (Matthaei, Young & Jones 1964).
func butterworthLadder(n int, wc, r float64) *mna.System {
	s := newStamper().V("in", "0").R("in", "n1", r)
	node := func(k int) string { return "n" + string(rune('0'+k)) }
	cur := 1
	for k := 1; k <= n; k++ {
		g := 2 * math.Sin(float64(2*k-1)*math.Pi/float64(2*n))
		if k%2 == 1 {
			s.C(node(cur), "0", g/(r*wc))
		} else {
			s.L(node(cur), node(cur+1), g*r/wc)
			cur++
		}
	}
	return s.R(node(cur), "0", r).Out(node(cur), "0").System()
}

func TestButterworthLadderPoles(t *testing.T) {
	// Source: Butterworth poles lie on the circle |s| = ωc at angles
	// π/2 + (2k−1)π/(2n) (common practice, any filter handbook); ladder
	// element values from Matthaei, Young & Jones (1964). Doubly terminated
	// with equal resistors the dc gain is 1/2.
	const n, wc, r = 5, 2 * math.Pi * 1e3, 600.0
	sys := butterworthLadder(n, wc, r)
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-10, wideOmegas...)
	if len(tf.Poles) != n || len(tf.Zeros) != 0 {
		t.Fatalf("poles %v zeros %v", tf.Poles, tf.Zeros)
	}
	var want []complex128
	for k := 1; k <= n; k++ {
		want = append(want, cmplx.Rect(wc, math.Pi/2+float64(2*k-1)*math.Pi/(2*n)))
	}
	got := sortedByImag(tf.Poles)
	want = sortedByImag(want)
	for i := range got {
		if e := relErr(got[i], want[i]); e > 1e-12 {
			t.Errorf("pole %v, want %v (rel %g)", got[i], want[i], e)
		}
	}
	if math.Abs(tf.Num[0]-0.5) > 1e-12 {
		t.Errorf("dc gain %g, want 0.5", tf.Num[0])
	}
}

func TestTwinTNotch(t *testing.T) {
	// Source: common practice — passive twin-T (R, R, 2C; C, C, R/2),
	// unloaded: H = (s²+ω0²)/(s²+4ω0 s+ω0²), ω0 = 1/(RC), Q = 1/4.
	const r, c = 16e3, 10e-9
	sys := newStamper().V("in", "0").R("in", "m", r).R("m", "out", r).C("m", "0", 2*c).
		C("in", "k", c).C("k", "out", c).R("k", "0", r/2).Out("out", "0").System()
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-10, wideOmegas...)
	w0 := 1 / (r * c)
	if len(tf.Zeros) != 2 || relErr(tf.Zeros[0], complex(0, w0)) > 1e-10 {
		t.Fatalf("zeros %v, want ±j%g", tf.Zeros, w0)
	}
	// The unloaded twin-T is third order with one exact cancellation at
	// s = −ω0, leaving the quadratic above (common practice).
	if len(tf.Cancelled) != 1 || relErr(tf.Cancelled[0], complex(-w0, 0)) > 1e-10 {
		t.Errorf("cancelled %v, want [%g]", tf.Cancelled, -w0)
	}
	wantDen := []float64{1, 4 / w0, 1 / (w0 * w0)}
	if len(tf.Den) != 3 {
		t.Fatalf("den %v, want %v", tf.Den, wantDen)
	}
	for k := range wantDen {
		if math.Abs(tf.Den[k]/wantDen[k]-1) > 1e-11 {
			t.Errorf("den[%d] = %g, want %g", k, tf.Den[k], wantDen[k])
		}
	}
	// Q of the denominator s² + (ω0/Q)s + ω0²: 1/4.
	if q := 1 / (tf.Den[1] * w0); math.Abs(q-0.25) > 1e-11 {
		t.Errorf("Q %g, want 1/4", q)
	}
}

func TestOrderReductions(t *testing.T) {
	// Source: common practice — the order of an RLC network is the number
	// of capacitors and inductors minus the independent capacitor(-source)
	// loops and inductor(-current source) cut-sets.
	const r, c, l = 1e3, 100e-9, 10e-3
	cases := []struct {
		name    string
		sys     *mna.System
		order   int
		numDeg  int
		omegaCk []float64
	}{
		{"capacitor loop C1-C2-C3", newStamper().V("in", "0").R("in", "a", r).C("a", "0", c).
			C("a", "b", 2*c).C("b", "0", 3*c).R("b", "0", 2*r).Out("b", "0").System(), 2, 1, wideOmegas},
		{"capacitor across the source", newStamper().V("in", "0").C("in", "0", c).R("in", "out", r).
			C("out", "0", c).Out("out", "0").System(), 1, 0, wideOmegas},
		{"inductor cut-set L1-L2 in series", newStamper().V("in", "0").R("in", "a", r).L("a", "m", l).
			L("m", "b", 2*l).C("b", "0", c).R("b", "0", r).Out("b", "0").System(), 2, 0, wideOmegas},
		{"three energy stores, no loop", newStamper().V("in", "0").R("in", "a", r).L("a", "b", l).
			C("b", "0", c).R("b", "c", r).C("c", "0", c).Out("c", "0").System(), 3, 0, wideOmegas},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tf := mustExtract(t, tc.sys)
			checkInvariants(t, tc.sys, tf, 1e-10, tc.omegaCk...)
			if tf.Order()+len(tf.Cancelled) != tc.order || len(tf.Zeros) != tc.numDeg {
				t.Errorf("order %d (+%d cancelled), %d zeros; want %d, %d: poles %v zeros %v",
					tf.Order(), len(tf.Cancelled), len(tf.Zeros), tc.order, tc.numDeg, tf.Poles, tf.Zeros)
			}
		})
	}
}

func TestCancellationBridgeAllPass(t *testing.T) {
	// Source: common practice — the RC bridge with R1C1 = R2C2 = τ,
	// output between the two arms, is the first-order all-pass
	// (1 − sτ)/(1 + sτ): the circuit is second order and one mode at
	// −1/τ cancels exactly.
	const r1, c1, r2 = 10e3, 15e-9, 33e3
	c2 := r1 * c1 / r2
	tau := r1 * c1
	sys := newStamper().V("in", "0").R("in", "a", r1).C("a", "0", c1).
		C("in", "b", c2).R("b", "0", r2).Out("a", "b").System()
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-10, wideOmegas...)
	if len(tf.Poles) != 1 || len(tf.Zeros) != 1 || len(tf.Cancelled) != 1 {
		t.Fatalf("poles %v zeros %v cancelled %v", tf.Poles, tf.Zeros, tf.Cancelled)
	}
	if relErr(tf.Poles[0], complex(-1/tau, 0)) > 1e-10 || relErr(tf.Zeros[0], complex(1/tau, 0)) > 1e-10 ||
		relErr(tf.Cancelled[0], complex(-1/tau, 0)) > 1e-10 {
		t.Errorf("poles %v zeros %v cancelled %v, want −1/τ, +1/τ, −1/τ", tf.Poles, tf.Zeros, tf.Cancelled)
	}
	if math.Abs(tf.Num[0]-1) > 1e-10 || math.Abs(tf.Gain+1) > 1e-10 {
		t.Errorf("num %v gain %g, want H(0)=1, gain −1", tf.Num, tf.Gain)
	}

	// Unobservable mode: a second RC arm nobody looks at.
	sys = newStamper().V("in", "0").R("in", "a", r1).C("a", "0", c1).
		R("in", "b", r2).C("b", "0", c1).Out("a", "0").System()
	tf = mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-10, wideOmegas...)
	if len(tf.Poles) != 1 || len(tf.Cancelled) != 1 || relErr(tf.Cancelled[0], complex(-1/(r2*c1), 0)) > 1e-10 {
		t.Errorf("poles %v cancelled %v, want cancelled %g", tf.Poles, tf.Cancelled, -1/(r2*c1))
	}
}

func TestDegenerateTransferFunctions(t *testing.T) {
	// Balanced resistive Wheatstone bridge: H ≡ 0 (common practice).
	sys := newStamper().V("in", "0").R("in", "a", 1e3).R("a", "0", 2e3).
		R("in", "b", 5e3).R("b", "0", 10e3).C("in", "0", 1e-9).Out("a", "b").System()
	tf := mustExtract(t, sys)
	if len(tf.Num) != 1 || tf.Num[0] != 0 || tf.Gain != 0 || len(tf.Poles) != 0 {
		t.Errorf("balanced bridge: %+v, want H ≡ 0", tf)
	}
	// Resistive divider: constant H = R2/(R1+R2).
	sys = newStamper().V("in", "0").R("in", "a", 1e3).R("a", "0", 3e3).Out("a", "0").System()
	tf = mustExtract(t, sys)
	if len(tf.Poles) != 0 || len(tf.Zeros) != 0 || math.Abs(tf.Num[0]-0.75) > 1e-15 || tf.Den[0] != 1 {
		t.Errorf("divider: %+v, want constant 0.75", tf)
	}
	// Improper: the current into a capacitor across the source, measured
	// as the voltage on a 1 Ω sense resistor in series: H = s·C/(1+sRC)
	// for R = 1 Ω; with an ideal current sense (output = source current)
	// H = −sC exactly, a zero at 0 and no pole.
	sys = newStamper().V("in", "0").C("in", "0", 1e-6).Out("in", "0").System()
	sys.L = make([]float64, len(sys.B))
	sys.L[len(sys.L)-1] = 1 // the source's branch current
	tf = mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-12, wideOmegas...)
	if len(tf.Poles) != 0 || len(tf.Zeros) != 1 || tf.Zeros[0] != 0 || math.Abs(math.Abs(tf.Gain)-1e-6) > 1e-18 {
		t.Errorf("capacitor current: %+v, want ±s·1µF", tf)
	}
}

func TestExtractErrors(t *testing.T) {
	good := func() *mna.System {
		return newStamper().V("in", "0").R("in", "o", 1e3).C("o", "0", 1e-9).Out("o", "0").System()
	}
	nan := good()
	gd := nan.G.Dense()
	gd.Set(0, 0, math.NaN())
	nan.G = mna.SparseOf(gd)
	short := good()
	short.L = short.L[:1]
	floating := newStamper().V("in", "0").R("in", "a", 1e3).C("b", "c", 1e-9).R("b", "c", 1e3).Out("a", "0").System()
	cases := []struct {
		name string
		sys  *mna.System
		want string
	}{
		{"nil", nil, "no system"},
		{"nan", nan, "non-finite"},
		{"short L", short, "L has"},
		{"floating nodes", floating, "singular"},
	}
	for _, c := range cases {
		_, err := Extract(c.sys)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
}
