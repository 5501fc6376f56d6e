package transfer

import (
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// allPassSource is an op-amp first-order all-pass (phase shifter) with
// R1 = R2 = R; the C value is filled in.
const allPassSource = `title "tone stage phase shifter"
Vin: voltage source (in, gnd) 1
R1: resistor (in, n) 10k
R2: resistor (n, out) 10k
R3: resistor (in, p) 10k
C1: capacitor (p, gnd) %s
U1: opamp (p, n, out)
`

// loadSystem parses src and builds the system from its source to v(node).
func loadSystem(t *testing.T, name string, src []byte, node string) *mna.System {
	t.Helper()
	c, err := netlist.Load(name, src, nil)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	sys, err := mna.Build(c, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: node})
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return sys
}

// TestAllPassGainAtShift: with R1 = R2 = R3 = R the stage is
// H(s) = (1 − sRC)/(1 + sRC) (closed form, common practice for the
// first-order op-amp all-pass): DC gain 1, a zero at +1/(RC) and a pole at
// −1/(RC). The C values put the right-half-plane zero on or near the real
// shifts Extract tries, where H is rounding noise.
func TestAllPassGainAtShift(t *testing.T) {
	const r = 10e3
	for _, cs := range []struct {
		text string
		c    float64
	}{{"10nF", 10e-9}, {"12nF", 12e-9}, {"10.0001nF", 10.0001e-9}, {"3.3nF", 3.3e-9}, {"47nF", 47e-9}} {
		sys := loadSystem(t, "ap.nodal", []byte(fmt.Sprintf(allPassSource, cs.text)), "out")
		tf := mustExtract(t, sys)
		w := 1 / (r * cs.c)
		if len(tf.Zeros) != 1 || len(tf.Poles) != 1 {
			t.Errorf("C = %s: zeros %v poles %v, want one each", cs.text, tf.Zeros, tf.Poles)
			continue
		}
		dc := tf.DCGain()
		if dc.Power != 0 || math.Abs(dc.Gain-1) > 1e-9 {
			t.Errorf("C = %s: DC gain %.12g (power %d), want 1", cs.text, dc.Gain, dc.Power)
		}
		if math.Abs(tf.Gain+1) > 1e-9 {
			t.Errorf("C = %s: high-frequency gain %.12g, want −1", cs.text, tf.Gain)
		}
		if cmplx.Abs(tf.Zeros[0]-complex(w, 0)) > 1e-9*w || cmplx.Abs(tf.Poles[0]+complex(w, 0)) > 1e-9*w {
			t.Errorf("C = %s: zero %v pole %v, want ±%g", cs.text, tf.Zeros[0], tf.Poles[0], w)
		}
	}
}

// TestExtractMatchesDirectSolve compares Extract's polynomial form with a
// direct solve of (G + sC)x = B (mna.System.H, an independent LU code) at
// complex points around the circuit's natural frequencies, for every node
// of every reference and example circuit (agreement of two evaluations of
// the same rational function, common practice).
func TestExtractMatchesDirectSolve(t *testing.T) {
	var files []string
	for _, dir := range []string{"../../testdata/reference/circuits", "../../testdata/examples"} {
		m, err := filepath.Glob(filepath.Join(dir, "*.nodal"))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, m...)
	}
	if len(files) < 10 {
		t.Fatalf("only %d circuits found", len(files))
	}
	checked := 0
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		c, err := netlist.Load(f, src, nil)
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		seen := map[string]bool{}
		for _, p := range c.Parts {
			for _, node := range p.Nodes {
				if seen[node] || node == netlist.Ground || node == "0" {
					continue
				}
				seen[node] = true
				sys, err := mna.Build(c, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: node})
				if err != nil {
					if strings.Contains(err.Error(), "source") {
						continue
					}
					t.Fatalf("%s v(%s): %v", f, node, err)
				}
				tf, err := Extract(sys)
				if err != nil {
					t.Errorf("%s v(%s): %v", f, node, err)
					continue
				}
				wc := rootCentre(tf.Poles, tf.Zeros)
				if wc == 0 {
					wc = characteristicFreq(sys)
				}
				for k := 0; k < 8; k++ {
					// Points on circles of radius wc/3, wc and 3wc at angles
					// not on the real axis, away from the roots.
					rad := wc * []float64{1.0 / 3, 1, 3}[k%3]
					th := 0.3 + 0.35*float64(k)
					s := cmplx.Rect(rad, th)
					want, err := sys.H(s)
					if err != nil {
						t.Fatalf("%s v(%s) at %v: %v", f, node, s, err)
					}
					got := tf.Eval(s)
					if cmplx.Abs(got-want) > 1e-9*math.Max(cmplx.Abs(want), 1e-300) {
						t.Errorf("%s v(%s): H(%.4g) = %.10g from Extract, %.10g direct", f, node, s, got, want)
					}
				}
				checked++
			}
		}
	}
	if checked < 20 {
		t.Errorf("only %d outputs checked", checked)
	}
}
