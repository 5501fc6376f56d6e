package transfer

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// randomStableCircuit builds a random passive RC/RLC network (every node
// has a resistor to ground or to an earlier node, so it is connected and
// lossy: passive, hence stable) with optional unity-gain buffers (ideal
// op-amp followers, which keep stability: they only isolate) driven from
// node n0, and returns it with one of its nodes to read. Values span
// several decades, and the whole circuit is impedance-scaled by 10^k,
// k uniform in [−12, 12] (R, L times 10^k, C divided by it: the same
// H(s), common practice), so that no decision may depend on the units.
func randomStableCircuit(rng *rand.Rand, order int) (*netlist.Circuit, string) {
	parts := []netlist.Part{testcircuit.V("Vin", "n0", "gnd", 1)}
	val := func(lo, decades float64) float64 { return lo * math.Pow(10, decades*rng.Float64()) }
	imp := math.Pow(10, 24*rng.Float64()-12)
	nodes := []string{"n0"}
	stores := 0
	for k := 1; stores < order; k++ {
		prev := nodes[rng.IntN(len(nodes))]
		node := fmt.Sprintf("n%d", k)
		if rng.IntN(5) == 0 {
			// A buffer: its output is a new node driven from prev, a
			// follower or a non-inverting amplifier of gain 2 to 100
			// (ideal op-amps: they only isolate and amplify).
			if rng.IntN(2) == 0 {
				parts = append(parts, testcircuit.OpAmp(fmt.Sprintf("U%d", k), prev, node, node, 0, 0, 0))
			} else {
				fb, ra := node+"f", val(1e3, 2)
				parts = append(parts, testcircuit.OpAmp(fmt.Sprintf("U%d", k), prev, fb, node, 0, 0, 0),
					testcircuit.R(fmt.Sprintf("Ra%d", k), fb, "gnd", ra),
					testcircuit.R(fmt.Sprintf("Rb%d", k), fb, node, ra*val(1, 2)))
			}
			nodes = append(nodes, node)
			continue
		}
		parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", k), prev, node, val(100, 3)))
		if rng.IntN(2) == 0 {
			parts = append(parts, testcircuit.R(fmt.Sprintf("Rg%d", k), node, "gnd", val(1e3, 3)))
		}
		switch rng.IntN(3) {
		case 0, 1:
			parts = append(parts, testcircuit.C(fmt.Sprintf("C%d", k), node, "gnd", val(1e-9, 3)))
			stores++
		default:
			// A series RL branch to ground with a capacitor: two stores.
			mid := node + "m"
			parts = append(parts, testcircuit.L(fmt.Sprintf("L%d", k), node, mid, val(1e-4, 3)),
				testcircuit.R(fmt.Sprintf("Rl%d", k), mid, "gnd", val(10, 2)),
				testcircuit.C(fmt.Sprintf("C%d", k), node, "gnd", val(1e-9, 3)))
			stores += 2
		}
		nodes = append(nodes, node)
	}
	for i := range parts {
		switch parts[i].Kind {
		case netlist.Resistor, netlist.Inductor:
			parts[i].Value *= imp
		case netlist.Capacitor:
			parts[i].Value /= imp
		}
	}
	return testcircuit.New(parts...), nodes[1+rng.IntN(len(nodes)-1)]
}

// TestExtractRandomCircuitsAgreeWithSolves: for random stable circuits of
// order 2–30, the extracted H(jω) equals direct solves at random
// frequencies over the poles' range (a property of any correct
// extraction), and every pole is in the closed left half-plane.
func TestExtractRandomCircuitsAgreeWithSolves(t *testing.T) {
	rng := rand.New(rand.NewPCG(18, 2026))
	for trial := 0; trial < 60; trial++ {
		order := 2 + rng.IntN(29)
		circ, out := randomStableCircuit(rng, order)
		sys, err := mna.Build(circ, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: out})
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		tf, err := Extract(sys)
		if err != nil {
			t.Errorf("trial %d (order %d, v(%s)): %v", trial, order, out, err)
			continue
		}
		lo, hi := math.Inf(1), 0.0
		for _, p := range tf.Poles {
			if real(p) > 1e-9*cmplx.Abs(p) {
				t.Errorf("trial %d: right half-plane pole %v of a passive circuit", trial, p)
			}
			lo, hi = math.Min(lo, cmplx.Abs(p)), math.Max(hi, cmplx.Abs(p))
		}
		if hi == 0 {
			lo, hi = 1, 1
		}
		peak := 0.0
		type pt struct {
			s    complex128
			want complex128
		}
		var pts []pt
		for k := 0; k < 10; k++ {
			w := lo / 10 * math.Pow(100*hi/lo, rng.Float64())
			s := complex(0, w)
			want, err := sys.H(s)
			if err != nil {
				t.Fatal(err)
			}
			pts = append(pts, pt{s, want})
			peak = math.Max(peak, cmplx.Abs(want))
		}
		for _, p := range pts {
			got := tf.EvalFactored(p.s)
			if d := cmplx.Abs(got - p.want); d > 1e-8*cmplx.Abs(p.want)+1e-12*peak {
				t.Errorf("trial %d (order %d, v(%s)): H(%.4g) = %.10g extracted, %.10g direct", trial, order, out, p.s, got, p.want)
			}
		}
	}
}
