package stability

import (
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"testing"

	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// load reads a circuit of testdata/circuits with optional overrides.
func load(t *testing.T, name string, ov netlist.Overrides) *netlist.Circuit {
	t.Helper()
	return testcircuit.Load(t, filepath.Join("testdata", "circuits", name), ov)
}

func TestAnalyzeCircuits(t *testing.T) {
	wt := 2 * math.Pi * 1e6
	tests := []struct {
		file      string
		ov        netlist.Overrides
		class     Class
		offending []complex128 // rad/s, nil: none
		involved  []string
		polarity  []string
		src       string
	}{
		// a(s)·β = 1 with β = 1/11: s = ωt/11 − ωt/A0 (closed form).
		{file: "swapped_inverting.nodal", class: Unstable, offending: []complex128{complex(wt/11-wt/1e5, 0)}, involved: []string{"U1"}, src: "closed form"},
		{file: "inverting_gbw.nodal", class: Stable, src: "closed form: s = −ωt/11 − ωt/A0"},
		{file: "swapped_ideal.nodal", class: Stable, polarity: []string{"U1"}, src: "no energy store: no natural frequency"},
		// ±j/√(LC) (common practice).
		{file: "pickup_tank.nodal", class: Marginal, offending: []complex128{complex(0, 1e5), complex(0, -1e5)}, src: "common practice"},
		// Wien: K = 3 oscillates at 1/(RC) (common practice).
		{file: "wien_oscillator.nodal", class: Marginal, offending: []complex128{complex(0, 1e4), complex(0, -1e4)}, involved: []string{"E1"}, src: "common practice"},
		// K = 3.5: s² − (K−3)/(RC)·s + 1/(RC)² = 0 (from the Wien loop equation).
		{file: "wien_oscillator.nodal", ov: netlist.Overrides{"K": 3.5}, class: Unstable,
			offending: []complex128{complex(2500, math.Sqrt(1e8-2500*2500)), complex(2500, -math.Sqrt(1e8-2500*2500))}, involved: []string{"E1"}, src: "Wien loop equation"},
		{file: "wien_oscillator.nodal", ov: netlist.Overrides{"K": 2.5}, class: Stable, src: "Wien loop equation"},
		// 1/(RC)² /s²: a double frequency at 0.
		{file: "double_integrator.nodal", class: Unstable, offending: []complex128{0, 0}, src: "common practice"},
		{file: "sallen_key_ideal.nodal", class: Stable, src: "common practice"},
		// A repeated frequency on the axis with as many independent modes
		// as its multiplicity gives bounded responses; only a Jordan chain
		// (t·e^(s0·t)) grows (common practice).
		{file: "capacitive_divider.nodal", class: Marginal, offending: []complex128{0, 0}, src: "two floating nodes: G zero on both"},
		{file: "twin_tanks.nodal", class: Marginal, offending: []complex128{complex(0, 1e5), complex(0, 1e5), complex(0, -1e5), complex(0, -1e5)}, src: "common practice"},
		{file: "driven_twin_tank.nodal", class: Unstable, offending: []complex128{complex(0, 1e5), complex(0, 1e5), complex(0, -1e5), complex(0, -1e5)}, involved: []string{"G1"}, src: "resonant drive: t·sin(ω0·t)"},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			c := load(t, tt.file, tt.ov)
			res, err := Analyze(c, Options{Explain: true})
			if err != nil {
				t.Fatal(err)
			}
			if res.Class != tt.class {
				t.Fatalf("class %v, want %v (%s); natural %v", res.Class, tt.class, tt.src, res.Natural)
			}
			if len(res.Offending) != len(tt.offending) {
				t.Fatalf("offending %v, want %v (%s)", res.Offending, tt.offending, tt.src)
			}
			for i, want := range tt.offending {
				got := res.Offending[i]
				if cmplx.Abs(got-want) > 1e-6*math.Max(cmplx.Abs(want), 1) {
					t.Errorf("offending[%d] = %v, want %v (%s)", i, got, want, tt.src)
				}
			}
			if !equalStrings(res.Involved, tt.involved) {
				t.Errorf("involved %v, want %v", res.Involved, tt.involved)
			}
			if !equalStrings(res.Polarity, tt.polarity) {
				t.Errorf("polarity %v, want %v", res.Polarity, tt.polarity)
			}
		})
	}
}

func equalStrings(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// BenchmarkAnalyze is the stability of the tone stage (five natural
// frequencies) with its explanation, as every command computes it once.
func BenchmarkAnalyze(b *testing.B) {
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", "tone_stage.nodal"))
	if err != nil {
		b.Fatal(err)
	}
	c, err := netlist.Load("tone_stage.nodal", src, nil)
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Analyze(c, Options{Explain: true}); err != nil {
			b.Fatal(err)
		}
	}
}
