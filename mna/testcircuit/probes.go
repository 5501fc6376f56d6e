package testcircuit

import (
	"nodal/mna"
	"nodal/netlist"
)

// ProbeCase is one probe of a small circuit with the closed form of its
// transfer y/u at s (rad/s).
type ProbeCase struct {
	Name    string
	Circuit *netlist.Circuit
	Probe   mna.Probe
	Want    func(s complex128) complex128
}

// ProbeClosedForms returns one case per excitation and observation kind
// that both engines support, each against a closed form of circuit theory
// (common practice: series and parallel impedances, the voltage divider,
// Thévenin's theorem).
func ProbeClosedForms() []ProbeCase {
	const r1, r2, r3, cv = 1e3, 3.3e3, 4.7e3, 100e-9
	gnd := netlist.Ground
	seriesRC := New( // Vs — R1 — C1 — gnd, a second source Ib elsewhere
		V("Vs", "in", gnd, 1),
		R("R1", "in", "m", r1),
		C("C1", "m", gnd, cv),
		I("Ib", "x", gnd, 1e-3),
		R("R3", "x", gnd, r3),
	)
	parallelRC := New( // Is into R1 ∥ C1
		I("Is", "a", gnd, 1),
		R("R1", "a", gnd, r1),
		C("C1", "a", gnd, cv),
	)
	divider := New(
		V("Vs", "in", gnd, 5),
		R("R1", "in", "out", r1),
		R("R2", "out", gnd, r2),
	)
	floating := New( // a —R1— b, a —R2— gnd, b —R3— gnd
		R("R1", "a", "b", r1),
		R("R2", "a", gnd, r2),
		R("R3", "b", gnd, r3),
	)
	par := func(a, b complex128) complex128 { return a * b / (a + b) }
	return []ProbeCase{
		{"Zin of series RC, R + 1/(sC)", seriesRC, mna.SourceImpedance("Vs"),
			func(s complex128) complex128 { return r1 + 1/(s*cv) }},
		{"Zin seen by a current source, R ∥ 1/(sC)", parallelRC, mna.SourceImpedance(""),
			func(s complex128) complex128 { return par(r1, 1/(s*cv)) }},
		{"Thévenin Zout of a divider, R1 ∥ R2", divider, mna.NodeImpedance("out", ""),
			func(complex128) complex128 { return r1 * r2 / (r1 + r2) }},
		{"impedance between two nodes, R1 ∥ (R2 + R3)", floating, mna.NodeImpedance("a", "b"),
			func(complex128) complex128 { return par(r1, r2+r3) }},
		{"transfer impedance a→b to gnd, R2·R3/(R1+R2+R3)", floating,
			mna.Probe{Ex: mna.Excitation{Kind: mna.Injection, Inject: "a"}, Ob: mna.Observation{Node: "b"}},
			func(complex128) complex128 { return r2 * r3 / (r1 + r2 + r3) }},
		{"difference of two nodes, divider in − out = R1/(R1+R2)", divider,
			mna.Probe{Ob: mna.Observation{Node: "in", Ref: "out"}},
			func(complex128) complex128 { return r1 / (r1 + r2) }},
		{"current through a resistor, 1/(R1+R2)", divider,
			mna.Probe{Ob: mna.Observation{Kind: mna.PartCurrent, Part: "R2"}},
			func(complex128) complex128 { return 1 / (r1 + r2) }},
		{"current through a capacitor, sC/(1 + sRC)", seriesRC,
			mna.Probe{Ex: mna.Excitation{Source: "Vs"}, Ob: mna.Observation{Kind: mna.PartCurrent, Part: "C1"}},
			func(s complex128) complex128 { return s * cv / (1 + s*r1*cv) }},
		{"current a voltage source delivers, 1/(R + 1/(sC))", seriesRC,
			mna.Probe{Ex: mna.Excitation{Source: "Vs"}, Ob: mna.Observation{Kind: mna.SourceCurrent, Part: "Vs"}},
			func(s complex128) complex128 { return 1 / (r1 + 1/(s*cv)) }},
		{"current through the driven current source, −1", parallelRC,
			mna.Probe{Ob: mna.Observation{Kind: mna.PartCurrent, Part: "Is"}},
			func(complex128) complex128 { return -1 }},
	}
}
