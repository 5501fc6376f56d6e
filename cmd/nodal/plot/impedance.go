package plot

import (
	"fmt"
	"math"

	gplot "gonum.org/v1/plot"
)

// labelMagOhm is the axis label of an impedance magnitude.
const labelMagOhm = "|Z| (Ω)"

// ImpedanceTrace is one impedance to draw: |Z| in Ω and its phase in
// degrees at increasing positive frequencies in Hz, under a legend label.
type ImpedanceTrace struct {
	Label    string
	FreqHz   []float64
	MagOhm   []float64
	PhaseDeg []float64
}

// Impedance draws an impedance over frequency: |Z| in Ω on a logarithmic
// axis above its phase in degrees, against a shared logarithmic frequency
// axis (Hz). Points whose magnitude is not finite and > 0, or whose phase
// is not finite, are left out of that curve.
//
// Series keys: "magnitude/|Z|" (Hz, Ω) and "phase/|Z|" (Hz, °).
func Impedance(fHz, magOhm, phaseDeg []float64, opt BodeOptions) (*Figure, error) {
	return Impedances([]ImpedanceTrace{{FreqHz: fHz, MagOhm: magOhm, PhaseDeg: phaseDeg}}, opt)
}

// Impedances draws several impedances as Impedance draws one, each in its
// own colour and dash with a legend entry (one per value of a varied
// part). A single trace without a label is named "|Z|" and has no legend.
//
// Series keys: "magnitude/LABEL" (Hz, Ω) and "phase/LABEL" (Hz, °).
// Labels must be unique.
func Impedances(traces []ImpedanceTrace, opt BodeOptions) (*Figure, error) {
	if len(traces) == 0 {
		return nil, fmt.Errorf("plot: an impedance plot needs at least one trace")
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	seen := map[string]bool{}
	for i := range traces {
		tr := &traces[i]
		what := "impedance"
		if tr.Label != "" {
			what = fmt.Sprintf("impedance %q", tr.Label)
		}
		if (tr.Label == "" && len(traces) > 1) || seen[tr.Label] {
			return nil, fmt.Errorf("plot: impedance trace labels must be unique and non-empty (%q)", tr.Label)
		}
		seen[tr.Label] = true
		if err := checkFreqs(what, tr.FreqHz); err != nil {
			return nil, err
		}
		if err := checkLen(what, "magnitude", len(tr.FreqHz), len(tr.MagOhm)); err != nil {
			return nil, err
		}
		if err := checkLen(what, "phase", len(tr.FreqHz), len(tr.PhaseDeg)); err != nil {
			return nil, err
		}
		lo, hi = math.Min(lo, tr.FreqHz[0]), math.Max(hi, tr.FreqHz[len(tr.FreqHz)-1])
	}
	fig, mp, pp := freqPanels(opt, lo, hi)
	mp.p.Y.Label.Text = labelMagOhm
	mp.p.Y.Scale = gplot.LogScale{}
	mp.p.Y.Tick.Marker = logTicks{}
	var allMag [][][2]float64
	for i, tr := range traces {
		name, legend := tr.Label, true
		if name == "" {
			name, legend = "|Z|", false
		}
		var magPts [][2]float64
		for _, p := range pairs(tr.FreqHz, tr.MagOhm) {
			if p[1] > 0 {
				magPts = append(magPts, p)
			}
		}
		if len(magPts) < 2 {
			return nil, fmt.Errorf("plot: the impedance %shas fewer than 2 finite non-zero magnitudes", labelPrefix(tr.Label))
		}
		allMag = append(allMag, magPts)
		st := styleFor(i)
		if err := addTrace(mp, name, magPts, st, legend); err != nil {
			return nil, err
		}
		if phPts := pairs(tr.FreqHz, tr.PhaseDeg); len(phPts) >= 2 {
			if err := addTrace(pp, name, phPts, st, false); err != nil {
				return nil, err
			}
		}
	}
	ylo, yhi := yRange(allMag...)
	if yhi/ylo < 10 {
		mid := math.Sqrt(ylo * yhi)
		ylo, yhi = mid/math.Sqrt(10), mid*math.Sqrt(10)
	}
	mp.p.Y.Min, mp.p.Y.Max = ylo/1.2, yhi*1.2
	fitY(pp, 0.06)
	fig.Layout()
	return fig, nil
}

// labelPrefix is `"LABEL" ` for a message, or "" for no label.
func labelPrefix(label string) string {
	if label == "" {
		return ""
	}
	return fmt.Sprintf("%q ", label)
}
