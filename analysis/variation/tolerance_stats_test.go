package variation

import (
	"context"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// TestAccumulatorMatchesSortedStatistics checks the online statistics
// against the whole sorted sample: the ±3σ points by Percentile
// (Hyndman–Fan type 7) exactly, mean and standard deviation against
// gonum's two-pass formulas, for samples shorter than the run count (as
// after failed runs) and as long.
func TestAccumulatorMatchesSortedStatistics(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 9))
	for _, tc := range []struct{ runs, n int }{{1, 1}, {2, 2}, {10, 7}, {1000, 1000}, {5000, 4321}, {250000, 250000}} {
		x := make([]float64, tc.n)
		for i := range x {
			x[i] = 100 + 5*rng.NormFloat64()
		}
		a := newMetricAccumulator(tc.runs)
		for _, v := range x {
			a.add(v)
		}
		s := a.stats("f3db", 100)
		sorted := slices.Sorted(slices.Values(x))
		if s.P00135 != Percentile(sorted, ProbLow3Sigma) || s.P99865 != Percentile(sorted, ProbHigh3Sigma) {
			t.Errorf("runs %d n %d: ±3σ points %v %v; sorted %v %v", tc.runs, tc.n, s.P00135, s.P99865, Percentile(sorted, ProbLow3Sigma), Percentile(sorted, ProbHigh3Sigma))
		}
		if s.Min != sorted[0] || s.Max != sorted[tc.n-1] {
			t.Errorf("runs %d: min/max %v %v", tc.runs, s.Min, s.Max)
		}
		if d := math.Abs(s.Mean - stat.Mean(x, nil)); d > 1e-12*100 {
			t.Errorf("runs %d: mean %v vs %v", tc.runs, s.Mean, stat.Mean(x, nil))
		}
		if tc.n > 1 {
			if d := math.Abs(s.Std - stat.StdDev(x, nil)); d > 1e-9 {
				t.Errorf("runs %d: std %v vs %v", tc.runs, s.Std, stat.StdDev(x, nil))
			}
		}
		if len(s.Samples) != min(tc.n, MaxHistogramSamples) || s.Samples[0] != x[0] {
			t.Errorf("runs %d: %d histogram samples", tc.runs, len(s.Samples))
		}
		if len(a.low) > a.kLow || len(a.high) > a.kHigh || a.kLow > tc.runs/500+4 {
			t.Errorf("runs %d: tails of %d and %d values kept", tc.runs, len(a.low), len(a.high))
		}
	}
}

func TestMonteCarloRunsCap(t *testing.T) {
	c := tolLoad(t, tolRC)
	ev := tolEvaluator(t, c, "out", "f3db")
	for _, runs := range []int{MaxRuns + 1, 1 << 62} {
		_, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: runs})
		if err == nil || !strings.Contains(err.Error(), "maximum of 10000000") {
			t.Errorf("%d runs: %v; want the maximum named", runs, err)
		}
	}
}

// BenchmarkMonteCarloBytesPerRun reports the memory Monte Carlo allocates
// per run (B/run, all allocations, most garbage collected at once) and the
// heap left in use at the end per run (live_B/run): the second falls as the
// run count grows, because nothing is kept per run beyond the bounded tails
// and histogram sample.
func BenchmarkMonteCarloBytesPerRun(b *testing.B) {
	c := tolLoad(b, tolRC)
	ev := tolEvaluator(b, c, "out", "f3db")
	for _, runs := range []int{1000, 200000} {
		b.Run("runs="+strconv.Itoa(runs), func(b *testing.B) {
			var before, after runtime.MemStats
			var total, live float64
			for b.Loop() {
				runtime.GC()
				runtime.ReadMemStats(&before)
				res, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: runs, Seed: 1})
				if err != nil {
					b.Fatal(err)
				}
				runtime.GC()
				runtime.ReadMemStats(&after)
				runtime.KeepAlive(res)
				total += float64(after.TotalAlloc - before.TotalAlloc)
				live += float64(after.HeapAlloc) - float64(before.HeapAlloc)
			}
			b.ReportMetric(total/float64(b.N)/float64(runs), "B/run")
			b.ReportMetric(live/float64(b.N)/float64(runs), "live_B/run")
		})
	}
}
