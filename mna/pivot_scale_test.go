package mna_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// cascade is a chain of n buffered first-order sections: section k is an
// RC high-pass (series C, shunt R) or low-pass (series R, shunt C) of
// r·10^(k·spread) and c·10^(−k·spread), buffered by a gain element of
// gain g: a voltage-controlled voltage source g·v(m), or an ideal op-amp
// as a non-inverting amplifier (1 kΩ·10^(k·spread) to ground and
// (g − 1) times that in feedback). kinds lists the sections, cycled.
type cascade struct {
	n      int
	opamp  bool
	kinds  string // 'h' high-pass, 'l' low-pass, cycled over the stages
	r, c   float64
	g      float64
	spread float64
}

func (cs cascade) name() string {
	el := "vcvs"
	if cs.opamp {
		el = "opamp"
	}
	return fmt.Sprintf("%s%g_%s%d_r%g_c%g_sp%g", el, cs.g, cs.kinds, cs.n, cs.r, cs.c, cs.spread)
}

func (cs cascade) circuit() *netlist.Circuit {
	gnd := netlist.Ground
	node := func(p string, k int) string { return fmt.Sprint(p, k) }
	parts := []netlist.Part{testcircuit.V("V1", "n0", gnd, 1)}
	for k := 0; k < cs.n; k++ {
		f := math.Pow(10, float64(k)*cs.spread)
		r, c := cs.r*f, cs.c/f
		in, m, out := node("n", k), node("m", k), node("n", k+1)
		if cs.kinds[k%len(cs.kinds)] == 'h' {
			parts = append(parts, testcircuit.C(node("C", k), in, m, c), testcircuit.R(node("R", k), m, gnd, r))
		} else {
			parts = append(parts, testcircuit.R(node("R", k), in, m, r), testcircuit.C(node("C", k), m, gnd, c))
		}
		if cs.opamp {
			fb := node("f", k)
			parts = append(parts,
				testcircuit.R(node("Ra", k), fb, gnd, 1e3*f),
				testcircuit.R(node("Rb", k), fb, out, 1e3*f*(cs.g-1)),
				testcircuit.OpAmp(node("U", k), m, fb, out, 0, 0, 0))
		} else {
			parts = append(parts, testcircuit.VCVS(node("E", k), out, gnd, cs.g, m, gnd))
		}
	}
	parts = append(parts, testcircuit.R("RL", node("n", cs.n), gnd, 1e3))
	return testcircuit.New(parts...)
}

// h is the closed form: the product of the stage responses,
// g·sRC/(1 + sRC) or g/(1 + sRC) (common practice: non-loading stages
// multiply), kept as a mantissa and a power of ten so that gains past
// 10³⁰⁸ compare too.
func (cs cascade) h(s complex128) (complex128, float64) {
	h, e10 := complex(1, 0), 0.0
	for k := 0; k < cs.n; k++ {
		f := math.Pow(10, float64(k)*cs.spread)
		rc := complex(cs.r*f*cs.c/f, 0)
		st := complex(cs.g, 0) / (1 + s*rc)
		if cs.kinds[k%len(cs.kinds)] == 'h' {
			st *= s * rc
		}
		h *= st
		if a := cmplx.Abs(h); a > 0 {
			d := math.Floor(math.Log10(a))
			h /= complex(math.Pow(10, d), 0)
			e10 += d
		}
	}
	return h, e10
}

// pivotCascades are chains whose exact pivots lie many decades below
// their columns' entries (a gain of 10 to 100 per stage, 10 to 30
// stages, up to 10⁶⁰ end to end) or whose values span 10⁻¹⁵ Ω to 10¹³ Ω.
func pivotCascades() []cascade {
	var cs []cascade
	for _, n := range []int{3, 10, 20, 30} {
		for _, op := range []bool{false, true} {
			for _, g := range []float64{10, 100} {
				for _, k := range []string{"h", "l", "hl"} {
					cs = append(cs, cascade{n: n, opamp: op, kinds: k, r: 10e3, c: 10e-9, g: g})
				}
			}
		}
	}
	for _, n := range []int{10, 20} {
		cs = append(cs,
			cascade{n: n, kinds: "h", r: 1e-15, c: 1e11, g: 10},
			cascade{n: n, kinds: "hl", r: 1e13, c: 1e-17, g: 10},
			cascade{n: n, kinds: "hl", r: 1e-6, c: 1e2, g: 10, spread: 1},
			cascade{n: n, opamp: true, kinds: "h", r: 1e-3, c: 0.1, g: 100, spread: 1},
		)
	}
	return cs
}

// TestHighGainCascadesMatchClosedForm: both LU paths (dense and
// compressed columns), at 1 Hz … 1 MHz, give H(jω) of every pivot
// cascade to 1e-9 relative of the product of its stage responses; no
// point is judged singular (a pivot small beside its column is exact
// here: it is the chain's gain, not rounding).
func TestHighGainCascadesMatchClosedForm(t *testing.T) {
	for _, cs := range pivotCascades() {
		t.Run(cs.name(), func(t *testing.T) {
			sys := build(t, cs.circuit(), mna.Input{}, fmt.Sprint("n", cs.n), "")
			paths := map[string]*mna.Sweeper{"sparse": mna.NewSparseSweeper(sys), "dense": mna.NewDenseSweeper(sys)}
			for name, w := range paths {
				for _, fHz := range []float64{1, 100, 1e3, 1e4, 1e5, 1e6} {
					s := complex(0, 2*math.Pi*fHz)
					h, _, err := w.Eval(s)
					if err != nil {
						t.Fatalf("%s at %g Hz: %v", name, fHz, err)
					}
					want, e10 := cs.h(s)
					if e10 > 300 || e10 < -300 {
						continue // beyond float64: the sweep's own underflow/overflow rules
					}
					wv := want * complex(math.Pow(10, e10), 0)
					if relDiffC(h, wv) > 1e-9 {
						t.Errorf("%s at %g Hz: H = %v, closed form %v (rel %.2g)", name, fHz, h, wv, relDiffC(h, wv))
					}
				}
			}
		})
	}
}

// TestTankAtResonanceStaysSingular: the componentwise test still finds
// Y(s) singular where it is: a parallel LC tank (L·10^k, C·10^−k) driven
// by a current, at s = j/√(LC), is a pole on the jω axis on both paths
// (a *SingularError), and 10⁻⁴ off it the impedance is the closed form
// Z = 1/(sC + 1/(sL)) (common practice) to 1e-9.
func TestTankAtResonanceStaysSingular(t *testing.T) {
	gnd := netlist.Ground
	for _, k := range []int{-15, -9, -3, 0, 3, 9, 12} {
		f := math.Pow(10, float64(k))
		l, c := 10e-3*f, 10e-9/f
		circ := testcircuit.New(testcircuit.I("I1", "a", gnd, 1), testcircuit.L("L1", "a", gnd, l), testcircuit.C("C1", "a", gnd, c))
		sys := build(t, circ, mna.Input{}, "a", "")
		w0 := 1 / math.Sqrt(l*c)
		for name, w := range map[string]*mna.Sweeper{"sparse": mna.NewSparseSweeper(sys), "dense": mna.NewDenseSweeper(sys)} {
			if _, _, err := w.Eval(complex(0, w0)); err == nil {
				t.Errorf("k=%d %s: no error at resonance, want a singular system", k, name)
			}
			s := complex(0, w0*(1+1e-4))
			h, _, err := w.Eval(s)
			want := 1 / (s*complex(c, 0) + 1/(s*complex(l, 0)))
			if err != nil || relDiffC(h, want) > 1e-9 {
				t.Errorf("k=%d %s off resonance: %v (%v), want %v", k, name, h, err, want)
			}
		}
	}
}
