package symbolic

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// numericH solves the circuit directly at one complex s with a dense
// complex Gaussian elimination (partial pivoting), independently of the
// symbolic code: plain float arithmetic, uncoupled inductors stamped as
// admittances 1/(sL), op-amp gain A(s) = a0·ωt/(ωt + s·a0) evaluated as a
// number. Conventions follow the circuit language (issue "netlist"): a
// vccs/cccs pushes its current into its first terminal, a current source pushes
// its current into the node of its first terminal.
func numericH(c *netlist.Circuit, in mna.Input, out mna.Output, s complex128) (complex128, error) {
	idx := map[string]int{}
	n := 0
	node := func(name string) int {
		if isGround(name) {
			return -1
		}
		if i, ok := idx[name]; ok {
			return i
		}
		idx[name] = n
		n++
		return n - 1
	}
	for _, p := range c.Parts {
		for _, x := range p.Nodes {
			node(x)
		}
	}
	coupled := map[string]bool{}
	for _, p := range c.Parts {
		if p.Kind == netlist.Coupling {
			coupled[p.Coupled[0]], coupled[p.Coupled[1]] = true, true
		}
	}
	br := map[string]int{}
	for _, p := range c.Parts {
		switch p.Kind {
		case netlist.VoltageSource, netlist.VCVS, netlist.CCVS, netlist.OpAmp:
			br[p.Name] = n
			n++
		case netlist.Inductor:
			if coupled[p.Name] {
				br[p.Name] = n
				n++
			}
		}
	}
	a := make([][]complex128, n)
	for i := range a {
		a[i] = make([]complex128, n+1) // last column: right-hand side
	}
	add := func(i, j int, v complex128) {
		if i >= 0 && j >= 0 {
			a[i][j] += v
		}
	}
	adm := func(p, q int, y complex128) {
		add(p, p, y)
		add(q, q, y)
		add(p, q, -y)
		add(q, p, -y)
	}
	branch := func(k, p, q int) {
		add(p, k, 1)
		add(q, k, -1)
		add(k, p, 1)
		add(k, q, -1)
	}
	// current through a part as coefficients over the unknowns.
	var current func(name string) (map[int]complex128, error)
	current = func(name string) (map[int]complex128, error) {
		p, _ := c.Part(name)
		f := map[int]complex128{}
		if k, ok := br[name]; ok {
			f[k] = 1
			return f, nil
		}
		var y complex128
		switch p.Kind {
		case netlist.Resistor:
			y = complex(1/p.Value, 0)
		case netlist.Capacitor:
			y = s * complex(p.Value, 0)
		case netlist.Inductor:
			y = 1 / (s * complex(p.Value, 0))
		case netlist.VCCS:
			f[node(p.Sense[0])] -= complex(p.Value, 0)
			f[node(p.Sense[1])] += complex(p.Value, 0)
			delete(f, -1)
			return f, nil
		default:
			return nil, fmt.Errorf("numericH: no current for %s", name)
		}
		f[node(p.Nodes[0])] += y
		f[node(p.Nodes[1])] -= y
		delete(f, -1)
		return f, nil
	}
	for _, p := range c.Parts {
		var x, y int
		if len(p.Nodes) >= 2 {
			x, y = node(p.Nodes[0]), node(p.Nodes[1])
		}
		v := complex(p.Value, 0)
		switch p.Kind {
		case netlist.Resistor:
			adm(x, y, 1/v)
		case netlist.Capacitor:
			adm(x, y, s*v)
		case netlist.Inductor:
			if k, ok := br[p.Name]; ok {
				branch(k, x, y)
				add(k, k, -s*v)
			} else {
				adm(x, y, 1/(s*v))
			}
		case netlist.Coupling:
			l1, _ := c.Part(p.Coupled[0])
			l2, _ := c.Part(p.Coupled[1])
			mu := complex(p.Value*math.Sqrt(l1.Value*l2.Value), 0)
			add(br[l1.Name], br[l2.Name], -s*mu)
			add(br[l2.Name], br[l1.Name], -s*mu)
		case netlist.VoltageSource:
			branch(br[p.Name], x, y)
		case netlist.VCVS:
			k := br[p.Name]
			branch(k, x, y)
			add(k, node(p.Sense[0]), -v)
			add(k, node(p.Sense[1]), v)
		case netlist.VCCS:
			cn, dn := node(p.Sense[0]), node(p.Sense[1])
			add(x, cn, -v)
			add(x, dn, v)
			add(y, cn, v)
			add(y, dn, -v)
		case netlist.CCVS, netlist.CCCS:
			f, err := current(p.Control)
			if err != nil {
				return 0, err
			}
			if p.Kind == netlist.CCVS {
				k := br[p.Name]
				branch(k, x, y)
				for j, cf := range f {
					add(k, j, -v*cf)
				}
			} else {
				for j, cf := range f {
					add(x, j, -v*cf)
					add(y, j, v*cf)
				}
			}
		case netlist.OpAmp:
			np, nn, no := node(p.Nodes[0]), node(p.Nodes[1]), node(p.Nodes[2])
			k := br[p.Name]
			add(no, k, -1)
			if p.A0 == 0 && p.GBWHz == 0 {
				add(k, np, 1)
				add(k, nn, -1)
				continue
			}
			var gain complex128
			wt := complex(2*math.Pi*p.GBWHz, 0)
			switch {
			case p.GBWHz == 0:
				gain = complex(p.A0, 0)
			case p.A0 == 0:
				gain = wt / s
			default:
				a0 := complex(p.A0, 0)
				gain = a0 * wt / (wt + s*a0)
			}
			// v_out + rout·i − A·(v+ − v−) = 0
			add(k, no, 1)
			add(k, k, complex(p.Rout, 0))
			add(k, np, -gain)
			add(k, nn, gain)
		}
	}
	src := in.Source
	if src == "" && in.Inject == "" {
		for _, p := range c.Parts {
			if p.Kind == netlist.VoltageSource || p.Kind == netlist.CurrentSource {
				src = p.Name
			}
		}
	}
	if in.Inject != "" {
		a[node(in.Inject)][n] += 1
	} else if p, _ := c.Part(src); p.Kind == netlist.VoltageSource {
		a[br[src]][n] = 1
	} else {
		if i := node(p.Nodes[0]); i >= 0 {
			a[i][n] += 1
		}
		if i := node(p.Nodes[1]); i >= 0 {
			a[i][n] -= 1
		}
	}
	x, err := solveComplex(a)
	if err != nil {
		return 0, err
	}
	if out.Kind == mna.PartCurrent {
		f, err := current(out.Part)
		if err != nil {
			return 0, err
		}
		var y complex128
		for j, cf := range f {
			y += cf * x[j]
		}
		return y, nil
	}
	y := x[node(out.Node)]
	if out.Ref != "" && !isGround(out.Ref) {
		y -= x[node(out.Ref)]
	}
	return y, nil
}

// solveComplex solves the augmented system a (n × n+1) in place.
func solveComplex(a [][]complex128) ([]complex128, error) {
	n := len(a)
	for k := 0; k < n; k++ {
		p := k
		for i := k + 1; i < n; i++ {
			if cmplx.Abs(a[i][k]) > cmplx.Abs(a[p][k]) {
				p = i
			}
		}
		if a[p][k] == 0 {
			return nil, fmt.Errorf("singular at column %d", k)
		}
		a[k], a[p] = a[p], a[k]
		for i := k + 1; i < n; i++ {
			f := a[i][k] / a[k][k]
			for j := k; j <= n; j++ {
				a[i][j] -= f * a[k][j]
			}
		}
	}
	x := make([]complex128, n)
	for i := n - 1; i >= 0; i-- {
		v := a[i][n]
		for j := i + 1; j < n; j++ {
			v -= a[i][j] * x[j]
		}
		x[i] = v / a[i][i]
	}
	return x, nil
}

type numericCase struct {
	name string
	c    *netlist.Circuit
	in   mna.Input
	out  mna.Output
	opt  Options
}

func numericCases() []numericCase {
	var cases []numericCase
	for _, tc := range publishedCases() {
		cases = append(cases, numericCase{name: tc.name, c: tc.c, in: tc.in, out: tc.out})
	}
	transformer := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "p", 50), ind("L1", "p", "gnd", 2e-3),
		ind("L2", "sec", "gnd", 8e-3), coupling("Link1", "L1", "L2", 0.95), res("R2", "sec", "gnd", 200),
		capa("C1", "sec", "gnd", 1e-7))
	cases = append(cases,
		numericCase{name: "coupled inductors", c: transformer, out: nodeOut("sec")},
		numericCase{name: "coupled inductors, primary current", c: transformer, out: mna.Output{Kind: mna.PartCurrent, Part: "L1"}},
		numericCase{name: "coupled inductors, K numeric", c: transformer, out: nodeOut("sec"), opt: Options{Keep: []string{"R1", "L1", "L2"}}},
		numericCase{name: "integrator with gbw and rout",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "n", 10e3), capa("C1", "n", "out", 1e-8),
				res("RL", "out", "gnd", 2e3), opamp("U1", "gnd", "n", "out", 2e5, 1e6, 75)),
			out: nodeOut("out"), opt: Options{Keep: []string{"R1", "C1", "RL", "U1", "U1.wt"}}},
		numericCase{name: "follower with gbw only",
			c:   circuit(vsrc("V1", "in", "gnd"), opamp("U1", "in", "out", "out", 0, 1e6, 0), res("RL", "out", "gnd", 1e3)),
			out: nodeOut("out")},
		numericCase{name: "controlled sources: current source into RC, ccvs and cccs",
			c: circuit(isrc("I1", "a", "gnd"), res("R1", "a", "gnd", 1e3), capa("C1", "a", "gnd", 1e-9),
				vccs("Gm1", "b", "gnd", "a", "gnd", 2e-3), res("R2", "b", "gnd", 5e3),
				vsrc("Vs", "b", "m"), res("R3", "m", "gnd", 1e3),
				ccvs("Tz1", "c", "gnd", "Vs", 300), res("R4", "c", "d", 1e3), capa("C2", "d", "gnd", 1e-8),
				cccs("Mirror1", "e", "gnd", "R4", 4), res("R5", "e", "gnd", 2e3), ind("L1", "e", "gnd", 1e-2)),
			in: mna.Input{Source: "I1"}, out: nodeOut("e")},
		numericCase{name: "differential output, node pair",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 1e3), capa("C1", "a", "gnd", 1e-7),
				res("R2", "in", "b", 2e3), ind("L1", "b", "gnd", 1e-3)),
			out: mna.Output{Kind: mna.NodeVoltage, Node: "a", Ref: "b"}},
		numericCase{name: "output impedance by injection",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "n", 1e3), res("R2", "n", "out", 10e3),
				opamp("U1", "gnd", "n", "out", 1e4, 0, 100)),
			in: mna.Input{Inject: "out"}, out: nodeOut("out")},
		numericCase{name: "state-variable filter", c: stateVariable(), out: nodeOut("lp")},
	)
	return cases
}

// TestMatchesNumericSolve substitutes the part values into the symbolic
// result and compares H(s) with a direct numeric solve of the same circuit
// at several complex points (relative 1e-10).
func TestMatchesNumericSolve(t *testing.T) {
	points := []complex128{complex(0, 1e2), complex(-3e2, 2e3), complex(1e3, -1e4), complex(0, 6.3e4), complex(2e5, 1e5)}
	for _, tc := range numericCases() {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Transfer(context.Background(), tc.c, tc.in, tc.out, tc.opt)
			if err != nil {
				t.Fatalf("Transfer: %v", err)
			}
			_, _, h, err := r.EvalNumeric(r.Values)
			if err != nil {
				t.Fatalf("EvalNumeric: %v", err)
			}
			for _, s := range points {
				want, err := numericH(tc.c, tc.in, tc.out, s)
				if err != nil {
					t.Fatalf("numeric solve: %v", err)
				}
				got := h(s)
				if rel := cmplx.Abs(got-want) / cmplx.Abs(want); rel > 1e-10 || math.IsNaN(rel) {
					t.Errorf("s=%v: symbolic %v, numeric %v (rel %.2g); num=%q den=%q",
						s, got, want, rel, r.NumStrings(), r.DenStrings())
				}
			}
		})
	}
}

// stateVariable is a two-integrator-loop (state-variable) filter of 20
// parts with ideal op-amps: a summing amplifier (U1), two inverting
// integrators (U2, U3) and an output inverter (U4) with a damping network.
func stateVariable() *netlist.Circuit {
	return circuit(
		vsrc("Vin", "in", "gnd"),
		// summer: inverting input s1, output hp
		res("R1", "in", "s1", 10e3), res("R2", "lp0", "s1", 10e3), res("R3", "s1", "hp", 10e3),
		res("R4", "bp", "p1", 10e3), res("R5", "p1", "gnd", 10e3), res("R6", "p1x", "gnd", 1e6),
		res("R7", "p1", "p1x", 1e3),
		opamp("U1", "p1", "s1", "hp", 0, 0, 0),
		// integrator hp → bp
		res("R8", "hp", "n2", 15.9e3), capa("C1", "n2", "bp", 10e-9),
		opamp("U2", "gnd", "n2", "bp", 0, 0, 0),
		// integrator bp → lp0
		res("R9", "bp", "n3", 15.9e3), capa("C2", "n3", "lp0", 10e-9),
		opamp("U3", "gnd", "n3", "lp0", 0, 0, 0),
		// inverter lp0 → lp
		res("R10", "lp0", "n4", 10e3), res("R11", "n4", "lp", 10e3),
		opamp("U4", "gnd", "n4", "lp", 0, 0, 0),
		res("RL", "lp", "gnd", 47e3), res("R12", "bp", "gnd", 100e3),
	)
}
