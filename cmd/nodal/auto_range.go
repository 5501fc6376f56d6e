package main

import (
	"math"
	"math/cmplx"

	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
)

// autoRange is the default sweep range for sys: the poles and zeros that
// shape the response within shapeWindowDB of its largest gain, a decade
// either side (see shapingRange); a fixed range for a response that does
// not depend on frequency; the parts' own corner frequencies when the
// transfer function cannot be had.
func autoRange(l *loaded, sys *mna.System) (float64, float64) {
	tf, _ := transfer.Extract(sys) // no transfer function: the parts' corners
	return rangeOf(l, tf)
}

// rangeOf is autoRange for an already extracted transfer function of the
// system (nil when it could not be had).
func rangeOf(l *loaded, tf *transfer.TransferFunction) (float64, float64) {
	if tf == nil {
		return response.DefaultRange(l.circuit)
	}
	if lo, hi, ok := shapingRange(tf); ok {
		return lo, hi
	}
	return flatRangeHz[0], flatRangeHz[1]
}

// flatRangeHz is the default range of a response without finite non-zero
// poles or zeros (a divider, a gain stage with ideal op-amps): any range
// shows the same flat line, so a fixed audio-and-above span.
var flatRangeHz = [2]float64{10, 100e3}

// shapeWindowDB is how far below the largest gain a pole or zero still
// shapes the response worth showing by default, dB.
const shapeWindowDB = 100

// frequencyIndependent reports whether tf has no finite non-zero pole or
// zero, so |H| and the phase are the same at every frequency and the group
// delay is exactly 0.
func frequencyIndependent(tf *transfer.TransferFunction) bool {
	_, _, ok := rootSpan(tf, func(float64, bool) bool { return true })
	return !ok
}

// shapingRange is the default sweep range of tf (Hz): a decade below the
// lowest and above the highest finite non-zero pole or zero that shapes
// the response within shapeWindowDB of its largest gain, rounded out to
// whole decades (a root a hair above a decade does not add one). A root
// shapes it when the gain at its frequency is within the window (for a
// zero, the larger of |H| at f/2 and 2f, so that a notch's own null does
// not hide it); a parasitic pole far down the roll-off (an
// op-amp's second pole 300 dB below the passband) is left out. ok is false
// when tf has no such root (a frequency-independent response).
func shapingRange(tf *transfer.TransferFunction) (float64, float64, bool) {
	gain := func(fHz float64) float64 { return cmplx.Abs(tf.EvalFactored(complex(0, 2*math.Pi*fHz))) }
	zeroNear := func(f float64) float64 { return math.Max(gain(f/2), gain(2*f)) }
	top := math.Inf(-1)
	if pk, err := tf.Peak(); err == nil && pk.Gain > 0 && !math.IsInf(pk.Gain, 0) {
		top = pk.Gain
	} else {
		// No finite peak (a pole on the jω axis, an integrator): the
		// largest finite gain near a root stands for it.
		rootSpan(tf, func(f float64, _ bool) bool {
			if g := gain(f); !math.IsInf(g, 0) && !math.IsNaN(g) {
				top = math.Max(top, g)
			}
			return false
		})
	}
	floor := top * math.Pow(10, -shapeWindowDB/20.0)
	lo, hi, ok := rootSpan(tf, func(f float64, zero bool) bool {
		g := gain(f)
		if zero {
			g = zeroNear(f)
		}
		return math.IsInf(top, -1) || !(g < floor) // NaN and +Inf count
	})
	if !ok {
		// Every root is far down the response: show them all rather than
		// nothing.
		if lo, hi, ok = rootSpan(tf, func(float64, bool) bool { return true }); !ok {
			return 0, 0, false
		}
	}
	const slack = 0.01 // decades
	return math.Pow(10, math.Floor(math.Log10(lo)+slack)-1), math.Pow(10, math.Ceil(math.Log10(hi)-slack)+1), true
}

// rootSpan is the lowest and highest frequency (Hz) of the finite non-zero
// poles and zeros of tf for which keep(f, zero) holds (zero: the root is
// a zero); ok is false for none.
func rootSpan(tf *transfer.TransferFunction, keep func(fHz float64, zero bool) bool) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), 0
	for k, roots := range [][]complex128{tf.Poles, tf.Zeros} {
		for _, r := range roots {
			f := cmplx.Abs(r) / (2 * math.Pi)
			if f == 0 || math.IsInf(f, 0) || math.IsNaN(f) || !keep(f, k == 1) {
				continue
			}
			lo, hi = math.Min(lo, f), math.Max(hi, f)
		}
	}
	return lo, hi, hi > 0
}

// systemTF extracts sys's transfer function, nil when it cannot be had
// (the callers then fall back to the parts' corners and draw no marks).
func systemTF(sys *mna.System) *transfer.TransferFunction {
	tf, err := transfer.Extract(sys)
	if err != nil {
		return nil
	}
	return tf
}

// addBodeMarks marks the −3 dB points and a resonance peak (more than
// 0.1 dB above the −3 dB reference) on a trace, from the transfer function
// of the traced system (none when tf is nil).
func addBodeMarks(tr *plot.BodeTrace, tf *transfer.TransferFunction, r *response.Response) {
	if tf == nil {
		return
	}
	lo, hi := r.FreqHz[0], r.FreqHz[len(r.FreqHz)-1]
	bw, err := tf.F3dB()
	if err == nil {
		for _, f := range bw.CrossingsHz {
			if f >= lo && f <= hi {
				tr.Minus3dBHz = append(tr.Minus3dBHz, f)
			}
		}
	}
	pk, err := tf.Peak()
	if err == nil && pk.OmegaRad > 0 && !math.IsInf(pk.OmegaRad, 0) && pk.FreqHz >= lo && pk.FreqHz <= hi {
		ref := bw.RefDB
		if pk.GainDB > ref+0.1 {
			f, db := pk.FreqHz, pk.GainDB
			tr.PeakHz, tr.PeakDB = &f, &db
		}
	}
}
