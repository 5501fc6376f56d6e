package stability

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// TestPassiveCertificateAgreesWithDense: on random small passive circuits
// (resistors, capacitors, inductors, now and then two of them coupled, a
// voltage and a current source on six nodes) the certificate never claims more than the dense natural
// frequencies show: a strict verdict only for a stable circuit; a zero
// verdict exactly when s = 0 is a natural frequency (the structural test
// is exact, passive.go); an axis-free verdict never beside a root on the
// jω axis; and no natural frequency in the right half-plane ever (the
// energy argument, Desoer and Kuh 1969, from memory).
func TestPassiveCertificateAgreesWithDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	nodes := []string{"gnd", "a", "b", "c", "d", "e", "f"}
	strict, checked := 0, 0
	for trial := 0; trial < 400; trial++ {
		parts := []netlist.Part{testcircuit.V("V1", "a", "gnd", 1), testcircuit.I("I1", "gnd", "b", 1)}
		for k := 0; k < 4+rng.IntN(9); k++ {
			i := rng.IntN(len(nodes))
			j := (i + 1 + rng.IntN(len(nodes)-1)) % len(nodes)
			a, b := nodes[i], nodes[j]
			v := 1 + 9*rng.Float64()
			name := fmt.Sprintf("P%d", k)
			switch rng.IntN(3) {
			case 0:
				parts = append(parts, testcircuit.R(name, a, b, v*1e3))
			case 1:
				parts = append(parts, testcircuit.C(name, a, b, v*1e-9))
			default:
				parts = append(parts, testcircuit.L(name, a, b, v*1e-3))
			}
		}
		var inductors []string
		for _, p := range parts {
			if p.Kind == netlist.Inductor {
				inductors = append(inductors, p.Name)
			}
		}
		if len(inductors) >= 2 && rng.IntN(2) == 0 {
			k := (0.1 + 0.8*rng.Float64()) * float64(1-2*rng.IntN(2))
			parts = append(parts, testcircuit.K("K1", inductors[0], inductors[1], k))
		}
		c := testcircuit.New(parts...)
		// Only circuits the commands would analyse: mna.Build runs the
		// structure checks (a node fixed by nothing, a loop of sources),
		// without which the pencil is singular and has no natural
		// frequencies to compare.
		if _, err := mna.Build(c, mna.Input{Kind: mna.Drive, Source: "V1"}, mna.Output{Kind: mna.NodeVoltage, Node: "a"}); err != nil {
			continue
		}
		m, err := mna.BuildMatrices(c)
		if err != nil {
			continue
		}
		dense, err := ofMatrices(c, m)
		if err != nil {
			continue // a singular pencil (a floating node, a loop of sources)
		}
		v, ok := passiveCertificate(c, m)
		if !ok {
			t.Fatalf("trial %d: a passive circuit not taken as passive", trial)
		}
		checked++
		big := 0.0
		for _, z := range dense.Natural {
			big = math.Max(big, cmplx.Abs(z))
		}
		hasZero, nearZero, hasAxis, hasRight := false, false, false, false
		for _, z := range dense.Natural {
			nearZero = nearZero || cmplx.Abs(z) <= 1e-6*big
			switch {
			case z == 0:
				hasZero = true
			case real(z) == 0:
				hasAxis = true
			case real(z) > 0:
				hasRight = true
			}
		}
		if hasRight {
			t.Fatalf("trial %d: a passive circuit with natural frequencies %v (parts %v)", trial, dense.Natural, c.Parts)
		}
		// The dense path may leave an exact root at s = 0 at rounding
		// level (−7e-8 rad/s beside roots of 10⁵ in one of these): a zero
		// verdict needs a root near 0, a root exactly 0 needs the verdict.
		if (v.zero && !nearZero) || (hasZero && !v.zero) {
			t.Fatalf("trial %d: zero verdict %v, natural frequencies %v (parts %v)", trial, v.zero, dense.Natural, c.Parts)
		}
		if v.axisFree && hasAxis {
			t.Fatalf("trial %d: axis-free verdict beside natural frequencies %v (parts %v)", trial, dense.Natural, c.Parts)
		}
		if v.strict() {
			strict++
			if dense.Class != Stable || nearZero {
				t.Fatalf("trial %d: strict verdict, dense class %v", trial, dense.Class)
			}
		}
	}
	if checked < 200 || strict < 50 {
		t.Fatalf("only %d circuits checked, %d strict: the test proves little", checked, strict)
	}
	t.Logf("%d circuits, %d proven strictly stable", checked, strict)
}

// TestLargeVoltageLoopIsSingular: voltage sources that close a loop make
// det(G + sC) ≡ 0; a large circuit says so rather than "passive".
func TestLargeVoltageLoopIsSingular(t *testing.T) {
	c := ladder(2000, 1e3, 0, 1e-8, false)
	c.Parts = append(c.Parts, testcircuit.V("V2", "n0", "x", 1), testcircuit.V("V3", "x", "gnd", 1), testcircuit.R("Rx", "x", "n3", 1e3))
	c = testcircuit.New(c.Parts...)
	if _, err := Analyze(c, Options{}); !errors.Is(err, ErrSingularPencil) {
		t.Fatalf("err %v, want ErrSingularPencil", err)
	}
}
