package transfer

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"strconv"
	"testing"

	"nodal/mna"
)

// golden is one entry of testdata/tf_goldens.json, written by
// testdata/tf_goldens.py (sympy, exact rational nodal equations; see the
// script's header for how to regenerate).
type golden struct {
	Num, Den     []float64
	Poles, Zeros [][2]float64
}

// ladder10 stamps the tenth-order ladder of tf_goldens.py (LADDER there).
func ladder10() *mna.System {
	ls := []float64{0.1, 3e-3, 1e-4, 2e-6, 5e-8}
	cs := []float64{1e-5, 2e-7, 5e-9, 1e-10, 3e-12}
	rs := []float64{200, 1e3, 4.7e3, 22e3, 100e3}
	st := newStamper().V("in", "0").R("in", "n0", 50)
	for i := 1; i <= 5; i++ {
		a, b := "n"+strconv.Itoa(i-1), "n"+strconv.Itoa(i)
		st.L(a, b, ls[i-1]).C(b, "0", cs[i-1]).R(b, "0", rs[i-1])
	}
	return st.Out("n5", "0").System()
}

// goldenCircuits stamps the circuits of tf_goldens.py with the same values.
func goldenCircuits() map[string]*mna.System {
	inf := math.Inf(1)
	return map[string]*mna.System{
		"rc_lowpass": newStamper().V("in", "0").R("in", "out", 1500).C("out", "0", 47e-9).Out("out", "0").System(),
		"sallen_key_unity": newStamper().V("in", "0").R("in", "a", 10e3).R("a", "b", 22e3).
			C("a", "out", 22e-9).C("b", "0", 4.7e-9).Amp("b", "out", "out", inf).Out("out", "0").System(),
		"sallen_key_gain2": newStamper().V("in", "0").R("in", "a", 4.7e3).R("a", "b", 4.7e3).
			C("a", "out", 10e-9).C("b", "0", 10e-9).Amp("b", "0", "out", 2).Out("out", "0").System(),
		"mfb_bandpass": mfbBandPass(3.3e3, 150e3, 10e-9, 6.8e-9),
		"twin_t": newStamper().V("in", "0").R("in", "m", 16e3).R("m", "out", 16e3).C("m", "0", 20e-9).
			C("in", "k", 10e-9).C("k", "out", 10e-9).R("k", "0", 8e3).Out("out", "0").System(),
		"cap_loop": newStamper().V("in", "0").R("in", "a", 1e3).C("a", "0", 100e-9).
			C("a", "b", 200e-9).C("b", "0", 300e-9).R("b", "0", 2e3).Out("b", "0").System(),
		"bridge_allpass": newStamper().V("in", "0").R("in", "a", 10e3).C("a", "0", 15e-9).
			C("in", "b", 10e3*15e-9/33e3).R("b", "0", 33e3).Out("a", "b").System(),
		"ladder10": ladder10(),
	}
}

// matchRoots checks that every golden root has a distinct computed root
// within tol relative (absolute tol·scale for a root at 0).
func matchRoots(t *testing.T, what string, got []complex128, want [][2]float64, tol, scale float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: got %d roots %v, want %d %v", what, len(got), got, len(want), want)
	}
	used := make([]bool, len(got))
	for _, w := range want {
		wc := complex(w[0], w[1])
		best, bi := math.Inf(1), -1
		for i, g := range got {
			if !used[i] && cmplx.Abs(g-wc) < best {
				best, bi = cmplx.Abs(g-wc), i
			}
		}
		ref := cmplx.Abs(wc)
		if ref == 0 {
			ref = scale
		}
		if testing.Verbose() {
			t.Logf("%s: root %v rel err %.2g", what, wc, best/ref)
		}
		if best > tol*ref {
			t.Errorf("%s: root %v: nearest computed %v (rel err %.2g)", what, wc, got[bi], best/ref)
		}
		used[bi] = true
	}
}

// matchCoeffs compares coefficient lists relative to the largest term
// magnitude |c_k|·ω^k at the characteristic frequency w.
func matchCoeffs(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: got %v, want %v", what, got, want)
	}
	for k := range want {
		if d := math.Abs(got[k] - want[k]); d > tol*math.Abs(want[k]) && !(want[k] == 0 && d == 0) {
			t.Errorf("%s[%d] = %.17g, want %.17g (rel %.2g)", what, k, got[k], want[k], d/math.Abs(want[k]))
		}
	}
}

func TestGoldensFromSympy(t *testing.T) {
	// Source: testdata/tf_goldens.py — exact symbolic solution (sympy) of
	// hand-written nodal equations; roots to 30 digits.
	raw, err := os.ReadFile("testdata/tf_goldens.json")
	if err != nil {
		t.Fatal(err)
	}
	var gs map[string]golden
	if err := json.Unmarshal(raw, &gs); err != nil {
		t.Fatal(err)
	}
	circuits := goldenCircuits()
	if len(gs) != len(circuits) {
		t.Fatalf("%d goldens for %d circuits", len(gs), len(circuits))
	}
	for name, g := range gs {
		t.Run(name, func(t *testing.T) {
			sys, ok := circuits[name]
			if !ok {
				t.Fatalf("no circuit for golden %q", name)
			}
			tf := mustExtract(t, sys)
			scale := rootCentre(tf.Poles)
			matchRoots(t, "poles", tf.Poles, g.Poles, 1e-8, scale)
			matchRoots(t, "zeros", tf.Zeros, g.Zeros, 1e-8, scale)
			matchCoeffs(t, "den", tf.Den, g.Den, 1e-8)
			matchCoeffs(t, "num", tf.Num, g.Num, 1e-8)
		})
	}
}
