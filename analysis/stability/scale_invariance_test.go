package stability

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"nodal/netlist"
)

// scaledCircuit is a circuit whose resistances and inductances are
// multiplied by 10^k and capacitances by 10^−k: a diagonal equivalence of
// G + sC (node rows by 10^k, branch-current columns by 10^−k), so its
// natural frequencies and class do not change with k (common practice:
// impedance scaling).
type scaledCircuit struct {
	name string
	// src returns the circuit text with R, L scaled by 10^k and C by 10^−k.
	src   func(r, l, c func(float64) float64) string
	class Class
	// want are the natural frequencies (rad/s) of the unscaled circuit.
	want []complex128
	from string // the source of want
}

// quadRoots returns the roots of a·s² + b·s + c (a, c > 0, b ≥ 0).
func quadRoots(a, b, c float64) []complex128 {
	d := cmplx.Sqrt(complex(b*b-4*a*c, 0))
	return []complex128{(complex(-b, 0) + d) / complex(2*a, 0), (complex(-b, 0) - d) / complex(2*a, 0)}
}

func scaledCircuits() []scaledCircuit {
	const r, c = 1e3, 10e-9 // the RC sections: 1/RC = 10⁵ rad/s
	return []scaledCircuit{
		{name: "rc_lowpass", class: Stable, want: []complex128{-1 / (r * c)}, from: "s = −1/RC, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"rc\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, x) %g\nC1: capacitor (x, gnd) %g\n", R(r), C(c))
			}},
		{name: "electrometer_2T_1p", class: Stable, want: []complex128{-0.5}, from: "s = −1/RC, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"tera\"\nV1: voltage source (in, gnd) 1\nRt: resistor (in, x) %g\nC1: capacitor (x, gnd) %g\n", R(2e12), C(1e-12))
			}},
		{name: "series_rlc", class: Stable, want: quadRoots(10e-3*100e-9, 100*100e-9, 1), from: "LC·s² + RC·s + 1 = 0, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"rlc\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, a) %g\nL1: inductor (a, b) %g\nC1: capacitor (b, gnd) %g\n", R(100), L(10e-3), C(100e-9))
			}},
		{name: "lc_tank", class: Marginal, want: []complex128{complex(0, 1e5), complex(0, -1e5)}, from: "s = ±j/√(LC), common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"tank\"\nI1: current source (gnd, a) 1\nL1: inductor (a, gnd) %g\nC1: capacitor (a, gnd) %g\n", L(10e-3), C(10e-9))
			}},
		{name: "buffered_rc_pair", class: Stable, want: []complex128{-1 / (r * c), -1 / (2 * r * c)}, from: "s = −1/RC per section behind an ideal buffer, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"two\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, m) %g\nC1: capacitor (m, gnd) %g\nE1: voltage source (b, gnd) 10*v(m)\nR2: resistor (b, x) %g\nC2: capacitor (x, gnd) %g\n",
					R(r), C(c), R(2*r), C(c))
			}},
		{name: "sallen_key_unity", class: Stable, want: quadRoots(r*r*20e-9*10e-9, 10e-9*2*r, 1), from: "R1R2C1C2·s² + C2(R1+R2)·s + 1 = 0 (unity-gain Sallen-Key, common practice)",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"sk\"\nVin: voltage source (in, gnd) 1\nR1: resistor (in, a) %g\nR2: resistor (a, b) %g\nC1: capacitor (a, out) %g\nC2: capacitor (b, gnd) %g\nU1: opamp (b, out, out)\n",
					R(r), R(r), C(20e-9), C(10e-9))
			}},
		{name: "ideal_integrator", class: Marginal, want: []complex128{0}, from: "an ideal integrator: s = 0, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"int\"\nVin: voltage source (in, gnd) 1\nR1: resistor (in, n) %g\nC1: capacitor (n, o) %g\nU1: opamp (gnd, n, o)\nRL: resistor (o, gnd) %g\n", R(r), C(c), R(r))
			}},
		{name: "double_integrator", class: Unstable, want: []complex128{0, 0}, from: "two ideal integrators: s = 0 twice, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"int2\"\nVin: voltage source (in, gnd) 1\nR1: resistor (in, n1) %g\nC1: capacitor (n1, o1) %g\nU1: opamp (gnd, n1, o1)\nR2: resistor (o1, n2) %g\nC2: capacitor (n2, o2) %g\nU2: opamp (gnd, n2, o2)\n",
					R(r), C(c), R(r), C(c))
			}},
		{name: "leaky_integrator_slow", class: Stable, want: []complex128{-1 / (1e13 * c)}, from: "s = −1/(Rf·C) of an integrator with a 10 TΩ leak, common practice",
			src: func(R, L, C func(float64) float64) string {
				return fmt.Sprintf("title \"leak\"\nVin: voltage source (in, gnd) 1\nR1: resistor (in, n) %g\nC1: capacitor (n, o) %g\nRf: resistor (n, o) %g\nU1: opamp (gnd, n, o)\n", R(r), C(c), R(1e13))
			}},
	}
}

// TestScaleInvariance: impedance scaling (R, L by 10^k, C by 10^−k) from
// 10⁻¹⁸ to 10¹⁰ changes neither the class nor the natural frequencies
// (to 1e-9 relative), whose closed forms are given per circuit.
func TestScaleInvariance(t *testing.T) {
	for _, sc := range scaledCircuits() {
		for _, k := range []int{-18, -15, -12, -9, -6, -3, 0, 3, 6, 9, 10} {
			t.Run(fmt.Sprintf("%s/k=%d", sc.name, k), func(t *testing.T) {
				f := math.Pow(10, float64(k))
				up := func(v float64) float64 { return v * f }
				down := func(v float64) float64 { return v / f }
				c, err := netlist.Load(sc.name+".nodal", []byte(sc.src(up, up, down)), nil)
				if err != nil {
					t.Fatal(err)
				}
				res, err := Analyze(c, Options{})
				if err != nil {
					t.Fatal(err)
				}
				if res.Class != sc.class {
					t.Fatalf("class %v, want %v; natural %v", res.Class, sc.class, res.Natural)
				}
				sameRoots(t, res.Natural, sc.want, 1e-9, sc.from)
			})
		}
	}
}

// TestRCOverDecades: one RC section with R from 10⁻¹⁵ Ω to 10¹³ Ω and C
// from 1 fF to 1 kF (and the 10⁻¹⁵ Ω, 10¹² F of the issue): one natural
// frequency s = −1/RC (common practice), stable, whatever the spread
// between the node's conductance and the source branch's unit incidence.
func TestRCOverDecades(t *testing.T) {
	for _, r := range []float64{1e-15, 1e-9, 1e-3, 1, 1e3, 1e6, 1e9, 1e13} {
		for _, c := range []float64{1e-15, 1e-12, 1e-9, 1e-6, 1e-3, 1, 1e3, 1e12} {
			t.Run(fmt.Sprintf("R=%g/C=%g", r, c), func(t *testing.T) {
				src := fmt.Sprintf("title \"rc\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, x) %g\nC1: capacitor (x, gnd) %g\n", r, c)
				circ, err := netlist.Load("rc.nodal", []byte(src), nil)
				if err != nil {
					t.Fatal(err)
				}
				res, err := Analyze(circ, Options{})
				if err != nil {
					t.Fatal(err)
				}
				if res.Class != Stable {
					t.Fatalf("class %v, want stable; natural %v", res.Class, res.Natural)
				}
				sameRoots(t, res.Natural, []complex128{complex(-1/(r*c), 0)}, 1e-12, "s = −1/RC, common practice")
			})
		}
	}
}

// sameRoots fails unless got and want are the same multiset within rel
// relative (an exact 0 must be exactly 0).
func sameRoots(t *testing.T, got, want []complex128, rel float64, from string) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("natural frequencies %v, want %v (%s)", got, want, from)
	}
	used := make([]bool, len(got))
	for _, w := range want {
		i := slices.IndexFunc(got, func(g complex128) bool {
			return cmplx.Abs(g-w) <= rel*cmplx.Abs(w)
		})
		for i >= 0 && used[i] {
			j := slices.IndexFunc(got[i+1:], func(g complex128) bool { return cmplx.Abs(g-w) <= rel*cmplx.Abs(w) })
			if j < 0 {
				i = -1
				break
			}
			i += 1 + j
		}
		if i < 0 {
			t.Fatalf("natural frequencies %v, want %v within %g relative (%s)", got, want, rel, from)
		}
		used[i] = true
	}
}
