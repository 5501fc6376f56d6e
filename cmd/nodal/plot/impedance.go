package plot

import (
	"fmt"
	"math"

	gplot "gonum.org/v1/plot"
)

// labelMagOhm is the axis label of an impedance magnitude.
const labelMagOhm = "|Z| (Ω)"

// Impedance draws an impedance over frequency: |Z| in Ω on a logarithmic
// axis above its phase in degrees, against a shared logarithmic frequency
// axis (Hz). Points whose magnitude is not finite and > 0, or whose phase
// is not finite, are left out of that curve.
//
// Series keys: "magnitude/|Z|" (Hz, Ω) and "phase/|Z|" (Hz, °).
func Impedance(fHz, magOhm, phaseDeg []float64, opt BodeOptions) (*Figure, error) {
	if err := checkFreqs("impedance", fHz); err != nil {
		return nil, err
	}
	if err := checkLen("impedance", "magnitude", len(fHz), len(magOhm)); err != nil {
		return nil, err
	}
	if err := checkLen("impedance", "phase", len(fHz), len(phaseDeg)); err != nil {
		return nil, err
	}
	var magPts [][2]float64
	for _, p := range pairs(fHz, magOhm) {
		if p[1] > 0 {
			magPts = append(magPts, p)
		}
	}
	if len(magPts) < 2 {
		return nil, fmt.Errorf("plot: the impedance has fewer than 2 finite non-zero magnitudes")
	}
	fig, mp, pp := freqPanels(opt, fHz[0], fHz[len(fHz)-1])
	mp.p.Y.Label.Text = labelMagOhm
	mp.p.Y.Scale = gplot.LogScale{}
	mp.p.Y.Tick.Marker = logTicks{}
	const name = "|Z|"
	st := styleFor(0)
	if err := addTrace(mp, name, magPts, st, false); err != nil {
		return nil, err
	}
	if phPts := pairs(fHz, phaseDeg); len(phPts) >= 2 {
		if err := addTrace(pp, name, phPts, st, false); err != nil {
			return nil, err
		}
	}
	lo, hi := yRange(magPts)
	if hi/lo < 10 {
		mid := math.Sqrt(lo * hi)
		lo, hi = mid/math.Sqrt(10), mid*math.Sqrt(10)
	}
	mp.p.Y.Min, mp.p.Y.Max = lo/1.2, hi*1.2
	fitY(pp, 0.06)
	fig.Layout()
	return fig, nil
}
