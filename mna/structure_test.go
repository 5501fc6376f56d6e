package mna_test

import (
	"errors"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// Structural diagnostics: each defect is singular for every s by
// construction (a zero row, a dependent pair of rows or columns of G + sC;
// common practice of nodal analysis), and must be named.
func TestStructureErrors(t *testing.T) {
	tc := testcircuit.New
	v, r, c, i := testcircuit.V, testcircuit.R, testcircuit.C, testcircuit.I
	cases := []struct {
		name  string
		c     *netlist.Circuit
		out   string
		wants []string // substrings of the error
	}{
		{"floating node", tc(v("Vs", "in", gnd, 1), r("R1", "in", gnd, 1e3), r("R2", "x", "y", 1e3), r("R3", "y", "x", 1e3)),
			"in", []string{`nodes "x", "y" are not connected to gnd by any part`}},
		{"single floating node", tc(v("Vs", "in", gnd, 1), r("R1", "in", gnd, 1e3), testcircuit.VCVS("Gain1", "o", gnd, 2, "in", "x")),
			"o", []string{`node "x" is not connected to gnd by any part`}},
		{"voltage source loop", tc(v("Vs", "in", gnd, 1), v("V2", "in", "a", 1), v("V3", "a", gnd, 1), r("R1", "in", gnd, 1e3)),
			"in", []string{"V3, Vs, V2", "form a loop", `"a"`, "every frequency"}},
		{"current-source cut-set", tc(i("I1", "a", gnd, 1), r("R1", "a", "b", 1e3), c("C1", "b", "a", 1e-9)),
			"a", []string{`nodes "a", "b" are reached only through current sources (I1)`, "every frequency"}},
		{"opamp inputs tied", tc(v("Vs", "in", gnd, 1), r("R1", "in", "out", 1e3),
			testcircuit.OpAmp("U1", "in", "in", "out", 0, 0, 0)),
			"out", []string{"cannot determine", "structurally singular", "equation of U1"}},
	}
	for _, tc := range cases {
		in := mna.Input{}
		if _, ok := tc.c.Part("V2"); ok {
			in.Source = "Vs"
		}
		_, err := mna.Build(tc.c, in, mna.Output{Kind: mna.NodeVoltage, Node: tc.out})
		var se *mna.StructureError
		if !errors.As(err, &se) {
			t.Errorf("%s: error %v, want a *StructureError", tc.name, err)
			continue
		}
		for _, w := range tc.wants {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error %q lacks %q", tc.name, err, w)
			}
		}
	}
}

// Defects singular at s = 0 only are information, not errors.
func TestStructureDCOnly(t *testing.T) {
	cases := []struct {
		name string
		c    *netlist.Circuit
		want string
	}{
		{"capacitor-only node", testcircuit.New(testcircuit.V("Vs", "in", gnd, 1),
			testcircuit.C("C1", "in", "x", 1e-9), testcircuit.C("C2", "x", gnd, 1e-9)),
			`node "x" is reached only through capacitors and current sources (C1, C2)`},
		{"inductor across a source", testcircuit.New(testcircuit.V("Vs", "x", gnd, 1),
			testcircuit.L("L1", "x", gnd, 1e-3)),
			"inductors and voltage-fixing parts L1, Vs form a loop"},
	}
	for _, tc := range cases {
		sys, err := mna.Build(tc.c, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "x"})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if got := strings.Join(sys.DCSingular, "\n"); !strings.Contains(got, tc.want) {
			t.Errorf("%s: DCSingular %q lacks %q", tc.name, got, tc.want)
		}
		if _, err := sys.H(0); err == nil {
			t.Errorf("%s: solving at s = 0 succeeded on a DC-singular system", tc.name)
		}
		if _, err := sys.H(jw(1e3)); err != nil {
			t.Errorf("%s: at 1 kHz: %v", tc.name, err)
		}
	}
	c, _ := rcLowPass()
	if sys := build(t, c, mna.Input{}, "out", ""); len(sys.DCSingular) != 0 {
		t.Errorf("RC low-pass: DCSingular = %q, want none", sys.DCSingular)
	}
}

// Unknown names give a *LookupError listing what exists.
func TestLookupErrors(t *testing.T) {
	c, _ := rcLowPass()
	two := testcircuit.New(testcircuit.V("Va", "in", gnd, 1), testcircuit.I("Ib", "in", gnd, 1), testcircuit.R("R1", "in", gnd, 1))
	cases := []struct {
		name  string
		c     *netlist.Circuit
		in    mna.Input
		out   mna.Output
		wants []string
	}{
		{"unknown node", c, mna.Input{}, mna.Output{Node: "zz"}, []string{`no node "zz"`, `"gnd", "in", "out"`}},
		{"unknown ref", c, mna.Input{}, mna.Output{Node: "out", Ref: "q"}, []string{`no node "q"`}},
		{"unknown source", c, mna.Input{Source: "V9"}, mna.Output{Node: "out"}, []string{`no source "V9"`, `"Vs"`}},
		{"not a source", c, mna.Input{Source: "R1"}, mna.Output{Node: "out"}, []string{`no source "R1"`}},
		{"several sources", two, mna.Input{}, mna.Output{Node: "in"}, []string{"several", `"Va", "Ib"`}},
		{"unknown part", c, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "X"}, []string{`no part "X"`, `"Vs", "R1", "C1"`}},
		{"current of a node", c, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "out"}, []string{`"out" is a node, not a part`, "v(out)", `"Vs", "R1", "C1"`}},
		{"bad inject", c, mna.Input{Inject: "nope"}, mna.Output{Node: "out"}, []string{`node "nope"`}},
	}
	for _, tc := range cases {
		_, err := mna.Build(tc.c, tc.in, tc.out)
		var le *mna.LookupError
		if !errors.As(err, &le) {
			t.Errorf("%s: error %v, want a *LookupError", tc.name, err)
			continue
		}
		for _, w := range tc.wants {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error %q lacks %q", tc.name, err, w)
			}
		}
	}
}

// Bad parts give a *PartError naming the part, never a panic.
func TestPartErrors(t *testing.T) {
	bad := []netlist.Part{
		{Name: "R9", Kind: netlist.Resistor, Nodes: []string{"in"}, Value: 1},
		{Name: "R9", Kind: netlist.Resistor, Nodes: []string{"in", gnd}, Value: 0},
		{Name: "Mirror9", Kind: netlist.CCCS, Nodes: []string{"in", gnd}, Value: 1, Control: "nobody"},
		{Name: "Link9", Kind: netlist.Coupling, Value: 0.5, Coupled: [2]string{"R1", "R1"}},
		{Name: "Link9", Kind: netlist.Coupling, Value: 1.5},
		{Name: "Q9", Kind: netlist.Kind(99), Nodes: []string{"in", gnd}},
	}
	for _, p := range bad {
		c := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", gnd, 1), p)
		_, err := mna.Build(c, mna.Input{}, mna.Output{Node: "in"})
		var pe *mna.PartError
		if !errors.As(err, &pe) || pe.Part != p.Name {
			t.Errorf("%+v: error %v, want a *PartError for %s", p, err, p.Name)
		}
	}
}

// A numerically singular point is reported with the frequency and the
// unknown that lost its pivot: a current source into a lossless parallel LC tank
// at its resonance ω0 = 1/√(LC) = 1 rad/s, where Y = sC + 1/(sL) = 0
// (common practice).
func TestSingularAtResonance(t *testing.T) {
	c := testcircuit.New(testcircuit.I("I1", gnd, "x", 1),
		testcircuit.C("C1", "x", gnd, 1), testcircuit.L("L1", "x", gnd, 1))
	sys := build(t, c, mna.Input{}, "x", "")
	_, _, err := mna.NewSweeper(sys).Eval(complex(0, 1))
	var se *mna.SingularError
	if !errors.As(err, &se) {
		t.Fatalf("error %v, want a *SingularError", err)
	}
	if se.Unknown != "i(L1)" || se.S != complex(0, 1) || !strings.Contains(se.Error(), "i(L1)") ||
		!strings.Contains(se.Error(), "0.159155 Hz") {
		t.Errorf("singular error %+v: %v", se, se)
	}
	if _, _, err := mna.NewSweeper(sys).Eval(complex(0, 2)); err != nil {
		t.Errorf("at 2 rad/s: %v", err)
	}
}
