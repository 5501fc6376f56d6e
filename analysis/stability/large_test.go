package stability

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladder is k sections of series (R, then L when l > 0) and shunt C (or L
// when shuntL) driven by the voltage source Vin at n0 (l, c in H and F).
func ladder(k int, r, l, c float64, shuntL bool) *netlist.Circuit {
	parts := []netlist.Part{testcircuit.V("Vin", "n0", "gnd", 1)}
	for j := 1; j <= k; j++ {
		a, b := fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j)
		if l > 0 {
			m := fmt.Sprintf("m%d", j)
			parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", j), a, m, r), testcircuit.L(fmt.Sprintf("L%d", j), m, b, l))
		} else {
			parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", j), a, b, r))
		}
		if shuntL {
			parts = append(parts, testcircuit.L(fmt.Sprintf("Ls%d", j), b, "gnd", c))
		} else {
			parts = append(parts, testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", c))
		}
	}
	return testcircuit.New(parts...)
}

// TestLargePassiveClass: circuits past MaxUnknowns made only of passive
// parts are judged by the passive certificate (passive.go: Tellegen's
// energy balance, Desoer and Kuh 1969, from memory): an RC, RL or RLC
// ladder whose every reactive part a resistor damps is stable, a lossless
// LC ladder is only "passive", and so is a circuit with a natural
// frequency at s = 0 (a node reached only through a capacitor, a loop of
// inductors). None of them computes a frequency.
func TestLargePassiveClass(t *testing.T) {
	rcFloat := ladder(2000, 1e3, 0, 1e-8, false)
	rcFloat.Parts = append(rcFloat.Parts, testcircuit.C("Cf", "n2000", "island", 1e-9), testcircuit.C("Cg", "island", "gnd", 1e-9))
	rcFloat = testcircuit.New(rcFloat.Parts...)
	rlLoop := ladder(2000, 1e3, 0, 1e-3, true)
	rlLoop.Parts = append(rlLoop.Parts, testcircuit.L("Lx", "n5", "gnd", 1e-3)) // Ls5 ∥ Lx: an inductor loop
	// An LC ladder behind one source resistor (singly terminated, as a
	// filter prototype): every mode reaches the resistor, so the
	// propagation proves it strictly stable.
	lcParts := []netlist.Part{testcircuit.V("Vin", "n0", "gnd", 1), testcircuit.R("Rs", "n0", "a0", 50)}
	for j := 1; j <= 1000; j++ {
		a, b := fmt.Sprintf("a%d", j-1), fmt.Sprintf("a%d", j)
		lcParts = append(lcParts, testcircuit.L(fmt.Sprintf("L%d", j), a, b, 1e-6), testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", 1e-9))
	}
	lc := testcircuit.New(lcParts...)
	// The same with a lossless tank (Lt ∥ Ct from t to Ground) that no
	// resistor reaches: a natural frequency on the jω axis.
	tank := testcircuit.New(append(slices.Clone(lcParts), testcircuit.L("Lt", "t", "gnd", 1e-6), testcircuit.C("Ct", "t", "gnd", 1e-9))...)
	tests := []struct {
		name   string
		c      *netlist.Circuit
		class  Class
		reason Reason
	}{
		{"RC ladder 1000", ladder(1000, 1e3, 0, 1e-8, false), Stable, ReasonPassive},
		{"RC ladder 20000", ladder(20000, 1e3, 0, 1e-8, false), Stable, ReasonPassive},
		{"RL ladder 5000 (shunt L)", ladder(5000, 1e3, 0, 1e-3, true), Stable, ReasonPassive},
		{"RLC ladder 5000 (series R+L)", ladder(5000, 10, 1e-6, 1e-9, false), Stable, ReasonPassive},
		{"LC ladder, one source resistor", lc, Stable, ReasonPassive},
		{"LC ladder and a lossless tank", tank, Passive, ReasonPassiveLossless},
		{"RC ladder with a capacitive island", rcFloat, Passive, ReasonPassiveZero},
		{"RL ladder with an inductor loop", rlLoop, Passive, ReasonPassiveZero},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			res, err := Analyze(tt.c, Options{Explain: true})
			if err != nil {
				t.Fatal(err)
			}
			if res.Class != tt.class || res.Reason != tt.reason || res.AllNatural {
				t.Fatalf("class %v, reason %v, all %v; want %v, %v, not all", res.Class, res.Reason, res.AllNatural, tt.class, tt.reason)
			}
			if (res.Err() == nil) != (tt.class == Stable) {
				t.Fatalf("Err() = %v for class %v", res.Err(), res.Class)
			}
		})
	}
}

// ladderPoles are the natural frequencies of k uniform RC sections
// (series r, shunt c) driven by a voltage source and open at the far end:
// p_j = −(4/rc)·sin²((2j−1)π/(2(2k+1))), j = 1…k (from memory; confirmed
// with scipy to 8e-11 up to k = 998, see issue text of the ladders).
func ladderPoles(k int, r, c float64) []float64 {
	out := make([]float64, k)
	for j := 1; j <= k; j++ {
		s := math.Sin(float64(2*j-1) * math.Pi / float64(2*(2*k+1)))
		out[j-1] = -4 / (r * c) * s * s
	}
	return out
}

// matchReal checks that got (complex) equals want (real) as multisets to
// tol relative to the largest |want|.
func matchReal(t *testing.T, got []complex128, want []float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d natural frequencies, want %d", len(got), len(want))
	}
	g := make([]float64, len(got))
	scale := 0.0
	for i, z := range got {
		if math.Abs(imag(z)) > tol*cmplx.Abs(z)+1e-300 {
			t.Fatalf("natural frequency %v is not real", z)
		}
		g[i] = real(z)
		scale = math.Max(scale, math.Abs(want[i]))
	}
	w := slices.Clone(want)
	slices.Sort(g)
	slices.Sort(w)
	for i := range g {
		if math.Abs(g[i]-w[i]) > tol*scale {
			t.Fatalf("natural frequency %d: %g, want %g", i, g[i], w[i])
		}
	}
}

// bufferedLadders is n stages, each a unit-gain VCVS buffer driving k RC
// sections (r, c) from the previous stage's far end: blocks of k unknowns.
func bufferedLadders(n, k int, r, c float64, lastGain float64) *netlist.Circuit {
	parts := []netlist.Part{testcircuit.V("Vin", "s0n0", "gnd", 1)}
	prev := "s0n0"
	for st := 1; st <= n; st++ {
		in := fmt.Sprintf("s%dn0", st)
		g := 1.0
		if st == n {
			g = lastGain
		}
		parts = append(parts, testcircuit.VCVS(fmt.Sprintf("E%d", st), in, "gnd", g, prev, "gnd"))
		for j := 1; j <= k; j++ {
			a, b := fmt.Sprintf("s%dn%d", st, j-1), fmt.Sprintf("s%dn%d", st, j)
			parts = append(parts, testcircuit.R(fmt.Sprintf("R%d_%d", st, j), a, b, r), testcircuit.C(fmt.Sprintf("C%d_%d", st, j), b, "gnd", c))
		}
		prev = fmt.Sprintf("s%dn%d", st, k)
	}
	return testcircuit.New(parts...)
}

// TestLadderPolesClosedForm: the dense path (a 400-section ladder, 402
// unknowns) and the block-wise path of a large circuit (300 buffered
// stages of 4 sections, 1,801 unknowns in blocks of at most 4) give the
// closed-form poles of the uniform ladder, every one of them.
func TestLadderPolesClosedForm(t *testing.T) {
	const r, c = 1e3, 1e-8
	res, err := Analyze(testcircuit.RCLadder(400, r, c), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Class != Stable || !res.AllNatural {
		t.Fatalf("400 sections: class %v, all %v", res.Class, res.AllNatural)
	}
	matchReal(t, res.Natural, ladderPoles(400, r, c), 1e-9)

	const stages, k = 300, 4
	res, err = Analyze(bufferedLadders(stages, k, r, c, 1), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Class != Stable || !res.AllNatural || res.Reason != ReasonComputed {
		t.Fatalf("buffered stages: class %v, all %v, reason %v", res.Class, res.AllNatural, res.Reason)
	}
	var want []float64
	for range stages {
		want = append(want, ladderPoles(k, r, c)...)
	}
	matchReal(t, res.Natural, want, 1e-12)
}

// chainGain is v(n0)/v(nk) of k uniform RC sections open at the far end
// at the real frequency s (rad/s): the (1,1) entry of the k-th power of
// the section's chain matrix [[1 + s·rc, r], [s·c, 1]] (common practice).
func chainGain(k int, r, c, s float64) float64 {
	a, b, cc, d := 1.0, 0.0, 0.0, 1.0
	m11, m12, m21, m22 := 1+s*r*c, r, s*c, 1.0
	for range k {
		a, b, cc, d = a*m11+b*m21, a*m12+b*m22, cc*m11+d*m21, cc*m12+d*m22
	}
	return a
}

// feedbackLadder is k RC sections driven at n0 by the VCVS E1 = gain ×
// v(nk): positive feedback round the whole ladder, one block of k+2
// unknowns. For gain > 1 its natural frequencies include the real root
// s > 0 of chainGain(s) = gain (1 = gain·H(s), H the ladder's far-end
// response, H(0) = 1 and falling for s > 0).
func feedbackLadder(k int, r, c, gain float64) *netlist.Circuit {
	parts := []netlist.Part{testcircuit.VCVS("E1", "n0", "gnd", gain, fmt.Sprintf("n%d", k), "gnd")}
	for j := 1; j <= k; j++ {
		a, b := fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j)
		parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", j), a, b, r), testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", c))
	}
	return testcircuit.New(parts...)
}

// unstableRoot solves chainGain(s) = gain for s > 0 by bisection.
func unstableRoot(k int, r, c, gain float64) float64 {
	lo, hi := 0.0, 1/(r*c)
	for chainGain(k, r, c, hi) < gain {
		hi *= 2
	}
	for range 200 {
		mid := (lo + hi) / 2
		if chainGain(k, r, c, mid) < gain {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// TestLargeActiveBlock: a large block with a gain element is searched by
// shift-and-invert Arnoldi. With loop gain 2 round a 2000- or 8000-section ladder
// the unstable root of the chain-matrix equation is found, checked by its
// residual and agrees with the closed form (and, on a 300-section ladder,
// the dense path finds the same root); with loop gain 0.5 nothing is
// found and the class is Unchecked, never Stable.
func TestLargeActiveBlock(t *testing.T) {
	const r, c = 1e3, 1e-8
	for _, k := range []int{300, 2000, 8000} {
		want := unstableRoot(k, r, c, 2)
		res, err := Analyze(feedbackLadder(k, r, c, 2), Options{Explain: true})
		if err != nil {
			t.Fatal(err)
		}
		if res.Class != Unstable || len(res.Offending) != 1 {
			t.Fatalf("k = %d: class %v, offending %v (want one at %g)", k, res.Class, res.Offending, want)
		}
		if got := res.Offending[0]; math.Abs(real(got)-want) > 1e-8*want || imag(got) != 0 {
			t.Fatalf("k = %d: unstable root %v, want %g (chain matrix)", k, got, want)
		}
		if !slices.Equal(res.Involved, []string{"E1"}) {
			t.Fatalf("k = %d: involved %v, want [E1]", k, res.Involved)
		}
		if k > MaxUnknowns && (res.AllNatural || res.Reason != ReasonFound || res.Backward > searchBackward) {
			t.Fatalf("k = %d: all %v, reason %v, backward %g", k, res.AllNatural, res.Reason, res.Backward)
		}
	}
	res, err := Analyze(feedbackLadder(2000, r, c, 0.5), Options{Explain: true})
	if err != nil {
		t.Fatal(err)
	}
	if res.Class != Unchecked || res.Reason != ReasonNotFound || res.AllNatural || res.Err() == nil {
		t.Fatalf("loop gain 0.5: class %v, reason %v, all %v", res.Class, res.Reason, res.AllNatural)
	}
	if res.SearchedRad[0] <= 0 || res.SearchedRad[1] <= res.SearchedRad[0] {
		t.Fatalf("searched range %v", res.SearchedRad)
	}
}

// BenchmarkLargeLadderStability: the stability step of a 10,000-section
// RC ladder (the passive certificate) and of the 2000-section feedback
// ladder (block triangular form, then Arnoldi).
func BenchmarkLargeLadderStability(b *testing.B) {
	for _, bc := range []struct {
		name string
		c    *netlist.Circuit
	}{
		{"rc10000", ladder(10000, 1e3, 0, 1e-8, false)},
		{"feedback2000", feedbackLadder(2000, 1e3, 1e-8, 2)},
	} {
		b.Run(bc.name, func(b *testing.B) {
			for b.Loop() {
				if _, err := Analyze(bc.c, Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestLargeBlocks: a large circuit split by its block triangular form.
// An ideal buffer (VCVS) driving a 2000-section RC ladder leaves the
// ladder a block of passive stamps alone, proven strictly stable by the
// certificate on its own network; driving an undamped LC ladder instead
// leaves it only "passive". 400 buffered RC stages (1,202 unknowns) with a negative
// resistance (a VCCS feeding its node from itself, gm = 2/R) in the last
// give that stage's root s = (gm − 1/R)/C = 1/(RC) (KCL at the node,
// common practice), every natural frequency computed, and name the VCCS.
func TestLargeBlocks(t *testing.T) {
	const r, c = 1e3, 1e-8
	buffered := []netlist.Part{testcircuit.V("Vin", "x", "gnd", 1), testcircuit.R("Rx", "x", "y", r), testcircuit.C("Cy", "y", "gnd", c),
		testcircuit.VCVS("E1", "n0", "gnd", 3, "y", "gnd")}
	rc, lc := slices.Clone(buffered), slices.Clone(buffered)
	for j := 1; j <= 2000; j++ {
		a, b := fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j)
		rc = append(rc, testcircuit.R(fmt.Sprintf("R%d", j), a, b, r), testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", c))
		lc = append(lc, testcircuit.L(fmt.Sprintf("L%d", j), a, b, 1e-6), testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", c))
	}
	neg := bufferedLadders(400, 1, r, c, 1)
	neg.Parts = append(neg.Parts, testcircuit.VCCS("G1", "s400n1", "gnd", 2/r, "s400n1", "gnd"))
	neg = testcircuit.New(neg.Parts...)
	tests := []struct {
		name     string
		c        *netlist.Circuit
		class    Class
		reason   Reason
		all      bool
		off      []complex128
		involved []string
	}{
		{"buffer and RC ladder", testcircuit.New(rc...), Stable, ReasonPassiveBlocks, false, nil, nil},
		{"buffer and LC ladder", testcircuit.New(lc...), Passive, ReasonPassiveBlock, false, nil, nil},
		{"400 stages, one negative resistance", neg, Unstable, ReasonComputed, true, []complex128{1 / (r * c)}, []string{"G1"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			res, err := Analyze(tt.c, Options{Explain: true})
			if err != nil {
				t.Fatal(err)
			}
			if res.Class != tt.class || res.Reason != tt.reason || res.AllNatural != tt.all || !slices.Equal(res.Involved, tt.involved) {
				t.Fatalf("class %v, reason %v, all %v, involved %v; want %v, %v, %v, %v", res.Class, res.Reason, res.AllNatural, res.Involved, tt.class, tt.reason, tt.all, tt.involved)
			}
			if len(res.Offending) != len(tt.off) {
				t.Fatalf("offending %v, want %v", res.Offending, tt.off)
			}
			for i, z := range tt.off {
				if cmplx.Abs(res.Offending[i]-z) > 1e-9*cmplx.Abs(z) {
					t.Fatalf("offending %v, want %v", res.Offending, tt.off)
				}
			}
		})
	}
}

// phaseShiftLoaded is a three-section RC phase-shift loop (E1 = gain ×
// v(p3) driving p0) whose middle node p2 is loaded through Rl by k RC
// sections (1 kΩ, 10 nF): one block of about 2k unknowns.
func phaseShiftLoaded(k int, gain float64) *netlist.Circuit {
	const r, c = 1e3, 1e-8
	parts := []netlist.Part{testcircuit.VCVS("E1", "p0", "gnd", gain, "p3", "gnd"), testcircuit.I("I1", "gnd", "p1", 1)}
	for j := 1; j <= 3; j++ {
		parts = append(parts, testcircuit.R(fmt.Sprintf("Rp%d", j), fmt.Sprintf("p%d", j-1), fmt.Sprintf("p%d", j), r),
			testcircuit.C(fmt.Sprintf("Cp%d", j), fmt.Sprintf("p%d", j), "gnd", c))
	}
	parts = append(parts, testcircuit.R("Rl", "p2", "n0", 10*r))
	for j := 1; j <= k; j++ {
		a, b := fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j)
		parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", j), a, b, r), testcircuit.C(fmt.Sprintf("C%d", j), b, "gnd", c))
	}
	return testcircuit.New(parts...)
}

// TestLargeComplexUnstable: an inverting gain round a loaded phase-shift
// network oscillates (a complex pair in the right half-plane, from
// Re/|λ| = 0.024 at gain 35 to 0.47 at gain 10⁵). The pair found by
// Arnoldi in the 2000-section block equals the dense path's on a
// 400-section load, once: a ladder's input impedance converges as
// e^(−2kγ), cosh γ = 1 + sRC/2, so 400 and 2000 sections load p2 alike to
// rounding at |s|·RC near 1 (chain-matrix theory of uniform ladders,
// common practice).
func TestLargeComplexUnstable(t *testing.T) {
	for _, gain := range []float64{-35, -100, -1e5} {
		dense, err := Analyze(phaseShiftLoaded(400, gain), Options{})
		if err != nil {
			t.Fatal(err)
		}
		big, err := Analyze(phaseShiftLoaded(2000, gain), Options{})
		if err != nil {
			t.Fatal(err)
		}
		if dense.Class != Unstable || !dense.AllNatural || len(dense.Offending) != 2 || imag(dense.Offending[0]) == 0 {
			t.Fatalf("gain %g, dense: class %v, offending %v; want one complex pair", gain, dense.Class, dense.Offending)
		}
		if big.Class != Unstable || big.Reason != ReasonFound || len(big.Offending) != 2 || big.Backward > searchBackward {
			t.Fatalf("gain %g, large: class %v, reason %v, offending %v, η %g; want the pair", gain, big.Class, big.Reason, big.Offending, big.Backward)
		}
		for i := range 2 {
			if d := cmplx.Abs(big.Offending[i] - dense.Offending[i]); d > 1e-9*cmplx.Abs(dense.Offending[i]) {
				t.Fatalf("gain %g: large %v, dense %v", gain, big.Offending, dense.Offending)
			}
		}
	}
}

// TestNoFalseZeroRoots: s = 0 is a natural frequency only when Y(0) is
// singular (det(G + s·C) at s = 0 is det G). A 400-section RC ladder read
// by a buffer of gain 10⁴ is stable (its roots are the ladder's, closed
// form above, and the buffer adds none); the gain entry once inflated the
// scale by which roots are snapped to 0, and the ladder's slowest roots
// were reported as a repeated root at s = 0, "unstable".
func TestNoFalseZeroRoots(t *testing.T) {
	const r, c = 1e3, 1e-8
	lad := testcircuit.RCLadder(400, r, c)
	lad.Parts = append(lad.Parts, testcircuit.VCVS("E1", "o", "gnd", 1e4, "n400", "gnd"), testcircuit.R("RL", "o", "gnd", 1e3))
	lad = testcircuit.New(lad.Parts...)
	res, err := Analyze(lad, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Class != Stable || !res.AllNatural {
		t.Fatalf("class %v, offending %v; want stable", res.Class, res.Offending)
	}
	matchReal(t, res.Natural, ladderPoles(400, r, c), 1e-9)
}
