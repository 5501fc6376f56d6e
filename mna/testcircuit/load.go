package testcircuit

import (
	"os"
	"testing"

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
