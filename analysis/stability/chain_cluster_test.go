package stability

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"nodal/netlist"
)

// chainSource is a chain of n identical inverting stages (1 kΩ in, 10 kΩ
// feedback, op-amp A0 = 100k, gbw = 1 MHz, 1 Ω series out).
func chainSource(n int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "title \"chain of %d inverting stages\"\nVin: voltage source (n0, gnd) 1\n", n)
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "Ra%d: resistor (n%d, m%d) 1k\n", i, i-1, i)
		fmt.Fprintf(&b, "Rb%d: resistor (m%d, k%d) 10k\n", i, i, i)
		fmt.Fprintf(&b, "U%d: opamp (gnd, m%d, k%d) a0=100k gbw=1MHz\n", i, i, i)
		fmt.Fprintf(&b, "Rc%d: resistor (k%d, n%d) 1\n", i, i, i)
	}
	fmt.Fprintf(&b, "RL: resistor (n%d, gnd) 10k\n", n)
	return b.String()
}

// TestChainClusterStable: N stages with stiff outputs (Rout = 0) do not
// load one another, so each stage's closed-loop pole is that of its own
// loop, s = −(ωt/A0)(1 + A0·β) (single-pole op-amp in a resistive loop,
// common practice), with β = Ra'/(Ra' + Rb) where Ra' is Ra plus the
// source resistance seen through it: 0 for stage 1 (driven by Vin), Rc =
// 1 Ω for stages 2…N (driven through the previous stage's Rc). So one pole
// at β = 1000/11000 and an (N−1)-fold pole at β = 1001/11001. Treated as
// one pencil, the (N−1)-fold defective root splits by about ε^(1/(N−1))
// times the stage gain, into the right half-plane for N ≥ 18; the block
// triangular form must give each stage's pole to rounding.
func TestChainClusterStable(t *testing.T) {
	wt := 2 * math.Pi * 1e6
	a0 := 1e5
	pole := func(beta float64) complex128 { return complex(-(wt/a0)*(1+a0*beta), 0) }
	first := pole(1000.0 / 11000.0)
	rest := pole(1001.0 / 11001.0)
	for _, n := range []int{5, 18, 20, 25} {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			c, err := netlist.Load("chain.nodal", []byte(chainSource(n)), nil)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Analyze(c, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if res.Class != Stable {
				t.Fatalf("class %v, offending %v; want stable", res.Class, res.Offending)
			}
			count := func(want complex128) int {
				k := 0
				for _, r := range res.Natural {
					if cmplx.Abs(r-want) <= 1e-9*cmplx.Abs(want) {
						k++
					}
				}
				return k
			}
			if len(res.Natural) != n || count(first) != 1 || count(rest) != n-1 {
				t.Fatalf("natural frequencies %v; want %v once and %v %d times", res.Natural, first, rest, n-1)
			}
		})
	}
}
