package timeresp

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"nodal/analysis/transfer"
)

// ErrNoTimeScale means a time response needs an explicit end time
// (TimeOptions.UntilS) because H(s) has no pole off s = 0.
var ErrNoTimeScale = errors.New("give an end time")

// TimeOptions controls the sampling of a time response.
type TimeOptions struct {
	// UntilS is the end of the sampled span in seconds; 0 chooses it from
	// the slowest pole (see Step).
	UntilS float64
	// Points is the number of samples from t = 0 to the end inclusive;
	// 0 means DefaultTimePoints. At least 2.
	Points int
}

// DefaultTimePoints is the number of samples when TimeOptions.Points is 0.
const DefaultTimePoints = 500

// Point is one sample y(TS) of a time response, TS in seconds.
type Point struct {
	TS float64
	Y  float64
}

// Metrics are the figures of a time response, computed on the exact closed
// form (extrema and level crossings refined by bisection), never read off
// the sampled points. A nil field has no value: see Note.
//
//   - Final: lim y(t) for t → ∞ (nil if y ramps, oscillates or grows).
//   - RiseTimeS: time from 10 % to 90 % of Final (first crossings); nil if
//     Final is nil or 0.
//   - OvershootPct: (max y/Final − 1)·100, 0 if y never exceeds Final; nil
//     if Final is nil or 0.
//   - PeakTimeS, Peak: time and value of the largest y/Final when
//     OvershootPct > 0; when Final is 0, of the largest |y|.
//   - SettlingTimeS: the last time |y − Final| equals 2 % of |Final| (2 %
//     of the largest |y| when Final is 0); 0 if never outside the band.
type Metrics struct {
	Final         *float64
	RiseTimeS     *float64
	Rise10S       *float64 // first time y reaches 10 % of Final
	Rise90S       *float64 // first time y reaches 90 % of Final
	OvershootPct  *float64
	PeakTimeS     *float64
	Peak          *float64
	SettlingTimeS *float64
	Note          string
}

// TimeResponse is the exact step or impulse response of a rational H(s),
//
//	y(t) = Dirac·δ(t) + Σ Modes[i](t)   for t ≥ 0 (y = 0 for t < 0),
//
// from the partial-fraction expansion of H(s)/s (step) or H(s) (impulse),
// checked against the matrix exponential of a cascade state-space
// realization (see crossCheck and IllConditioned).
// Kind is "step" or "impulse". Dirac is the weight of δ(t) (impulse of a
// proper but not strictly proper H; always 0 for a step). Points are samples over [0, SpanS]; if the
// response overflows float64, sampling stops there and Overflow is set.
//
// Unstable is set when a pole has Re > 0 or a repeated pole lies on the jω
// axis (UnstablePoles lists them); AxisPoles lists simple poles on the jω
// axis (s = 0 included), which keep y bounded for an impulse but leave no
// final value when oscillating. No settling figures are given without a
// final value. All fields are finite, so the value marshals to JSON.
type TimeResponse struct {
	Kind          string
	Dirac         float64
	Modes         []Mode
	Metrics       Metrics
	Points        []Point
	SpanS         float64
	Unstable      bool
	UnstablePoles []complex128
	AxisPoles     []complex128
	Overflow      bool
	// IllConditioned: the partial fractions disagreed with the matrix
	// exponential; Points come from the latter, Modes is empty (At
	// returns 0), Metrics say so and ClosedFormWithheld says why the
	// closed form is not shown.
	IllConditioned     bool
	ClosedFormWithheld string
}

// At returns y(t) from the closed form: 0 for t < 0, the right limit y(0+)
// at t = 0, and without the Dirac term (see Dirac).
func (r *TimeResponse) At(t float64) float64 {
	if t < 0 {
		return 0
	}
	y, _ := modesAt(r.Modes, t)
	return y
}

// Step returns the exact response of y to a unit step u(t) = 1 for t ≥ 0.
//
// The default span is the largest over the poles of H of about 7 time
// constants 1/|Re p| (plus 3 per extra multiplicity), at least 10 periods
// for a lightly damped pair (ζ < 0.2) or a pole pair on the jω axis, and
// 5 time constants of an unstable pole. A circuit with no pole off s = 0
// has no time scale: then opt.UntilS must be set.
func Step(tf *transfer.TransferFunction, opt TimeOptions) (*TimeResponse, error) {
	return timeResponse(tf, "step", opt)
}

// Impulse returns the exact response of y to a unit impulse δ(t); a direct
// term of H is reported as Dirac, not sampled. Span as for Step.
func Impulse(tf *transfer.TransferFunction, opt TimeOptions) (*TimeResponse, error) {
	return timeResponse(tf, "impulse", opt)
}

func timeResponse(tf *transfer.TransferFunction, kind string, opt TimeOptions) (*TimeResponse, error) {
	if tf == nil {
		return nil, errors.New(kind + " response: nil transfer function")
	}
	if len(tf.Zeros) > len(tf.Poles) {
		return nil, fmt.Errorf("%s response: H(s) has more zeros (%d) than poles (%d), so the response contains derivatives of δ(t)", kind, len(tf.Zeros), len(tf.Poles))
	}
	if k, _ := tf.Scaled(); math.IsNaN(k) || math.IsInf(k, 0) {
		return nil, fmt.Errorf("%s response: gain %g is not finite", kind, k)
	}
	// A gain that does not fit a float64 in rad/s units (orders of a
	// hundred and more) leaves no partial fractions: the matrix
	// exponential gives the samples (crossCheck with no closed form).
	noPF := math.IsNaN(tf.Gain) || math.IsInf(tf.Gain, 0) || tf.Gain == 0 && tf.ScaledGain != 0
	if opt.Points == 0 {
		opt.Points = DefaultTimePoints
	}
	if opt.Points < 2 {
		return nil, fmt.Errorf("%s response: %d points; need at least 2", kind, opt.Points)
	}
	if opt.UntilS < 0 || math.IsNaN(opt.UntilS) || math.IsInf(opt.UntilS, 0) {
		return nil, fmt.Errorf("%s response: end time %g s must be positive and finite", kind, opt.UntilS)
	}
	hGroups, err := clusterPoles(tf.Poles)
	if err != nil {
		return nil, fmt.Errorf("%s response: %w", kind, err)
	}
	r := &TimeResponse{Kind: kind}
	for _, g := range hGroups {
		pr := g.p
		switch {
		case real(g.p) > 0 || real(g.p) == 0 && g.mult > 1:
			r.Unstable = true
			r.UnstablePoles = append(r.UnstablePoles, pr)
		case real(g.p) == 0:
			r.AxisPoles = append(r.AxisPoles, pr)
		}
	}
	poles := tf.Poles
	if kind == "step" {
		poles = append(append([]complex128(nil), tf.Poles...), 0)
	} else if len(tf.Zeros) == len(tf.Poles) {
		r.Dirac = tf.Gain
	}
	groups, err := clusterPoles(poles)
	if err != nil {
		return nil, fmt.Errorf("%s response: %w", kind, err)
	}
	if !noPF {
		r.Modes = modes(groups, laurent(tf.Gain, tf.Zeros, groups))
		// Residues that overflowed (a gain that fits with products of
		// pole differences that do not) leave no partial fractions either.
		if !finiteModes(r.Modes) {
			noPF, r.Modes = true, nil
		}
	}

	r.SpanS = opt.UntilS
	if r.SpanS == 0 {
		r.SpanS = defaultSpan(hGroups)
		if r.SpanS == 0 {
			return nil, fmt.Errorf("%s response: H(s) has no pole off s = 0, so there is no time scale to choose the span from: %w", kind, ErrNoTimeScale)
		}
	}
	r.Points = samplePoints(r, opt.Points)
	r.Overflow = len(r.Points) < opt.Points
	r.Metrics = metrics(r.Modes, r.SpanS)
	if noPF {
		r.Metrics = Metrics{}
		if dc := tf.DCGain(); kind == "step" && !r.Unstable && len(r.AxisPoles) == 0 && dc.Power == 0 {
			v := dc.Gain
			r.Metrics.Final = &v
		}
		r.Overflow = false
		if !crossCheck(r, tf, kind == "step", opt.Points, true) {
			return nil, fmt.Errorf("%s response: the gain or the residues do not fit a float64 and no state-space realization was found", kind)
		}
		return r, nil
	}
	if dc := tf.DCGain(); kind == "step" && r.Metrics.Final != nil && dc.Power == 0 {
		v := dc.Gain // H(0), exact from a direct solve when Extract made tf
		r.Metrics.Final = &v
	}
	if !r.Unstable && !r.Overflow {
		crossCheck(r, tf, kind == "step", opt.Points, false)
	}
	return r, nil
}

// pfCheckTol: the partial-fraction samples must agree with the matrix
// exponential within pfCheckTol of the largest |y|.
const pfCheckTol = 1e-7

// crossCheck compares the partial-fraction samples with the matrix
// exponential of the cascade realization (time_expm.go), which stays well
// conditioned for clustered poles. When they disagree, the samples are
// replaced by the matrix exponential's, and the closed form and the
// figures computed on it are withheld with a note (the final value of a
// step, H(0), is kept: exactly 0 when H has a zero at s = 0).
//
// With only set (no partial fractions at all: the gain does not fit a
// float64), the samples are the matrix exponential's and the note says
// why there is no closed form. It reports whether samples were made.
func crossCheck(r *TimeResponse, tf *transfer.TransferFunction, step bool, n int, only bool) bool {
	c, err := newCascade(tf)
	if err != nil {
		return false
	}
	ys, err := c.samples(step, r.SpanS/float64(n-1), n)
	if err != nil {
		return false
	}
	if only {
		r.Points = r.Points[:0]
		for i, y := range ys {
			if math.IsNaN(y) || math.IsInf(y, 0) {
				r.Overflow = true
				break
			}
			r.Points = append(r.Points, Point{TS: r.SpanS * float64(i) / float64(n-1), Y: y})
		}
		why := "at this order the gain or the residues do not fit a float64, so there is no partial-fraction form"
		r.Metrics.Note = "figures withheld: " + why + "; the samples are from the matrix exponential"
		r.ClosedFormWithheld = why
		expmFigures(r, c, step, why)
		r.Modes = nil
		r.IllConditioned = true
		return true
	}
	diff, scale := 0.0, 0.0
	for i, p := range r.Points {
		diff = math.Max(diff, math.Abs(p.Y-ys[i]))
		scale = math.Max(scale, math.Abs(ys[i]))
	}
	if !(diff > pfCheckTol*scale) || pfWellConditioned(r.Modes, r.Points) {
		return true
	}
	for i := range r.Points {
		r.Points[i].Y = ys[i]
	}
	final := r.Metrics.Final
	why := fmt.Sprintf("the partial-fraction form is ill-conditioned for these poles (off the matrix exponential by %.2g of the largest value)", diff/math.Max(scale, math.SmallestNonzeroFloat64))
	r.Metrics = Metrics{Note: "figures withheld: " + why + "; the samples are from the matrix exponential"}
	if dc := tf.DCGain(); step && final != nil && dc.Power >= 0 {
		v := dc.Gain // H(0); exactly 0 with a zero at s = 0
		if dc.Power > 0 {
			v = 0
		}
		r.Metrics.Final = &v
	}
	r.ClosedFormWithheld = why
	expmFigures(r, c, step, why)
	r.Modes = nil
	r.IllConditioned = true
	return true
}

// pfRoundingFactor bounds the relative rounding of one mode's coefficient
// (the residues come from products and quotients of a few root
// differences, each rounded once) generously: 1000 units of rounding.
const pfRoundingFactor = 1000 * 0x1p-52

// pfWellConditioned reports whether the partial-fraction samples are
// accurate to 1e-3·pfCheckTol of their largest value by a rounding bound of
// their own: at each sample the error of Σ c_k·t^p·e^(σt)·trig is at most
// pfRoundingFactor·Σ |c_k|·t^p·e^(σt) (common practice: the forward error of
// a sum is the unit roundoff times the sum of the magnitudes of its terms).
// When it holds, a disagreement with the matrix exponential is the
// exponential's error: scaling and squaring loses 1e-4 of a step whose poles
// span twelve decades (−1e-3 and −1e9 rad/s), while the partial fractions of
// two distinct, well separated poles are exact to rounding.
func pfWellConditioned(ms []Mode, pts []Point) bool {
	if len(ms) == 0 {
		return false
	}
	bound, scale := 0.0, 0.0
	for _, p := range pts {
		sum := 0.0
		for _, m := range ms {
			tp := 1.0
			for i := 0; i < m.Power; i++ {
				tp *= p.TS
			}
			sum += (math.Abs(m.Cos) + math.Abs(m.Sin)) * tp * math.Exp(m.SigmaPerS*p.TS)
		}
		bound = math.Max(bound, pfRoundingFactor*sum)
		scale = math.Max(scale, math.Abs(p.Y))
	}
	return bound <= 1e-3*pfCheckTol*scale
}

// expmFigures replaces withheld step figures by those of the matrix
// exponential (expmStepMetrics) when the step has a non-zero final value.
func expmFigures(r *TimeResponse, c *cascade, step bool, why string) {
	if !step || r.Metrics.Final == nil {
		return
	}
	m, ok := expmStepMetrics(c, *r.Metrics.Final, r.SpanS)
	if !ok {
		return
	}
	note := "no closed form: " + why + "; samples and figures are from the matrix exponential"
	if m.Note != "" {
		note += "; " + m.Note
	}
	m.Note = note
	r.Metrics = m
}

// defaultSpan implements the span rule documented on Step; 0 if no pole
// gives a time scale.
func defaultSpan(groups []poleGroup) float64 {
	span := 0.0
	for _, g := range groups {
		sigma, omega := real(g.p), math.Abs(imag(g.p))
		c := 0.0
		switch {
		case sigma < 0:
			c = (7 + 3*float64(g.mult-1)) / -sigma
			if omega > 0 && -sigma/cmplx.Abs(g.p) < 0.2 {
				c = math.Max(c, 10*2*math.Pi/omega)
			}
		case sigma > 0:
			c = 5 / sigma
		case omega > 0:
			c = 10 * 2 * math.Pi / omega
		}
		span = math.Max(span, c)
	}
	return span
}

// samplePoints samples y uniformly over [0, SpanS], stopping before the
// first non-finite value.
func samplePoints(r *TimeResponse, n int) []Point {
	pts := make([]Point, 0, n)
	for i := 0; i < n; i++ {
		t := r.SpanS * float64(i) / float64(n-1)
		y := r.At(t)
		if math.IsNaN(y) || math.IsInf(y, 0) {
			break
		}
		pts = append(pts, Point{TS: t, Y: y})
	}
	return pts
}

// finalValue returns lim y(t), t → ∞, if every mode other than a constant
// decays; otherwise a note saying why there is none.
func finalValue(ms []Mode) (float64, bool, string) {
	final := 0.0
	ramp, osc, grow := false, false, false
	for _, m := range ms {
		switch {
		case m.SigmaPerS == 0 && m.OmegaRad == 0 && m.Power == 0:
			final += m.Cos
		case m.Cos == 0 && m.Sin == 0:
		case m.SigmaPerS > 0 || m.SigmaPerS == 0 && m.Power > 0 && m.OmegaRad != 0:
			grow = true
		case m.SigmaPerS == 0 && m.OmegaRad == 0:
			ramp = true
		case m.SigmaPerS == 0:
			osc = true
		}
	}
	switch {
	case grow:
		return 0, false, "no final value: the response grows without bound (unstable)"
	case ramp:
		return 0, false, "no final value: the response ramps (H has a pole at s = 0)"
	case osc:
		return 0, false, "no final value: the response keeps oscillating (poles on the jω axis)"
	}
	return final, true, ""
}

// settleBand is the half-width of the settling band: 2 % of |final|, or of
// the largest |y| when the final value is 0 (common practice).
const settleBand = 0.02

// metrics computes Metrics on the exact closed form (see Metrics).
func metrics(ms []Mode, span float64) Metrics {
	var out Metrics
	final, ok, note := finalValue(ms)
	if !ok {
		out.Note = note
		return out
	}
	out.Final = &final
	at := func(t float64) float64 { y, _ := modesAt(ms, t); return y }
	slope := func(t float64) float64 { _, d := modesAt(ms, t); return d }

	// A first look at the size of the transient sets the band for a zero
	// final value; the envelope bound then gives a horizon after which y
	// provably stays inside the band.
	peakAbs := 0.0
	for i := 0; i <= 400; i++ {
		peakAbs = math.Max(peakAbs, math.Abs(at(span*float64(i)/400)))
	}
	band := settleBand * math.Abs(final)
	if final == 0 {
		band = settleBand * peakAbs
	}
	horizon := envelopeHorizon(ms, band/2, span)
	ts := searchGrid(ms, horizon)

	// Extrema of y: sign changes of dy/dt refined by bisection.
	var samples []float64
	prev := slope(ts[0])
	samples = append(samples, ts[0])
	for i := 1; i < len(ts); i++ {
		d := slope(ts[i])
		if prev*d < 0 {
			samples = append(samples, bisect(slope, ts[i-1], ts[i]))
		}
		samples = append(samples, ts[i])
		prev = d
	}
	ys := make([]float64, len(samples))
	for i, t := range samples {
		ys[i] = at(t)
	}
	// Between consecutive samples y is monotone (all extrema are samples),
	// so each crossing located by a sign change is the only one there.

	if final == 0 {
		k := 0
		for i, y := range ys {
			if math.Abs(y) > math.Abs(ys[k]) {
				k = i
			}
		}
		out.PeakTimeS, out.Peak = ptr(samples[k]), ptr(ys[k])
		band = settleBand * math.Abs(ys[k])
	} else {
		level := func(frac float64) *float64 {
			for i, y := range ys {
				if y/final >= frac {
					if i == 0 {
						return ptr(0)
					}
					g := func(t float64) float64 { return at(t)/final - frac }
					return ptr(bisect(g, samples[i-1], samples[i]))
				}
			}
			return nil
		}
		t10, t90 := level(0.1), level(0.9)
		if t10 != nil && t90 != nil {
			out.RiseTimeS = ptr(*t90 - *t10)
			out.Rise10S, out.Rise90S = t10, t90
		}
		k := 0
		for i, y := range ys {
			if y/final > ys[k]/final {
				k = i
			}
		}
		over := 0.0
		if r := ys[k] / final; r > 1+1e-9 {
			over = (r - 1) * 100
			out.PeakTimeS, out.Peak = ptr(samples[k]), ptr(ys[k])
		}
		out.OvershootPct = &over
	}

	if band == 0 {
		out.SettlingTimeS = ptr(0)
		return out
	}
	outside := func(t float64) float64 { return math.Abs(at(t)-final) - band }
	last := -1
	for i, y := range ys {
		if math.Abs(y-final) > band {
			last = i
		}
	}
	switch {
	case last < 0:
		out.SettlingTimeS = ptr(0)
	case last == len(ys)-1:
		out.Note = "settling time beyond the search horizon"
	default:
		out.SettlingTimeS = ptr(bisect(outside, samples[last], samples[last+1]))
	}
	return out
}

func ptr(v float64) *float64 { return &v }

// envelopeHorizon returns a time T ≥ span after which the decaying modes'
// envelope Σ t^k·e^(σt)·√(Cos²+Sin²) stays below level (each term is
// decreasing for t > k/|σ|).
func envelopeHorizon(ms []Mode, level, span float64) float64 {
	t := span
	for _, m := range ms {
		if m.SigmaPerS < 0 && m.Power > 0 {
			t = math.Max(t, float64(m.Power)/-m.SigmaPerS)
		}
	}
	envelope := func(t float64) float64 {
		e := 0.0
		for _, m := range ms {
			if m.SigmaPerS == 0 && m.OmegaRad == 0 {
				continue // the constant
			}
			e += math.Pow(t, float64(m.Power)) * math.Exp(m.SigmaPerS*t) * math.Hypot(m.Cos, m.Sin)
		}
		return e
	}
	for i := 0; i < 200 && envelope(t) > level; i++ {
		t *= 1.25
	}
	return t
}

// searchGrid returns sorted times in [0, T]: a uniform grid fine enough for
// the fastest oscillation (≥ 20 points per period) plus a geometric grid
// down to the fastest time constant, so that fast and slow parts are both
// resolved.
func searchGrid(ms []Mode, T float64) []float64 {
	fastest := 0.0
	wmax := 0.0
	for _, m := range ms {
		fastest = math.Max(fastest, math.Hypot(m.SigmaPerS, m.OmegaRad))
		wmax = math.Max(wmax, m.OmegaRad)
	}
	n := int(math.Min(200000, math.Max(2000, 20*wmax*T/(2*math.Pi))))
	ts := make([]float64, 0, n+400)
	if fastest > 0 && 1/fastest/20 < T/float64(n) {
		lo := 1 / fastest / 20
		hi := T / float64(n)
		for i := 0; i < 400; i++ {
			ts = append(ts, lo*math.Pow(hi/lo, float64(i)/400))
		}
	}
	ts = append([]float64{0}, ts...)
	for i := 1; i <= n; i++ {
		ts = append(ts, T*float64(i)/float64(n))
	}
	return ts
}

// bisect finds a root of f in [a, b] where f(a) and f(b) differ in sign
// (or f(b) = 0), to float64 resolution.
func bisect(f func(float64) float64, a, b float64) float64 {
	fa := f(a)
	for i := 0; i < 200; i++ {
		m := a + (b-a)/2
		if m <= a || m >= b {
			break
		}
		fm := f(m)
		if fm == 0 {
			return m
		}
		if (fm > 0) == (fa > 0) {
			a, fa = m, fm
		} else {
			b = m
		}
	}
	return a + (b-a)/2
}

// finiteModes reports whether every coefficient of ms is finite.
func finiteModes(ms []Mode) bool {
	for _, m := range ms {
		if math.IsNaN(m.Cos) || math.IsInf(m.Cos, 0) || math.IsNaN(m.Sin) || math.IsInf(m.Sin, 0) {
			return false
		}
	}
	return true
}
