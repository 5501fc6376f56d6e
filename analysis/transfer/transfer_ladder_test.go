package transfer

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
	raw, err := os.ReadFile("../../testdata/reference/ladder/ladders.json")
	if err != nil {
		t.Fatal(err)
	}
	var g ladderGolden
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatal(err)
	}
	return g
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
		circ := testcircuit.RCLadder(l.Sections, g.R, g.C)
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

// BenchmarkExtractLadder200 is the speed target for high orders: a
// 200-section ladder (401 unknowns) read at its far end.
func BenchmarkExtractLadder200(b *testing.B) {
	sys, err := mna.Build(testcircuit.RCLadder(200, 1e3, 10e-9), mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "n200"})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Extract(sys); err != nil {
			b.Fatal(err)
		}
	}
}
