package loop

import (
	"errors"
	"math"
	"math/cmplx"
	"slices"

	"nodal/analysis/transfer"
)

// magLog returns ln|T(jω)|, from the factored form (EvalFactored).
func magLog(t *transfer.TransferFunction, omega float64) float64 {
	return math.Log(cmplx.Abs(t.EvalFactored(complex(0, omega))))
}

// GainCrossover is one frequency where |T| = 1.
type GainCrossover struct {
	FreqHz         float64
	PhaseDeg       float64 // arg T there, unwrapped from low frequency
	PhaseMarginDeg float64 // 180° + PhaseDeg
}

// PhaseCrossover is one frequency where arg T = −180° (mod 360°).
type PhaseCrossover struct {
	FreqHz       float64
	MagDB        float64 // 20·log10|T| there
	GainMarginDB float64 // −MagDB
}

// Figures are the crossovers and margins of a loop gain over a frequency
// range, in increasing frequency.
type Figures struct {
	FromHz, ToHz float64 // the range examined
	Gain         []GainCrossover
	Phase        []PhaseCrossover
	// Above is true when there is no gain crossover because |T| stays
	// above 1 over the whole range (false: it stays below, or there is a
	// crossover).
	Above bool
	// phase shift (multiple of 360°) applied to TransferFunction.PhaseDeg
	shiftDeg float64
}

// PhaseDeg returns arg T(jω) in degrees with the unwrapping of f (ω in
// rad/s).
func (f *Figures) PhaseDeg(t *transfer.TransferFunction, omega float64) float64 {
	return t.PhaseDeg(omega) + f.shiftDeg
}

// PhaseMarginDeg is the smallest phase margin over the gain crossovers;
// ok is false when there is none.
func (f *Figures) PhaseMarginDeg() (pm float64, ok bool) {
	return smallest(f.Gain, func(g GainCrossover) float64 { return g.PhaseMarginDeg })
}

// GainMarginDB is the smallest gain margin over the phase crossovers; ok
// is false when there is none.
func (f *Figures) GainMarginDB() (gm float64, ok bool) {
	return smallest(f.Phase, func(p PhaseCrossover) float64 { return p.GainMarginDB })
}

// smallest returns the least of v(x) over xs; ok is false when xs is empty.
func smallest[T any](xs []T, v func(T) float64) (m float64, ok bool) {
	if len(xs) == 0 {
		return 0, false
	}
	m = math.Inf(1)
	for _, x := range xs {
		m = math.Min(m, v(x))
	}
	return m, true
}

// CrossoverHz is the highest gain crossover frequency (the loop's
// bandwidth); ok is false when there is none.
func (f *Figures) CrossoverHz() (hz float64, ok bool) {
	if len(f.Gain) == 0 {
		return 0, false
	}
	return f.Gain[len(f.Gain)-1].FreqHz, true
}

// Span returns a frequency range (rad/s) that holds every crossover of a
// loop gain with these roots: three decades beyond the smallest and the
// largest non-zero root magnitude (1 rad/s around when there is none).
func Span(t *transfer.TransferFunction) (fromRad, toRad float64) {
	lo, hi := math.Inf(1), 0.0
	for _, r := range slices.Concat(t.Zeros, t.Poles) {
		if m := cmplx.Abs(r); m > 0 {
			lo, hi = math.Min(lo, m), math.Max(hi, m)
		}
	}
	if hi == 0 {
		lo, hi = 1, 1
	}
	// A loop with a large DC gain crosses over far above its poles.
	// |K|^(1/n) = |ScaledGain|^(1/n)·ScaleRad, which fits where K may not.
	if k, w := t.Scaled(); k != 0 {
		n := len(t.Poles) - len(t.Zeros)
		if n > 0 {
			hi = math.Max(hi, math.Pow(math.Abs(k), 1/float64(n))*w)
		}
	}
	return lo / 1e3, hi * 1e3
}

// pointsPerDecade of the scan before each crossing is refined.
const pointsPerDecade = 200

// Analyze finds every gain and phase crossover of t between fromRad and
// toRad (rad/s, 0 < fromRad < toRad), each refined by bisection to full
// precision. A crossing that only touches 1 (or −180°) without crossing
// is not found. Errors: a bad range or a T that is zero.
func Analyze(t *transfer.TransferFunction, fromRad, toRad float64) (*Figures, error) {
	if !(fromRad > 0 && toRad > fromRad) || math.IsInf(toRad, 0) {
		return nil, errors.New("loop: the frequency range must satisfy 0 < from < to")
	}
	if k, _ := t.Scaled(); k == 0 {
		return nil, errors.New("loop: the loop gain is zero: the element's output does not reach its control")
	}
	f := &Figures{FromHz: fromRad / (2 * math.Pi), ToHz: toRad / (2 * math.Pi)}
	p0 := t.PhaseDeg(fromRad)
	// The unwrapped phase starts in (−270°, 90°]: a positive DC loop gain
	// near 0° (a few degrees above it when a zero lies below every pole),
	// a negative one (positive feedback) at −180°, so the phase margin
	// 180° + arg T of a positive loop is about −90°, not 270°.
	f.shiftDeg = -360 * math.Ceil((p0-90)/360)
	n := int(math.Ceil(math.Log10(toRad/fromRad)*pointsPerDecade)) + 1
	omega := func(i int) float64 { return fromRad * math.Pow(toRad/fromRad, float64(i)/float64(n-1)) }
	mag := func(w float64) float64 { return magLog(t, w) }
	// cycles counts the −180° lines: phase crossing −180 + 360k.
	cycles := func(w float64) float64 { return (f.PhaseDeg(t, w) + 180) / 360 }
	f.Above = mag(fromRad) > 0
	w1, m1, c1 := omega(0), mag(omega(0)), cycles(omega(0))
	for i := 1; i < n; i++ {
		w2 := omega(i)
		m2, c2 := mag(w2), cycles(w2)
		if (m1 > 0) != (m2 > 0) {
			w := bisect(mag, w1, w2, 0)
			ph := f.PhaseDeg(t, w)
			f.Gain = append(f.Gain, GainCrossover{FreqHz: w / (2 * math.Pi), PhaseDeg: ph, PhaseMarginDeg: 180 + ph})
			f.Above = false
		}
		for k := math.Ceil(math.Min(c1, c2)); k <= math.Floor(math.Max(c1, c2)) && c1 != c2; k++ {
			if k == c1 && i > 1 {
				continue // found on the previous step
			}
			w := bisect(cycles, w1, w2, k)
			db := 20 * mag(w) / math.Ln10
			f.Phase = append(f.Phase, PhaseCrossover{FreqHz: w / (2 * math.Pi), MagDB: db, GainMarginDB: -db})
		}
		w1, m1, c1 = w2, m2, c2
	}
	if len(f.Gain) > 0 {
		f.Above = false
	}
	return f, nil
}

// bisect returns ω in [a, b] where g(ω) = level, g(a) − level and
// g(b) − level of opposite signs (or one of them zero), on a log scale.
func bisect(g func(float64) float64, a, b, level float64) float64 {
	ga := g(a) - level
	if ga == 0 {
		return a
	}
	for i := 0; i < 200; i++ {
		m := math.Sqrt(a * b)
		if m <= a || m >= b {
			break
		}
		gm := g(m) - level
		if gm == 0 {
			return m
		}
		if (gm > 0) == (ga > 0) {
			a, ga = m, gm
		} else {
			b = m
		}
	}
	return math.Sqrt(a * b)
}
