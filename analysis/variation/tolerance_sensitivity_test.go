package variation

import (
	"context"
	"math"
	"strings"
	"testing"
)

// tolSallenKey is a unity-gain Sallen-Key low-pass on an ideal op-amp:
// H(s) = 1/(s²·R1R2C1C2 + s·C2(R1 + R2) + 1) (Sedra & Smith,
// Microelectronic Circuits, active filters chapter), so
// ω0 = 1/√(R1R2C1C2) and Q = √(R1R2C1C2)/(C2(R1 + R2)).
// Here f0 ≈ 1073 Hz and Q ≈ 0.927.
const tolSallenKey = `
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 10k ±1%
R2: resistor (a, b) 22k ±1%
C1: capacitor (a, out) 20nF ±5%
C2: capacitor (b, gnd) 5nF ±5%
U1: opamp (b, out, out)
`

func tolSensitivity(t *testing.T, src, out string, metrics ...string) *SensitivityResult {
	t.Helper()
	c := tolLoad(t, src)
	res, err := Sensitivity(context.Background(), c, tolEvaluator(t, c, out, metrics...), SensitivityOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestSensitivitySallenKey(t *testing.T) {
	res := tolSensitivity(t, tolSallenKey, "out", "f0", "q")
	r1, r2 := 10e3, 22e3
	// Normalised sensitivities (∂M/M)/(∂x/x) from the closed forms above:
	// ω0 ∝ (R1R2C1C2)^(−1/2) gives −½ for every R and C (Sedra & Smith);
	// differentiating ln Q = ½ ln(R1R2C1C2) − ln C2 − ln(R1 + R2) gives
	// S_R1 = ½ − R1/(R1+R2) = (R2 − R1)/(2(R1 + R2)), S_R2 = (R1 − R2)/(2(R1 + R2)),
	// S_C1 = ½, S_C2 = −½ (derived here from Q above).
	want := map[string]map[string]float64{
		"f0": {"R1": -0.5, "R2": -0.5, "C1": -0.5, "C2": -0.5},
		"q":  {"R1": (r2 - r1) / (2 * (r1 + r2)), "R2": (r1 - r2) / (2 * (r1 + r2)), "C1": 0.5, "C2": -0.5},
	}
	for _, m := range res.Metrics {
		if m.Unit != "%/%" || len(m.Items) != 4 {
			t.Fatalf("%s: unit %q, %d items", m.Metric, m.Unit, len(m.Items))
		}
		for k, it := range m.Items {
			if w := want[m.Metric][it.Item]; math.Abs(it.Value-w) > 1e-6 {
				t.Errorf("S(%s, %s) = %.9f; want %.9f", m.Metric, it.Item, it.Value, w)
			}
			if k > 0 && math.Abs(it.Value) > math.Abs(m.Items[k-1].Value) {
				t.Errorf("%s: not sorted by magnitude: %+v", m.Metric, m.Items)
			}
		}
	}
	if q := res.Metrics[1]; q.Items[0].Item != "C1" && q.Items[0].Item != "C2" {
		t.Errorf("q: largest sensitivity %s; want a capacitor (|½|)", q.Items[0].Item)
	}
}

func TestSensitivityDecibel(t *testing.T) {
	// Divider gain G = 20·log10(R2/(R1 + R2)): ∂G/∂(x/x0) is
	// −(20/ln 10)·R1/(R1 + R2) for R1 and +(20/ln 10)·R1/(R1 + R2) for R2
	// (differentiating the divider's closed form; common practice); per %
	// that is divided by 100.
	res := tolSensitivity(t, `
Vin: voltage source (in, gnd) 1
R1: resistor (in, out) 30k ±1%
R2: resistor (out, gnd) 10k ±1%
`, "out", "dc", "gain@1kHz")
	w := 20 / math.Ln10 * 30.0 / 40 / 100
	for _, m := range res.Metrics {
		if m.Unit != "dB/%" {
			t.Errorf("%s: unit %q; want dB/%%", m.Metric, m.Unit)
		}
		for _, it := range m.Items {
			want := w
			if it.Item == "R1" {
				want = -w
			}
			if math.Abs(it.Value-want) > 1e-8 {
				t.Errorf("%s per %% of %s = %v dB; want %v", m.Metric, it.Item, it.Value, want)
			}
		}
	}
}

func TestWorstCaseRC(t *testing.T) {
	c := tolLoad(t, tolRC)
	ev := tolEvaluator(t, c, "out", "f3db")
	const r, cv, tol = 10e3, 15.9155e-9, 0.01
	// Closed form: f3db = 1/(2πRC) (first-order RC low-pass; Sedra & Smith,
	// Microelectronic Circuits, STC networks; from memory) is extreme at R
	// and C both high (min) and both low (max).
	lo := 1 / (2 * math.Pi * r * (1 + tol) * cv * (1 + tol))
	hi := 1 / (2 * math.Pi * r * (1 - tol) * cv * (1 - tol))
	for _, limit := range []int{0, 1} { // exhaustive, then from sensitivity signs
		res, err := WorstCase(context.Background(), c, ev, WorstCaseOptions{MaxExhaustive: limit})
		if err != nil {
			t.Fatal(err)
		}
		m := res.Metrics[0]
		if res.Exhaustive != (limit == 0) || (limit == 0 && res.Corners != 4) || (limit == 1 && res.Corners != 2) {
			t.Errorf("limit %d: exhaustive %v corners %d", limit, res.Exhaustive, res.Corners)
		}
		if math.Abs(m.Min/lo-1) > 1e-9 || math.Abs(m.Max/hi-1) > 1e-9 {
			t.Errorf("limit %d: f3db %v..%v; want %v..%v", limit, m.Min, m.Max, lo, hi)
		}
		if len(m.MinCorner.High) != 2 || len(m.MinCorner.Low) != 0 || len(m.MaxCorner.Low) != 2 || len(m.MaxCorner.High) != 0 {
			t.Errorf("limit %d: corners min %+v max %+v", limit, m.MinCorner, m.MaxCorner)
		}
	}
}

func TestWorstCaseSallenKeyQ(t *testing.T) {
	// Q = √(R1R2C1C2)/(C2(R1+R2)) (unity-gain Sallen-Key low-pass; Sallen &
	// Key, IRE Trans. Circuit Theory, 1955; from memory) rises with C1 and
	// falls with C2; with R1 < R2 it rises with R1 and falls with R2 (signs
	// of the partial derivatives of that closed form; common practice), so
	// the max corner is R1, C1 high, R2, C2 low.
	c := tolLoad(t, tolSallenKey)
	res, err := WorstCase(context.Background(), c, tolEvaluator(t, c, "out", "q"), WorstCaseOptions{})
	if err != nil {
		t.Fatal(err)
	}
	q := func(r1, r2, c1, c2 float64) float64 { return math.Sqrt(r1*r2*c1*c2) / (c2 * (r1 + r2)) }
	wantMax := q(10e3*1.01, 22e3*0.99, 20e-9*1.05, 5e-9*0.95)
	wantMin := q(10e3*0.99, 22e3*1.01, 20e-9*0.95, 5e-9*1.05)
	m := res.Metrics[0]
	if res.Corners != 16 || math.Abs(m.Max/wantMax-1) > 1e-9 || math.Abs(m.Min/wantMin-1) > 1e-9 {
		t.Errorf("corners %d, q %v..%v; want %v..%v", res.Corners, m.Min, m.Max, wantMin, wantMax)
	}
	if got := m.MaxCorner; len(got.High) != 2 || got.High[0] != "R1" || got.High[1] != "C1" {
		t.Errorf("max corner %+v; want R1, C1 high", got)
	}
}

func TestWorstCaseCornersNameOnlyItemsThatMatter(t *testing.T) {
	// An ideal op-amp buffer after the RC: the load RL on its output does
	// not change v(out)/v(Vs) = 1/(1 + sRC) (an ideal voltage source output;
	// common practice), so the f3db corners name R1 and C1 only, both for
	// the full search and for the sensitivity-sign search.
	c := tolLoad(t, "Vs: voltage source (in, gnd) 1\nR1: resistor (in, a) 10k ±1%\nC1: capacitor (a, gnd) 15.9155nF ±1%\n"+
		"U1: opamp (a, out, out)\nRL: resistor (out, gnd) 1k ±5%\n")
	ev := tolEvaluator(t, c, "out", "f3db")
	for _, limit := range []int{0, 1} {
		res, err := WorstCase(context.Background(), c, ev, WorstCaseOptions{MaxExhaustive: limit})
		if err != nil {
			t.Fatal(err)
		}
		m := res.Metrics[0]
		for _, corner := range []ToleranceCorner{m.MinCorner, m.MaxCorner} {
			names := append(append([]string{}, corner.High...), corner.Low...)
			if len(names) != 2 || strings.Contains(strings.Join(names, " "), "RL") {
				t.Errorf("limit %d: corner %+v; want R1 and C1 only", limit, corner)
			}
		}
	}
}
