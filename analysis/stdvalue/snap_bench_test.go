package stdvalue

import (
	"fmt"
	"nodal/analysis/require"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// ladderSource is an RC ladder of n sections with computed values, as a
// long filter-bank file.
func ladderSource(n int) []byte {
	var b strings.Builder
	b.WriteString("let k = 1.37\nV: voltage source (n0, gnd) 1\n")
	for i := range n {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) %dk*k  # section %d\n", i, i, i+1, 1+i%9, i)
		fmt.Fprintf(&b, "C%d: capacitor (n%d, gnd) %dnF\n", i, i+1, 1+i%7)
	}
	return []byte(b.String())
}

// BenchmarkSnapLadder rounds a 2000-section ladder (4000 parts) to E24.
func BenchmarkSnapLadder(b *testing.B) {
	src := ladderSource(2000)
	e24, _ := SeriesByName("E24")
	series := map[netlist.Kind]Series{netlist.Resistor: e24, netlist.Capacitor: e24}
	for b.Loop() {
		if _, err := Snap("ladder.nodal", src, nil, series); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkVerifyLogger runs verify on the anti-alias example (8 corners
// and 1000 Monte Carlo runs, each an MNA build and Extract).
func BenchmarkVerifyLogger(b *testing.B) {
	c, err := netlist.Load("logger.nodal", []byte(snapSource), nil)
	if err != nil {
		b.Fatal(err)
	}
	rm, err := require.NewRequirementMetrics(c, c.Requirements, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := require.Verify(b.Context(), c, rm, require.VerifyOptions{Runs: 1000, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}
