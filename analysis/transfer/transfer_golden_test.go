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

// matchCoeffs compares coefficient lists with s scaled by the
// characteristic frequency w (rad/s): every term |c_k|·w^k that is not
// zero in the golden must agree to tol relative to itself, and a term the
// golden has as zero must be at most tol times the largest scaled term
// |want_k|·w^k (so a rounding-level residue passes and a genuine extra
// term fails, whatever the units of s).
func matchCoeffs(t *testing.T, what string, got, want []float64, w, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: got %v, want %v", what, got, want)
	}
	if !(w > 0) || math.IsInf(w, 0) {
		t.Fatalf("%s: characteristic frequency %v", what, w)
	}
	largest := 0.0
	for k, c := range want {
		largest = math.Max(largest, math.Abs(c)*math.Pow(w, float64(k)))
	}
	for k := range want {
		scale := math.Pow(w, float64(k))
		d := math.Abs(got[k]-want[k]) * scale
		if want[k] == 0 {
			if d > tol*largest {
				t.Errorf("%s[%d] = %.17g, want 0 (scaled term %.2g of the largest)", what, k, got[k], d/largest)
			}
			continue
		}
		if rel := d / (math.Abs(want[k]) * scale); rel > tol {
			t.Errorf("%s[%d] = %.17g, want %.17g (rel %.2g)", what, k, got[k], want[k], rel)
		}
	}
}

// characteristicOmega is the geometric mean magnitude of the roots of an
// ascending polynomial, |c_lo/c_hi|^(1/(hi−lo)) over its lowest and
// highest non-zero coefficients (rad/s); 1 when it has no non-zero root.
func characteristicOmega(c []float64) float64 {
	lo, hi := -1, -1
	for k, v := range c {
		if v != 0 {
			if lo < 0 {
				lo = k
			}
			hi = k
		}
	}
	if lo < 0 || hi == lo {
		return 1
	}
	return math.Pow(math.Abs(c[lo]/c[hi]), 1/float64(hi-lo))
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
			w := characteristicOmega(g.Den)
			matchCoeffs(t, "den", tf.Den, g.Den, w, 1e-8)
			matchCoeffs(t, "num", tf.Num, g.Num, w, 1e-8)
		})
	}
}
