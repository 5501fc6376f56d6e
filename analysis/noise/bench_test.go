package noise

import (
	"context"
	"fmt"
	"math"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// benchCircuit is a three-stage front end with 40 unknowns, 30 resistors
// and 3 noisy opamps: RC ladders of 9, 9 and 8 sections, two
// non-inverting gain stages and a follower, coupled by inductors.
func benchCircuit() *netlist.Circuit {
	var parts []netlist.Part
	parts = append(parts, testcircuit.V("V1", "in", "gnd", 1))
	from := "in"
	for st, sections := range []int{9, 9, 8} {
		for k := 0; k < sections; k++ {
			to := fmt.Sprintf("s%d_%d", st, k)
			parts = append(parts, testcircuit.R(fmt.Sprintf("R%d_%d", st, k), from, to, 1e3*float64(k+1)),
				testcircuit.C(fmt.Sprintf("C%d_%d", st, k), to, "gnd", 1e-9*float64(st+1)))
			from = to
		}
		out := fmt.Sprintf("o%d", st)
		minus := out
		if st < 2 {
			minus = fmt.Sprintf("m%d", st)
			parts = append(parts, testcircuit.R(fmt.Sprintf("Rg%d", st), minus, "gnd", 1e3),
				testcircuit.R(fmt.Sprintf("Rf%d", st), out, minus, 4.7e3))
		}
		u := testcircuit.OpAmp(fmt.Sprintf("U%d", st), from, minus, out, 1e5, 10e6, 0)
		u.EnVPerRtHz, u.InAPerRtHz, u.FenHz, u.FinHz = 5e-9, 1e-12, 100, 1e3
		parts = append(parts, u)
		if st < 2 {
			q := fmt.Sprintf("q%d", st)
			parts = append(parts, testcircuit.L(fmt.Sprintf("L%d", st), out, q, 1e-3))
			from = q
		}
	}
	return testcircuit.New(parts...)
}

func benchFreqs() []float64 {
	f := make([]float64, 1000)
	for i := range f {
		f[i] = 10 * math.Pow(1e6/10, float64(i)/999)
	}
	return f
}

// TestBenchCircuitSize keeps the benchmark circuit what it claims.
func TestBenchCircuitSize(t *testing.T) {
	c := benchCircuit()
	m, err := mna.BuildMatrices(c)
	if err != nil {
		t.Fatal(err)
	}
	a := analyzer(t, c, Config{Out: node("o2"), HasInput: true})
	if m.Size() != 40 || len(a.Sources) != 30+3*3 {
		t.Errorf("%d unknowns, %d sources; want 40 and 39 (30 resistors, 3 opamps × 3)", m.Size(), len(a.Sources))
	}
}

// BenchmarkNoise1000 is the noise spectrum (every source's contribution,
// the total and the input-referred density) at 1000 frequencies.
func BenchmarkNoise1000(b *testing.B) {
	c, freqs := benchCircuit(), benchFreqs()
	a, err := New(c, Config{Out: node("o2"), HasInput: true, TempK: 300})
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := a.Spectrum(context.Background(), freqs); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSweep1000 is what a 1000-point sweep of the same circuit does
// per point (mna.Sweeper: H and its exact derivative, as `nodal sweep`
// evaluates them), on one goroutine like the noise spectrum.
func BenchmarkSweep1000(b *testing.B) {
	c, freqs := benchCircuit(), benchFreqs()
	sys, err := mna.Build(c, mna.Input{Source: "V1"}, node("o2"))
	if err != nil {
		b.Fatal(err)
	}
	w := mna.NewSweeper(sys)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, f := range freqs {
			if _, _, err := w.Eval(complex(0, 2*math.Pi*f)); err != nil {
				b.Fatal(err)
			}
		}
	}
}
