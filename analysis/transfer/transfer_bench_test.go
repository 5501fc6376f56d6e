package transfer

import (
	"math"
	"testing"

	"nodal/mna"
)

// sixthOrderCascade stamps three unity-gain Sallen-Key low-pass sections
// in cascade (a 6th-order Butterworth-like filter; 19 unknowns), the size
// Monte Carlo runs use.
func sixthOrderCascade() *mna.System {
	st := newStamper().V("in", "0")
	prev := "in"
	qs := []float64{0.5176, 0.7071, 1.9319}
	for i, q := range qs {
		a, b, o := "a"+string(rune('1'+i)), "b"+string(rune('1'+i)), "o"+string(rune('1'+i))
		const r, c2 = 10e3, 10e-9
		st.R(prev, a, r).R(a, b, r).C(a, o, 4*q*q*c2).C(b, "0", c2).Amp(b, o, o, math.Inf(1))
		prev = o
	}
	return st.Out(prev, "0").System()
}

func BenchmarkExtractSixthOrder(b *testing.B) {
	sys := sixthOrderCascade()
	if tf, err := Extract(sys); err != nil || tf.Order() != 6 {
		b.Fatalf("Extract: %v, %+v", err, tf)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Extract(sys); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkExtractLadder10(b *testing.B) {
	sys := ladder10()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Extract(sys); err != nil {
			b.Fatal(err)
		}
	}
}
