package variation

import (
	"container/heap"
	"math"
	"slices"
)

// The two-sided ±3σ points of a normal distribution as probabilities:
// Φ(−3) ≈ 0.00135 and Φ(3) ≈ 0.99865 (any table of the standard normal).
const (
	ProbLow3Sigma  = 0.00135
	ProbHigh3Sigma = 0.99865
)

// MaxRuns is the largest Monte Carlo run count MonteCarlo, Envelope and
// Verify accept: ten million runs pin the ±3σ points to a fraction of a
// percent of σ and take minutes to hours; more is never needed.
const MaxRuns = 10_000_000

// MaxHistogramSamples is how many values MetricStats.Samples keeps for
// histograms: those of the first successful runs in run-index order. A
// histogram of 100,000 values has the shape of the whole run to within
// the sampling noise of its bars, and the memory stays fixed however many
// runs are asked for.
const MaxHistogramSamples = 100_000

// MetricStats summarises the Monte Carlo values of one metric.
//
// Mean and Std are the sample mean and the sample standard deviation with
// the n − 1 (Bessel) denominator, accumulated in run order by Welford's
// method (B. P. Welford, Technometrics 4(3), 1962). Min and Max are exact.
// P00135 and P99865 are the 0.135 % and 99.865 % points (the ±3σ
// equivalents) by Percentile, exact: the runs' smallest and largest
// ⌈0.00135·runs⌉ + 3 values are kept (two bounded heaps), which is all the
// order statistics Percentile reads, so no value is estimated. Samples
// holds the values of the first successful runs, at most
// MaxHistogramSamples, in run-index order, for histograms. Values are in
// the metric's unit (dB, deg, Hz or a plain ratio for q). With no
// successful run every statistic is NaN.
//
// Memory per metric is bounded by 8·(0.0027·runs + MaxHistogramSamples)
// bytes plus a constant: about 1 MB at MaxRuns.
type MetricStats struct {
	Name                string
	Unit                string
	Nominal             float64
	Mean, Std, Min, Max float64
	P00135, P99865      float64
	Samples             []float64
}

// metricAccumulator gathers one metric's statistics online, values added
// in run order.
type metricAccumulator struct {
	n           int
	mean, m2    float64
	min, max    float64
	low         maxHeap // the kLow smallest values
	high        minHeap // the kHigh largest values
	kLow, kHigh int
	samples     []float64
}

// newMetricAccumulator prepares for at most runs values.
func newMetricAccumulator(runs int) *metricAccumulator {
	k := func(p float64) int { return int(math.Ceil(float64(max(0, runs-1))*p)) + 3 }
	return &metricAccumulator{min: math.Inf(1), max: math.Inf(-1), kLow: k(ProbLow3Sigma), kHigh: k(1 - ProbHigh3Sigma)}
}

// add records one value.
func (a *metricAccumulator) add(v float64) {
	a.n++
	d := v - a.mean
	a.mean += d / float64(a.n)
	a.m2 += d * (v - a.mean)
	a.min, a.max = math.Min(a.min, v), math.Max(a.max, v)
	if len(a.samples) < MaxHistogramSamples {
		a.samples = append(a.samples, v)
	}
	if len(a.low) < a.kLow {
		heap.Push(&a.low, v)
	} else if v < a.low[0] {
		a.low[0] = v
		heap.Fix(&a.low, 0)
	}
	if len(a.high) < a.kHigh {
		heap.Push(&a.high, v)
	} else if v > a.high[0] {
		a.high[0] = v
		heap.Fix(&a.high, 0)
	}
}

// stats returns the summary.
func (a *metricAccumulator) stats(name string, nominal float64) MetricStats {
	s := MetricStats{Name: name, Unit: metricUnit(name), Nominal: nominal, Samples: a.samples}
	if a.n == 0 {
		nan := math.NaN()
		s.Mean, s.Std, s.Min, s.Max, s.P00135, s.P99865 = nan, nan, nan, nan, nan, nan
		return s
	}
	s.Mean, s.Min, s.Max = a.mean, a.min, a.max
	if a.n > 1 {
		s.Std = math.Sqrt(a.m2 / float64(a.n-1))
	}
	low := slices.Sorted(slices.Values(a.low))
	high := slices.Sorted(slices.Values(a.high))
	offset := a.n - len(high) // high[j] is the (offset+j)-th smallest value
	s.P00135 = percentileAt(a.n, ProbLow3Sigma, func(j int) float64 { return low[j] })
	s.P99865 = percentileAt(a.n, ProbHigh3Sigma, func(j int) float64 { return high[j-offset] })
	return s
}

// summarise fills the statistics from samples in run order (not modified).
func summarise(name string, nominal float64, samples []float64) MetricStats {
	a := newMetricAccumulator(len(samples))
	for _, v := range samples {
		a.add(v)
	}
	return a.stats(name, nominal)
}

// Percentile returns the p-quantile (0 ≤ p ≤ 1) of the ascending sorted
// values by linear interpolation between order statistics, Hyndman and
// Fan's definition 7 ("Sample quantiles in statistical packages", The
// American Statistician 50(4), 1996): with h = (n − 1)·p,
// Q = x[⌊h⌋] + (h − ⌊h⌋)·(x[⌊h⌋+1] − x[⌊h⌋]) (0-based). With 1000 runs the
// 0.135 % point has h = 999·0.00135 ≈ 1.35, so it lies between the second
// and third smallest values (x[1] and x[2]). NaN for no values.
func Percentile(sorted []float64, p float64) float64 {
	return percentileAt(len(sorted), p, func(j int) float64 { return sorted[j] })
}

// percentileAt is Percentile over n sorted values read through at (only
// the two order statistics around (n − 1)·p are read).
func percentileAt(n int, p float64, at func(j int) float64) float64 {
	if n == 0 || math.IsNaN(p) {
		return math.NaN()
	}
	h := float64(n-1) * math.Min(1, math.Max(0, p))
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return at(n - 1)
	}
	if h == float64(lo) {
		return at(lo)
	}
	return at(lo) + (h-float64(lo))*(at(lo+1)-at(lo))
}

// minHeap and maxHeap are container/heap orders of float64 values.
type (
	minHeap []float64
	maxHeap []float64
)

func (h minHeap) Len() int           { return len(h) }
func (h minHeap) Less(i, j int) bool { return h[i] < h[j] }
func (h minHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *minHeap) Push(x any)        { *h = append(*h, x.(float64)) }
func (h *minHeap) Pop() any          { v := (*h)[len(*h)-1]; *h = (*h)[:len(*h)-1]; return v }
func (h maxHeap) Len() int           { return len(h) }
func (h maxHeap) Less(i, j int) bool { return h[i] > h[j] }
func (h maxHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *maxHeap) Push(x any)        { *h = append(*h, x.(float64)) }
func (h *maxHeap) Pop() any          { v := (*h)[len(*h)-1]; *h = (*h)[:len(*h)-1]; return v }
