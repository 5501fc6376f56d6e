package variation

import (
	"math"
	"strings"
	"testing"

	"nodal/analysis/noise"
	"nodal/mna"
)

// TestNoiseMetrics evaluates noise@F and noise_rms@F1..F2 through the
// metric evaluator of tolerance runs: the divider's density is
// √(4kT·R1R2/(R1+R2)) (Thévenin; common practice) and the RC low-pass's
// RMS over a band is √(kT/C·(2/π)·(atan(F2/fc) − atan(F1/fc))) (the kT/C
// result, Johnson 1928 and Nyquist 1928), at 300 K. A current output is
// refused for these metrics.
func TestNoiseMetrics(t *testing.T) {
	const kT = noise.BoltzmannJPerK * noise.DefaultTempK
	c := tolLoad(t, "V1: voltage source (in, gnd)\nR1: resistor (in, out) 10k ±1%\nR2: resistor (out, gnd) 2.2k\nC1: capacitor (out, gnd) 10n\n")
	rp := 10e3 * 2.2e3 / 12.2e3
	fc := 1 / (2 * math.Pi * rp * 10e-9)
	ev, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Node: "out"}, []string{"noise@10Hz", "noise_rms@100Hz..1MHz", "gain@10Hz"})
	if err != nil {
		t.Fatal(err)
	}
	got, err := ev.Eval(c)
	if err != nil {
		t.Fatal(err)
	}
	density := math.Sqrt(4*kT*rp) / math.Sqrt(1+math.Pow(10/fc, 2))
	rms := math.Sqrt(kT / 10e-9 * 2 / math.Pi * (math.Atan(1e6/fc) - math.Atan(100/fc)))
	gain := 20 * math.Log10(2.2/12.2/math.Sqrt(1+math.Pow(10/fc, 2)))
	for i, want := range []float64{density, rms, gain} {
		if !tolRel(got[i], want, 1e-5) {
			t.Errorf("%s = %.8g; want %.8g", ev.Metrics()[i], got[i], want)
		}
	}
	if _, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "R2"}, []string{"noise@1kHz"}); err == nil || !strings.Contains(err.Error(), "current") {
		t.Errorf("current output: %v", err)
	}
}
