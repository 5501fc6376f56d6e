package main

import (
	"math"
	"math/cmplx"

	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
)

// autoRange is the default sweep range for sys: every finite non-zero pole
// and zero covered by two decades either side; the parts' own corner
// frequencies when the transfer function cannot be had or has no roots.
func autoRange(l *loaded, sys *mna.System) (float64, float64) {
	tf, _ := transfer.Extract(sys) // no transfer function: the parts' corners
	return rangeOf(l, tf)
}

// rangeOf is autoRange for an already extracted transfer function of the
// system (nil when it could not be had).
func rangeOf(l *loaded, tf *transfer.TransferFunction) (float64, float64) {
	if tf != nil {
		if lo, hi, ok := rootRange(tf); ok {
			return lo, hi
		}
	}
	return response.DefaultRange(l.circuit)
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

// rootRange spans the magnitudes of the non-zero poles and zeros (Hz), two
// decades either side, rounded out to whole decades.
func rootRange(tf *transfer.TransferFunction) (float64, float64, bool) {
	lo, hi := math.Inf(1), 0.0
	for _, r := range append(append([]complex128(nil), tf.Poles...), tf.Zeros...) {
		f := cmplx.Abs(r) / (2 * math.Pi)
		if f == 0 || math.IsInf(f, 0) || math.IsNaN(f) {
			continue
		}
		lo, hi = math.Min(lo, f), math.Max(hi, f)
	}
	if hi == 0 {
		return 0, 0, false
	}
	return math.Pow(10, math.Floor(math.Log10(lo))-2), math.Pow(10, math.Ceil(math.Log10(hi))+2), true
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
