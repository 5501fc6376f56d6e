package analysis

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"sort"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladderGolden is testdata/reference/ladder/ladders.json, written by
// gen_ladders.py (60-digit mpmath walk of the ladder; poles from the
// closed form confirmed with scipy).
type ladderGolden struct {
	R       float64 `json:"r_ohm"`
	C       float64 `json:"c_farad"`
	Ladders []struct {
		Sections int       `json:"sections"`
		FreqHz   []float64 `json:"freq_hz"`
		MagFar   []float64 `json:"mag_far"`
		MagFirst []float64 `json:"mag_first"`
		Poles    []float64 `json:"poles_rad_s"`
	} `json:"ladders"`
	Steps []struct {
		Sections int       `json:"sections"`
		TS       []float64 `json:"t_s"`
		YFar     []float64 `json:"y_far"`
	} `json:"steps"`
}

// readLadderGolden loads testdata/reference/ladder/ladders.json.
func readLadderGolden(t *testing.T) ladderGolden {
	t.Helper()
	raw, err := os.ReadFile("../testdata/reference/ladder/ladders.json")
	if err != nil {
		t.Fatal(err)
	}
	var g ladderGolden
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatal(err)
	}
	return g
}

// rcLadder is K sections of series r and shunt c driven at n0, open at nK.
func rcLadder(k int, r, c float64) *netlist.Circuit {
	parts := []netlist.Part{testcircuit.V("Vin", "n0", "gnd", 1)}
	for j := 1; j <= k; j++ {
		parts = append(parts,
			testcircuit.R(fmt.Sprintf("R%d", j), fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j), r),
			testcircuit.C(fmt.Sprintf("C%d", j), fmt.Sprintf("n%d", j), "gnd", c))
	}
	return testcircuit.New(parts...)
}

// TestLadderHighOrder: uniform unloaded RC ladders of 10 to 200 sections,
// read at the far end and at the first node. DC gain exactly 1 (no
// current flows: common practice); |H| at 20 frequencies within 1e-8 of
// the mpmath golden and of direct solves; the poles against
// p_j = −(4/RC)·sin²((2j−1)π/(2(2K+1))) (from memory; confirmed by the
// script with scipy).
func TestLadderHighOrder(t *testing.T) {
	g := readLadderGolden(t)
	if len(g.Ladders) < 7 {
		t.Fatalf("golden has %d ladders", len(g.Ladders))
	}
	for _, l := range g.Ladders {
		circ := rcLadder(l.Sections, g.R, g.C)
		for _, read := range []struct {
			node string
			mags []float64
		}{{fmt.Sprintf("n%d", l.Sections), l.MagFar}, {"n1", l.MagFirst}} {
			name := fmt.Sprintf("K=%d at %s", l.Sections, read.node)
			sys, err := mna.Build(circ, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: read.node})
			if err != nil {
				t.Fatal(err)
			}
			tf, err := Extract(sys)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if dc := tf.DCGain(); dc.Power != 0 || dc.Gain != 1 {
				t.Errorf("%s: DC gain %v, want exactly 1", name, dc)
			}
			for i, f := range l.FreqHz {
				s := complex(0, 2*math.Pi*f)
				got := cmplx.Abs(tf.EvalFactored(s))
				if e := math.Abs(got-read.mags[i]) / read.mags[i]; e > 1e-8 {
					t.Errorf("%s: |H| at %g Hz = %.12g, golden %.12g (rel %.1e)", name, f, got, read.mags[i], e)
				}
				d, err := sys.H(s)
				if err != nil {
					t.Fatal(err)
				}
				if e := math.Abs(got-cmplx.Abs(d)) / cmplx.Abs(d); e > 1e-8 {
					t.Errorf("%s: |H| at %g Hz = %.12g, direct solve %.12g", name, f, got, cmplx.Abs(d))
				}
			}
			if read.node == "n1" {
				continue
			}
			if len(tf.Poles) != l.Sections || len(tf.Zeros) != 0 {
				t.Fatalf("%s: %d poles %d zeros, want %d and 0", name, len(tf.Poles), len(tf.Zeros), l.Sections)
			}
			ps := make([]float64, len(tf.Poles))
			for i, p := range tf.Poles {
				if imag(p) != 0 {
					t.Errorf("%s: complex pole %v", name, p)
				}
				ps[i] = real(p)
			}
			sort.Slice(ps, func(a, b int) bool { return ps[a] > ps[b] })
			for j, want := range l.Poles {
				if math.Abs(ps[j]-want) > 1e-9*math.Abs(want) {
					t.Errorf("%s: pole %d = %.12g, closed form %.12g", name, j+1, ps[j], want)
				}
			}
		}
	}
}

// TestLadderStepResponse: the far-end step response of 22-, 64- and
// 100-section ladders against the 120-digit residue sum of the golden
// script, within 1e-9 of the final value. At 64 sections and more the
// gain in rad/s units leaves float64 and the samples come from the
// matrix exponential alone (time_expm.go); at 22 the partial fractions
// are cross-checked against it.
func TestLadderStepResponse(t *testing.T) {
	g := readLadderGolden(t)
	if len(g.Steps) < 3 {
		t.Fatalf("golden has %d step responses", len(g.Steps))
	}
	for _, st := range g.Steps {
		sys, err := mna.Build(rcLadder(st.Sections, g.R, g.C), mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("n%d", st.Sections)})
		if err != nil {
			t.Fatal(err)
		}
		tf, err := Extract(sys)
		if err != nil {
			t.Fatal(err)
		}
		end := st.TS[len(st.TS)-1]
		n := 9*50 + 1 // the golden times fall on every 50th sample
		r, err := Step(tf, TimeOptions{UntilS: end, Points: n})
		if err != nil {
			t.Fatalf("K=%d: %v", st.Sections, err)
		}
		if len(r.Points) != n {
			t.Fatalf("K=%d: %d points", st.Sections, len(r.Points))
		}
		for i, want := range st.YFar {
			got := r.Points[50*i]
			if math.Abs(got.TS-st.TS[i]) > 1e-12*end || math.Abs(got.Y-want) > 1e-9 {
				t.Errorf("K=%d: y(%g s) = %.12g, golden y(%g s) = %.12g", st.Sections, got.TS, got.Y, st.TS[i], want)
			}
		}
		if r.Metrics.Final == nil || *r.Metrics.Final != 1 {
			t.Errorf("K=%d: final value %v, want 1", st.Sections, r.Metrics.Final)
		}
		if r.Metrics.RiseTimeS == nil || r.Metrics.OvershootPct == nil || *r.Metrics.OvershootPct != 0 {
			t.Errorf("K=%d: figures %+v, want a rise time and no overshoot (an RC ladder's step is monotone)", st.Sections, r.Metrics)
		}
	}
}

// BenchmarkExtractLadder200 is the speed target for high orders: a
// 200-section ladder (401 unknowns) read at its far end.
func BenchmarkExtractLadder200(b *testing.B) {
	sys, err := mna.Build(rcLadder(200, 1e3, 10e-9), mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "n200"})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Extract(sys); err != nil {
			b.Fatal(err)
		}
	}
}
