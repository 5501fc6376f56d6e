package transfer

import (
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"strconv"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// loadTestSystem reads a circuit of testdata and builds its system for one
// observation (the source Vin driven).
func loadTestSystem(t *testing.T, file string, ob mna.Observation) *mna.System {
	t.Helper()
	src, err := os.ReadFile("testdata/" + file)
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.Load(file, src, netlist.Overrides{})
	if err != nil {
		t.Fatal(err)
	}
	sys, err := mna.Build(c, mna.Input{}, ob)
	if err != nil {
		t.Fatal(err)
	}
	return sys
}

// invertingStage returns the gain and the pole (rad/s) of an inverting
// stage of chain5.nodal and chain15.nodal, Rin in, Rf = 10 kΩ feedback,
// op-amp a0 = 100k, gbw = 1 MHz (see TestChainOfInvertingStages).
func invertingStage(rin float64) (gain, pole float64) {
	const a0, rf = 1e5, 1e4
	wp := 2 * math.Pi * 1e6 / a0
	beta := rin / (rin + rf)
	return -(rf / rin) * a0 * beta / (1 + a0*beta), -wp * (1 + a0*beta)
}

// TestChainOfInvertingStages: five inverting stages (1 kΩ in, 10 kΩ
// feedback, single-pole op-amp a0 = 100k, 1 MHz, 1 Ω out), the first fed
// by 1 kΩ and the others by 1001 Ω (the 1 Ω output in series). Per stage
// (the inverting amplifier with a finite single-pole open-loop gain:
// common practice) the gain is −(Rf/Rin)·a0β/(1 + a0β) and the pole
// −ωp(1 + a0β), β = Rin/(Rin + Rf), ωp = 2π·1 MHz/a0; the unloaded
// outputs multiply the stages. So H has a simple pole (stage 1) 9e-4
// from a four-fold pole (stages 2–5), which the eigen-solver sees as one
// five-fold cluster: the extraction must still give both, the DC gain to
// 1e-9 and H(jω) within 1e-8 of direct solves.
func TestChainOfInvertingStages(t *testing.T) {
	sys := loadTestSystem(t, "chain5.nodal", mna.Observation{Kind: mna.NodeVoltage, Node: "n5"})
	tf, err := Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	g1, p1 := invertingStage(1e3)
	g2, p2 := invertingStage(1e3 + 1)
	want := g1 * math.Pow(g2, 4)
	if dc := tf.DCGain(); dc.Power != 0 || math.Abs(dc.Gain-want) > 1e-9*math.Abs(want) {
		t.Errorf("DC gain %.12g (power %d), want %.12g", dc.Gain, dc.Power, want)
	}
	wantPoles := []float64{p1, p2, p2, p2, p2}
	if len(tf.Poles) != 5 || len(tf.Zeros) != 0 {
		t.Fatalf("poles %v zeros %v, want %v and none", tf.Poles, tf.Zeros, wantPoles)
	}
	for i, p := range tf.Poles {
		if cmplx.Abs(p-complex(wantPoles[i], 0)) > 1e-8*math.Abs(wantPoles[i]) {
			t.Errorf("pole %d = %v, want %.12g", i, p, wantPoles[i])
		}
	}
	for _, w := range []float64{1, 1e3, 3e4, 1e5, 3e5, 1e6, 1e7, 1e8} {
		s := complex(0, w)
		hd := directH(t, sys, s)
		if d := cmplx.Abs(tf.EvalFactored(s) - hd); d > 1e-8*cmplx.Abs(hd) {
			t.Errorf("at %g rad/s H = %v, direct %v (relative %.2g)", w, tf.EvalFactored(s), hd, d/cmplx.Abs(hd))
		}
	}
}

// TestChainFifteenNotSingular: fifteen such stages (10¹⁵ from input to
// output) have shifted matrices with condition estimates near 10¹⁶ at
// every shift, yet a sweep solves them. The whole pencil's fourteen-fold
// pole beside a simple one is beyond float64 for the eigen-solver, but
// the stages do not load one another (ideal op-amp outputs), so the
// block triangular form gives each stage's pole on its own: the
// extraction must give the closed form of TestChainOfInvertingStages
// (the inverting amplifier with a single-pole op-amp, common practice),
// the DC gain to 1e-9 and H(jω) within 1e-8 of it.
func TestChainFifteenNotSingular(t *testing.T) {
	sys := loadTestSystem(t, "chain15.nodal", mna.Observation{Kind: mna.NodeVoltage, Node: "n15"})
	tf, err := Extract(sys)
	if err != nil {
		t.Fatalf("Extract: %v", err)
	}
	g1, p1 := invertingStage(1e3)
	g2, p2 := invertingStage(1e3 + 1)
	want := func(s complex128) complex128 {
		return complex(g1, 0) / (1 - s/complex(p1, 0)) * cmplx.Pow(complex(g2, 0)/(1-s/complex(p2, 0)), 14)
	}
	if dc := tf.DCGain(); dc.Power != 0 || math.Abs(dc.Gain-real(want(0))) > 1e-9*math.Abs(real(want(0))) {
		t.Errorf("DC gain %.12g (power %d), want %.12g", dc.Gain, dc.Power, real(want(0)))
	}
	if len(tf.Zeros) != 0 || len(tf.Poles) != 15 {
		t.Fatalf("zeros %v poles %v, want none and 15", tf.Zeros, tf.Poles)
	}
	for _, w := range []float64{1, 1e3, 1e5, 5.7e5, 1e6, 1e7, 1e8} {
		s := complex(0, w)
		if d := relErr(tf.EvalFactored(s), want(s)); d > 1e-8 {
			t.Errorf("at %g rad/s H = %v, closed form %v (relative %.2g)", w, tf.EvalFactored(s), want(s), d)
		}
	}
}

// chainText is N identical stages, each an RC section (a low-pass: R in
// series, C to gnd; or a high-pass: C in series, R to gnd; R = 10 kΩ,
// C = c) driving a non-inverting amplifier of gain 1 + rf/10 kΩ with a
// single-pole op-amp (a0 = 100k, gbw = 1 MHz). The op-amp output is
// ideal, so no stage loads the one before.
func chainText(n int, highPass bool, c, rf string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "title \"chain of %d stages\"\nVin: voltage source (in, gnd) 1\n", n)
	prev := "in"
	for k := 1; k <= n; k++ {
		if highPass {
			fmt.Fprintf(&b, "C%d: capacitor (%s, a%d) %s\nR%d: resistor (a%d, gnd) 10k\n", k, prev, k, c, k, k)
		} else {
			fmt.Fprintf(&b, "R%d: resistor (%s, a%d) 10k\nC%d: capacitor (a%d, gnd) %s\n", k, prev, k, k, k, c)
		}
		fmt.Fprintf(&b, "U%d: opamp (a%d, m%d, o%d) a0=100k gbw=1MHz\n", k, k, k, k)
		fmt.Fprintf(&b, "Rf%d: resistor (o%d, m%d) %s\nRg%d: resistor (m%d, gnd) 10k\n", k, k, k, rf, k, k)
		prev = fmt.Sprintf("o%d", k)
	}
	return b.String()
}

// TestChainsOfIdenticalStages: chains of 10 to 20 identical non-loading
// stages of gain 2 and 10 (chainText), low-pass and high-pass, against
// the closed form H = Hₛ(s)^N. Per stage (common practice): the RC
// section is 1/(1 + sτ) or sτ/(1 + sτ), τ = RC; the non-inverting
// amplifier with the single-pole op-amp A(s) = A0/(1 + s·A0/ωt) is
// A/(1 + βA) = A0/(1 + βA0 + s·A0/ωt), β = 10k/(10k + Rf): gain
// A0/(1 + βA0) and pole −ωt(1 + βA0)/A0. So H has an N-fold pole at −1/τ
// and one at the amplifier's pole, and a high-pass chain an N-fold zero
// at s = 0 and no other. Before the block triangular form and the exact
// deflation of s = 0, the high-pass chains of gain 2 gave 10 to 20 zeros
// spread on a circle around 0 (H at 0.01 Hz 10²³ times too large, exit
// status 0), and the low-pass chains of gain 10 were refused.
func TestChainsOfIdenticalStages(t *testing.T) {
	const a0, r = 1e5, 1e4
	wt := 2 * math.Pi * 1e6
	for _, tc := range []struct {
		n        int
		highPass bool
		c        float64
		rf       float64
	}{
		{10, true, 100e-9, 10e3}, {15, true, 100e-9, 10e3}, {20, true, 100e-9, 10e3},
		{15, true, 100e-9, 90e3},
		{15, false, 1e-9, 10e3}, {20, false, 1e-9, 10e3},
		{15, false, 1e-9, 90e3}, {20, false, 1e-9, 90e3},
	} {
		name := fmt.Sprintf("%d stages, high-pass %v, Rf %g", tc.n, tc.highPass, tc.rf)
		t.Run(name, func(t *testing.T) {
			src := chainText(tc.n, tc.highPass, strconv.FormatFloat(tc.c, 'g', -1, 64), strconv.FormatFloat(tc.rf, 'g', -1, 64))
			sys := loadSystem(t, "chain.nodal", []byte(src), fmt.Sprintf("o%d", tc.n))
			tf := mustExtract(t, sys)
			tau := r * tc.c
			beta := r / (r + tc.rf)
			pAmp := -wt * (1 + beta*a0) / a0
			stage := func(s complex128) complex128 {
				rc := 1 / (1 + s*complex(tau, 0))
				if tc.highPass {
					rc *= s * complex(tau, 0)
				}
				return rc * complex(a0, 0) / (complex(1+beta*a0, 0) + s*complex(a0/wt, 0))
			}
			want := func(s complex128) complex128 { return cmplx.Pow(stage(s), complex(float64(tc.n), 0)) }
			for _, w := range []float64{0.06, 1, 100, 1e3, 1e4, 1e5, 1e6, 6e6, 1e7, 1e8} {
				s := complex(0, w)
				if d := relErr(tf.EvalFactored(s), want(s)); d > 1e-7 {
					t.Errorf("at %g rad/s H = %.10g, closed form %.10g (relative %.2g)", w, tf.EvalFactored(s), want(s), d)
				}
			}
			zeros := tf.DistinctZeros()
			if tc.highPass {
				if len(zeros) != 1 || zeros[0].Root != 0 || zeros[0].Multiplicity != tc.n {
					t.Errorf("zeros %v, want s = 0 %d times", zeros, tc.n)
				}
				if dc := tf.DCGain(); dc.Power != tc.n {
					t.Errorf("DC asymptote power %d, want %d", dc.Power, tc.n)
				}
			} else {
				if len(zeros) != 0 {
					t.Errorf("zeros %v, want none", zeros)
				}
				if dc, g := tf.DCGain(), math.Pow(a0/(1+beta*a0), float64(tc.n)); dc.Power != 0 || math.Abs(dc.Gain-g) > 1e-9*g {
					t.Errorf("DC gain %.12g (power %d), want %.12g", dc.Gain, dc.Power, g)
				}
			}
			poles := tf.DistinctPoles()
			if len(poles) != 2 || poles[0].Multiplicity != tc.n || poles[1].Multiplicity != tc.n ||
				relErr(poles[0].Root, complex(-1/tau, 0)) > 1e-9 || relErr(poles[1].Root, complex(pAmp, 0)) > 1e-9 {
				t.Errorf("poles %v, want %g and %g, %d times each", poles, -1/tau, pAmp, tc.n)
			}
		})
	}
}
