package testcircuit

import (
	"os"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// Load reads and elaborates the circuit file at path with the overrides
// ov (nil for none), failing the test on any error.
func Load(t testing.TB, path string, ov netlist.Overrides) *netlist.Circuit {
	t.Helper()
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.Load(path, src, ov)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// Build builds the MNA system of circ from its only source to the output
// out, failing the test on any error.
func Build(t testing.TB, circ *netlist.Circuit, out mna.Output) *mna.System {
	t.Helper()
	sys, err := mna.Build(circ, mna.Input{}, out)
	if err != nil {
		t.Fatal(err)
	}
	return sys
}
