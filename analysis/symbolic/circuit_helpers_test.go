package symbolic

import (
	"context"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// Hand-built circuits: the netlist parser is tested elsewhere.

func two(kind netlist.Kind, name, a, b string, v float64) netlist.Part {
	return netlist.Part{Name: name, Kind: kind, Nodes: []string{a, b}, Value: v}
}

func res(name, a, b string, v float64) netlist.Part { return two(netlist.Resistor, name, a, b, v) }
func capa(name, a, b string, v float64) netlist.Part {
	return two(netlist.Capacitor, name, a, b, v)
}
func ind(name, a, b string, v float64) netlist.Part { return two(netlist.Inductor, name, a, b, v) }
func vsrc(name, p, n string) netlist.Part           { return two(netlist.VoltageSource, name, p, n, 1) }
func isrc(name, a, b string) netlist.Part           { return two(netlist.CurrentSource, name, a, b, 1) }

func vcvs(name, p, n, c, d string, gain float64) netlist.Part {
	q := two(netlist.VCVS, name, p, n, gain)
	q.Sense = [2]string{c, d}
	return q
}

func vccs(name, a, b, c, d string, gm float64) netlist.Part {
	q := two(netlist.VCCS, name, a, b, gm)
	q.Sense = [2]string{c, d}
	return q
}

func ccvs(name, p, n, ctl string, r float64) netlist.Part {
	q := two(netlist.CCVS, name, p, n, r)
	q.Control = ctl
	return q
}

func cccs(name, a, b, ctl string, gain float64) netlist.Part {
	q := two(netlist.CCCS, name, a, b, gain)
	q.Control = ctl
	return q
}

func coupling(name, l1, l2 string, k float64) netlist.Part {
	return netlist.Part{Name: name, Kind: netlist.Coupling, Value: k, Coupled: [2]string{l1, l2}}
}

// opamp returns an op-amp (noninverting, inverting, output); a0 = gbw = 0
// is the ideal nullor.
func opamp(name, np, nn, out string, a0, gbwHz, rout float64) netlist.Part {
	return netlist.Part{Name: name, Kind: netlist.OpAmp, Nodes: []string{np, nn, out}, A0: a0, GBWHz: gbwHz, Rout: rout}
}

func circuit(parts ...netlist.Part) *netlist.Circuit {
	return &netlist.Circuit{File: "test", Parts: parts}
}

var inputAuto = mna.Input{}

func nodeOut(n string) mna.Output { return mna.Output{Kind: mna.NodeVoltage, Node: n} }

func mustTransfer(t testing.TB, c *netlist.Circuit, out mna.Output, opt Options) *Result {
	t.Helper()
	r, err := Transfer(context.Background(), c, mna.Input{}, out, opt)
	if err != nil {
		t.Fatalf("Transfer: %v", err)
	}
	return r
}

// prod is the product of the named variables times the integer c.
func prod(c int64, names ...string) Poly {
	p := Int(c)
	for _, n := range names {
		p = p.Mul(Var(n))
	}
	return p
}

// sum adds polynomials.
func sum(ps ...Poly) Poly {
	var out Poly
	for _, p := range ps {
		out = out.Add(p)
	}
	return out
}

// m is the monomial product of names with coefficient 1.
func m(names ...string) Poly { return prod(1, names...) }
