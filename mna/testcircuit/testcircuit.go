// Package testcircuit builds netlist.Circuit values in Go for the tests and
// benchmarks of the engine, without the circuit-file parser: small part
// constructors and a few reference circuits with known responses.
package testcircuit

import (
	"fmt"
	"math"

	"nodal/netlist"
)

// New returns a circuit of the given parts with Nodes computed as
// Elaborate would: Ground first, then the others in order of first use.
func New(parts ...netlist.Part) *netlist.Circuit {
	c := &netlist.Circuit{File: "test", Parts: parts, Nodes: []string{netlist.Ground}}
	seen := map[string]bool{netlist.Ground: true, "0": true}
	for _, p := range parts {
		for _, n := range p.Nodes {
			if !seen[n] {
				seen[n] = true
				c.Nodes = append(c.Nodes, n)
			}
		}
	}
	return c
}

func two(name string, k netlist.Kind, a, b string, v float64) netlist.Part {
	return netlist.Part{Name: name, Kind: k, Nodes: []string{a, b}, Value: v}
}

// R is a resistor of ohms between a and b.
func R(name, a, b string, ohms float64) netlist.Part { return two(name, netlist.Resistor, a, b, ohms) }

// C is a capacitor of farads between a and b.
func C(name, a, b string, farads float64) netlist.Part {
	return two(name, netlist.Capacitor, a, b, farads)
}

// L is an inductor of henries between a and b.
func L(name, a, b string, henries float64) netlist.Part {
	return two(name, netlist.Inductor, a, b, henries)
}

// V is a voltage source of amplitude volts, + on p.
func V(name, p, n string, volts float64) netlist.Part {
	return two(name, netlist.VoltageSource, p, n, volts)
}

// I is a current source of amplitude amps, through itself from a to b.
func I(name, a, b string, amps float64) netlist.Part {
	return two(name, netlist.CurrentSource, a, b, amps)
}

// VCVS is v(p) − v(n) = gain·(v(c) − v(d)).
func VCVS(name, p, n string, gain float64, c, d string) netlist.Part {
	q := two(name, netlist.VCVS, p, n, gain)
	q.Sense = [2]string{c, d}
	return q
}

// VCCS drives gm·(v(c) − v(d)) through itself from a to b.
func VCCS(name, a, b string, gm float64, c, d string) netlist.Part {
	q := two(name, netlist.VCCS, a, b, gm)
	q.Sense = [2]string{c, d}
	return q
}

// CCVS is v(p) − v(n) = ohms·i(ctl).
func CCVS(name, p, n string, ohms float64, ctl string) netlist.Part {
	q := two(name, netlist.CCVS, p, n, ohms)
	q.Control = ctl
	return q
}

// CCCS drives gain·i(ctl) through itself from a to b.
func CCCS(name, a, b string, gain float64, ctl string) netlist.Part {
	q := two(name, netlist.CCCS, a, b, gain)
	q.Control = ctl
	return q
}

// OpAmp is an op-amp (plus, minus, out); a0 = 0 and gbwHz = 0 give the
// ideal nullor; rout in ohms, 0 for none.
func OpAmp(name, plus, minus, out string, a0, gbwHz, rout float64) netlist.Part {
	return netlist.Part{Name: name, Kind: netlist.OpAmp, Nodes: []string{plus, minus, out},
		A0: a0, GBWHz: gbwHz, Rout: rout}
}

// K couples inductors l1 and l2 with factor k.
func K(name, l1, l2 string, k float64) netlist.Part {
	return netlist.Part{Name: name, Kind: netlist.Coupling, Value: k, Coupled: [2]string{l1, l2}}
}

// ButterworthG returns the normalised element values of the doubly
// terminated (equal terminations) Butterworth low-pass of order n:
// g_k = 2·sin((2k−1)π/(2n)), k = 1…n (Matthaei, Young & Jones 1964).
func ButterworthG(n int) []float64 {
	g := make([]float64, n)
	for k := 1; k <= n; k++ {
		g[k-1] = 2 * math.Sin(float64(2*k-1)*math.Pi/float64(2*n))
	}
	return g
}

// Ladder is the doubly terminated Butterworth low-pass of order n with
// cut-off fcHz and terminations r0 ohms: source "Vs" behind "Rs" at node
// "in", shunt capacitor first, load "RL" at node "out". |v(out)/Vs| =
// ½/√(1 + (f/fc)^2n).
func Ladder(n int, fcHz, r0 float64) *netlist.Circuit {
	w := 2 * math.Pi * fcHz
	final := 1 + n/2 // the ladder's node index after n/2 series inductors
	name := func(i int) string {
		if i == final {
			return "out"
		}
		return fmt.Sprintf("n%d", i)
	}
	parts := []netlist.Part{V("Vs", "src", netlist.Ground, 1), R("Rs", "src", name(1), r0)}
	node := 1
	for k, g := range ButterworthG(n) {
		if k%2 == 0 {
			parts = append(parts, C(fmt.Sprintf("C%d", k+1), name(node), netlist.Ground, g/(w*r0)))
			continue
		}
		parts = append(parts, L(fmt.Sprintf("L%d", k+1), name(node), name(node+1), g*r0/w))
		node++
	}
	parts = append(parts, R("RL", name(final), netlist.Ground, r0))
	return New(parts...)
}

// TowThomas returns a cascade of stages Tow–Thomas biquad low-pass
// sections (three op-amps each: damped integrator, integrator, inverter),
// each with pole frequency f0Hz and quality q, op-amps modelled with a0
// and gbwHz. Input source "Vs" at node "in"; the output of stage k is
// node "lpK" (k from 1). Every stage has 9 unknowns.
func TowThomas(stages int, f0Hz, q, a0, gbwHz float64) *netlist.Circuit {
	const r = 10e3
	c := 1 / (2 * math.Pi * f0Hz * r)
	parts := []netlist.Part{V("Vs", "in", netlist.Ground, 1)}
	in := "in"
	for k := 1; k <= stages; k++ {
		p := func(s string) string { return fmt.Sprintf("%s%d", s, k) }
		parts = append(parts,
			R(p("Rin"), in, p("s"), r),
			C(p("C1_"), p("s"), p("bp"), c),
			R(p("Rq"), p("s"), p("bp"), q*r),
			R(p("Rf"), p("inv"), p("s"), r),
			OpAmp(p("U1_"), netlist.Ground, p("s"), p("bp"), a0, gbwHz, 0),
			R(p("Ri"), p("bp"), p("t"), r),
			C(p("C2_"), p("t"), p("lp"), c),
			OpAmp(p("U2_"), netlist.Ground, p("t"), p("lp"), a0, gbwHz, 0),
			R(p("Ra"), p("lp"), p("u"), r),
			R(p("Rb"), p("u"), p("inv"), r),
			OpAmp(p("U3_"), netlist.Ground, p("u"), p("inv"), a0, gbwHz, 0),
		)
		in = p("lp")
	}
	return New(parts...)
}

// RCLadder is k uniform sections of series r (Ω) and shunt c (F), driven
// by a unit voltage source Vin at node n0 and left open at node nK.
func RCLadder(k int, r, c float64) *netlist.Circuit {
	parts := []netlist.Part{V("Vin", "n0", "gnd", 1)}
	for j := 1; j <= k; j++ {
		parts = append(parts,
			R(fmt.Sprintf("R%d", j), fmt.Sprintf("n%d", j-1), fmt.Sprintf("n%d", j), r),
			C(fmt.Sprintf("C%d", j), fmt.Sprintf("n%d", j), "gnd", c))
	}
	return New(parts...)
}

// Wien is the Wien network driven by a unit voltage source Vs at node in:
// series R1 (r Ω) and C1 (c F) from in through node a to node out, then
// R2 ∥ C2 (the same values) from out to ground.
func Wien(r, c float64) *netlist.Circuit {
	return New(
		V("Vs", "in", "gnd", 1),
		R("R1", "in", "a", r),
		C("C1", "a", "out", c),
		R("R2", "out", "gnd", r),
		C("C2", "out", "gnd", c),
	)
}
