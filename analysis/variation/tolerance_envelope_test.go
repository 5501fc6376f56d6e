package variation

import (
	"context"
	"math"
	"nodal/analysis/response"
	"testing"

	"nodal/mna"
)

func TestEnvelopeSharesMonteCarloRuns(t *testing.T) {
	c := tolLoad(t, tolRC)
	freqs := []float64{100, 1000, 10e3}
	opt := MonteCarloOptions{Runs: 500, Seed: 11}
	env, err := Envelope(context.Background(), c, mna.Input{}, mna.Output{Node: "out"}, freqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	mc := tolMonteCarlo(t, c, tolEvaluator(t, c, "out", "gain@100Hz", "gain@1kHz", "gain@10kHz", "phase@1kHz"), opt)
	// The same seed draws the same boards: the band at F is the Monte
	// Carlo range of gain@F (computed from H(jω) here and from the
	// extracted transfer function there, so equal to rounding, 1e-9 dB,
	// far inside the 0.15 dB spread another draw would show).
	for k := range freqs {
		m := mc.Metrics[k]
		if math.Abs(env.MinDB[k]-m.Min) > 1e-9 || math.Abs(env.MaxDB[k]-m.Max) > 1e-9 || math.Abs(env.NominalDB[k]-m.Nominal) > 1e-9 {
			t.Errorf("%g Hz: band %v..%v (nominal %v); Monte Carlo %v..%v (%v)", freqs[k], env.MinDB[k], env.MaxDB[k], env.NominalDB[k], m.Min, m.Max, m.Nominal)
		}
	}
	if p := mc.Metrics[3]; math.Abs(env.MinPhaseDeg[1]-p.Min) > 1e-9 || math.Abs(env.MaxPhaseDeg[1]-p.Max) > 1e-9 {
		t.Errorf("phase band %v..%v; Monte Carlo %v..%v", env.MinPhaseDeg[1], env.MaxPhaseDeg[1], p.Min, p.Max)
	}
	// Nominal: −3.0103 dB and −45° at fc ≈ 1 kHz (closed form of 1/(1 + jf/fc),
	// the first-order low-pass; common practice).
	fc := 1 / (2 * math.Pi * 10e3 * 15.9155e-9)
	if !tolRel(env.NominalDB[1], -10*math.Log10(1+math.Pow(1000/fc, 2)), 1e-12) || !tolRel(env.NominalPhaseDeg[1], -math.Atan(1000/fc)*180/math.Pi, 1e-12) {
		t.Errorf("nominal %v dB %v°", env.NominalDB[1], env.NominalPhaseDeg[1])
	}
	if env.Finished != 500 || env.Failed != 0 || env.Cancelled {
		t.Errorf("finished %d failed %d cancelled %v", env.Finished, env.Failed, env.Cancelled)
	}
	one, err := Envelope(context.Background(), c, mna.Input{}, mna.Output{Node: "out"}, freqs, MonteCarloOptions{Runs: 500, Seed: 11, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	for k := range freqs {
		if one.MinDB[k] != env.MinDB[k] || one.MaxPhaseDeg[k] != env.MaxPhaseDeg[k] {
			t.Errorf("%g Hz: one worker gives another band", freqs[k])
		}
	}
	if _, err := Envelope(context.Background(), c, mna.Input{}, mna.Output{Node: "out"}, nil, opt); err == nil {
		t.Error("no frequencies accepted")
	}
}

// BenchmarkEnvelope6thOrder10k times 10 000 Monte Carlo runs of the
// 6th-order filter (tol6thOrder), each swept over 200 frequencies, on all
// cores: one op is the whole analysis.
func BenchmarkEnvelope6thOrder10k(b *testing.B) {
	c := tolLoad(b, tol6thOrder)
	freqs := response.LogGrid(10, 100e3, 50)
	if len(freqs) != 201 {
		b.Fatalf("%d frequencies", len(freqs))
	}
	for b.Loop() {
		res, err := Envelope(context.Background(), c, mna.Input{}, mna.Output{Node: "out"}, freqs, MonteCarloOptions{Runs: 10000, Seed: 1})
		if err != nil || res.Failed != 0 {
			b.Fatal(err, res.Failed)
		}
	}
}

// TestEnvelopeRestampMatchesBuild checks that a worker's restamped system
// sweeps each draw exactly as the system built for it does (the same G
// and C bit for bit, TestRestampMatchesBuild in mna, and the same pivots
// whatever the worker swept before), on the 6th-order filter (17
// unknowns: the compressed-column solver) and the RC low-pass.
func TestEnvelopeRestampMatchesBuild(t *testing.T) {
	freqs := response.LogGrid(10, 100e3, 10)
	for _, src := range []string{tol6thOrder, tolRC} {
		c := tolLoad(t, src)
		in, out := mna.Input{}, mna.Output{Node: "out"}
		sws := newRestampedSweepers(c, in, out, 1)
		if sws == nil {
			t.Fatal("no restamper")
		}
		ws := NewWorkspaces(c, 1)
		n := len(freqs)
		a, b := make([]float64, n), make([]float64, n)
		pa, pb := make([]float64, n), make([]float64, n)
		for i := 0; i < 50; i++ {
			drawFactors(c.Variations, 7, i, ws.Factors(0))
			vc, err := ws.Vary(0)
			if err != nil {
				t.Fatal(err)
			}
			sw := sws.restamp(0, vc)
			if sw == nil {
				t.Fatalf("draw %d: not restamped", i)
			}
			if err := sweepCurve(sw, freqs, a, pa); err != nil {
				t.Fatal(err)
			}
			if err := bodeCurve(vc, in, out, freqs, b, pb); err != nil {
				t.Fatal(err)
			}
			for k := range freqs {
				if a[k] != b[k] || pa[k] != pb[k] {
					t.Fatalf("draw %d, %g Hz: restamped %v dB %v°, built %v dB %v°", i, freqs[k], a[k], pa[k], b[k], pb[k])
				}
			}
		}
	}
}
