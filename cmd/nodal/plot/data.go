package plot

import (
	"fmt"
	"math"
	"sort"
)

// finite reports whether v is neither NaN nor infinite.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// checkFreqs validates a frequency grid: at least two points, all finite
// and positive, strictly increasing.
func checkFreqs(what string, fHz []float64) error {
	if len(fHz) < 2 {
		return fmt.Errorf("plot: %s: need at least 2 frequency points, have %d", what, len(fHz))
	}
	for i, f := range fHz {
		if !finite(f) || f <= 0 {
			return fmt.Errorf("plot: %s: frequency %d is %g Hz; frequencies must be positive and finite", what, i, f)
		}
		if i > 0 && f <= fHz[i-1] {
			return fmt.Errorf("plot: %s: frequencies must increase, but point %d (%g Hz) follows %g Hz", what, i, f, fHz[i-1])
		}
	}
	return nil
}

// checkLen reports a length mismatch between x and a y column.
func checkLen(what, col string, nx, ny int) error {
	if nx != ny {
		return fmt.Errorf("plot: %s: %d %s values for %d points", what, ny, col, nx)
	}
	return nil
}

// pairs zips x and y into points, leaving out pairs with a non-finite y
// (a transmission zero on the grid gives −Inf dB; it cannot be drawn).
func pairs(x, y []float64) [][2]float64 {
	pts := make([][2]float64, 0, len(x))
	for i := range x {
		if finite(y[i]) {
			pts = append(pts, [2]float64{x[i], y[i]})
		}
	}
	return pts
}

// yRange returns the min and max y of pts (±Inf for none).
func yRange(pts ...[][2]float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, ps := range pts {
		for _, p := range ps {
			lo, hi = math.Min(lo, p[1]), math.Max(hi, p[1])
		}
	}
	return lo, hi
}

// interpLogX interpolates y at x on a curve sampled at increasing xs,
// linearly in log x (the Bode grid is logarithmic). Outside the grid it
// returns NaN.
func interpLogX(xs, ys []float64, x float64) float64 { return interp(xs, ys, x, math.Log) }

// interpLinX interpolates y at x on a curve sampled at increasing xs,
// linearly. Outside the grid it returns NaN.
func interpLinX(xs, ys []float64, x float64) float64 {
	return interp(xs, ys, x, func(v float64) float64 { return v })
}

// interp interpolates linearly in tr(x).
func interp(xs, ys []float64, x float64, tr func(float64) float64) float64 {
	i := sort.SearchFloat64s(xs, x)
	switch {
	case i < len(xs) && xs[i] == x:
		return ys[i]
	case i == 0 || i == len(xs):
		return math.NaN()
	}
	t := (tr(x) - tr(xs[i-1])) / (tr(xs[i]) - tr(xs[i-1]))
	return ys[i-1] + t*(ys[i]-ys[i-1])
}

// padRange widens [lo, hi] by frac of its span on both sides (or by a
// unit-ish amount when the span is zero).
func padRange(lo, hi, frac float64) (float64, float64) {
	span := hi - lo
	if span <= 0 {
		span = math.Max(math.Abs(lo), 1)
	}
	return lo - frac*span, hi + frac*span
}
