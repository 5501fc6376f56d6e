package variation

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/stat"
)

// The two-sided ±3σ points of a normal distribution as probabilities:
// Φ(−3) ≈ 0.00135 and Φ(3) ≈ 0.99865 (any table of the standard normal).
const (
	ProbLow3Sigma  = 0.00135
	ProbHigh3Sigma = 0.99865
)

// MetricStats summarises the Monte Carlo values of one metric.
//
// Mean and Std are the sample mean and the sample standard deviation with
// the n − 1 (Bessel) denominator; P00135 and P99865 are the 0.135 % and
// 99.865 % points (the ±3σ equivalents) by Percentile. Samples holds the
// value of every successful run in run-index order, for histograms. Values
// are in the metric's unit (dB, deg, Hz or a plain ratio for q). With no
// successful run every statistic is NaN.
type MetricStats struct {
	Name                string
	Unit                string
	Nominal             float64
	Mean, Std, Min, Max float64
	P00135, P99865      float64
	Samples             []float64
}

// summarise fills the statistics from samples (not modified).
func summarise(name string, nominal float64, samples []float64) MetricStats {
	s := MetricStats{Name: name, Unit: metricUnit(name), Nominal: nominal, Samples: samples}
	if len(samples) == 0 {
		nan := math.NaN()
		s.Mean, s.Std, s.Min, s.Max, s.P00135, s.P99865 = nan, nan, nan, nan, nan, nan
		return s
	}
	s.Mean = stat.Mean(samples, nil)
	s.Std = 0
	if len(samples) > 1 {
		s.Std = stat.StdDev(samples, nil)
	}
	sorted := slices.Clone(samples)
	slices.Sort(sorted)
	s.Min, s.Max = sorted[0], sorted[len(sorted)-1]
	s.P00135 = Percentile(sorted, ProbLow3Sigma)
	s.P99865 = Percentile(sorted, ProbHigh3Sigma)
	return s
}

// Percentile returns the p-quantile (0 ≤ p ≤ 1) of the ascending sorted
// values by linear interpolation between order statistics, Hyndman and
// Fan's definition 7 ("Sample quantiles in statistical packages", The
// American Statistician 50(4), 1996): with h = (n − 1)·p,
// Q = x[⌊h⌋] + (h − ⌊h⌋)·(x[⌊h⌋+1] − x[⌊h⌋]) (0-based). With 1000 runs the
// 0.135 % point has h = 999·0.00135 ≈ 1.35, so it lies between the second
// and third smallest values (x[1] and x[2]). NaN for no values.
func Percentile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 || math.IsNaN(p) {
		return math.NaN()
	}
	h := float64(n-1) * math.Min(1, math.Max(0, p))
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return sorted[n-1]
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo])
}
