package variation

import (
	"context"
	"os"
	"runtime"
	"testing"
)

// BenchmarkMonteCarloLogger times 10 000 Monte Carlo runs of one metric
// on the 7-part vibration-logger anti-alias filter (testdata/examples/
// logger_antialias.nodal), the whole analysis per op on 2 workers, and
// reports ns/run and the bytes allocated per run (B/run). The metrics are
// those testdata/perf/mc_logger.py computes with numpy.
func BenchmarkMonteCarloLogger(b *testing.B) {
	src, err := os.ReadFile("../../testdata/examples/logger_antialias.nodal")
	if err != nil {
		b.Fatal(err)
	}
	c := tolLoad(b, string(src))
	for _, metric := range []string{"f3db", "f0", "q", "peak", "noise@1kHz", "noise_rms@10Hz..20kHz"} {
		b.Run(metric, func(b *testing.B) {
			ev := tolEvaluator(b, c, "out", metric)
			if ev.direct == nil {
				b.Fatal("no direct path")
			}
			const runs = 10000
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			for b.Loop() {
				res, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: runs, Seed: 1, Workers: 2})
				if err != nil || res.Failed != 0 {
					b.Fatal(err, res.Failed)
				}
			}
			runtime.ReadMemStats(&after)
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/runs, "ns/run")
			b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/runs, "B/run")
		})
	}
}
