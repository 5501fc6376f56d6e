package plot

import "fmt"

// PanelDifference names the difference panel of Compare.
const PanelDifference = "difference"

// Compare draws two responses over a shared logarithmic frequency axis:
// their magnitudes (dB) overlaid above, the phases (°) below them when
// either has any, and at the bottom the difference b − a in dB (diffDB,
// one value per frequency of b, NaN where there is none).
//
// Series keys: "magnitude/LABEL", "phase/LABEL" and
// "difference/B − A" (Hz, dB).
func Compare(a, b BodeTrace, diffDB []float64, opt BodeOptions) (*Figure, error) {
	if a.Label == "" || b.Label == "" || a.Label == b.Label {
		return nil, fmt.Errorf("plot: Compare needs two distinct labels, got %q and %q", a.Label, b.Label)
	}
	for _, tr := range []BodeTrace{a, b} {
		what := fmt.Sprintf("trace %q", tr.Label)
		if err := checkFreqs(what, tr.FreqHz); err != nil {
			return nil, err
		}
		if err := checkLen(what, "magnitude", len(tr.FreqHz), len(tr.MagDB)); err != nil {
			return nil, err
		}
		if tr.PhaseDeg != nil {
			if err := checkLen(what, "phase", len(tr.FreqHz), len(tr.PhaseDeg)); err != nil {
				return nil, err
			}
		}
	}
	if err := checkLen("difference", "dB", len(b.FreqHz), len(diffDB)); err != nil {
		return nil, err
	}
	lo := min(a.FreqHz[0], b.FreqHz[0])
	hi := max(a.FreqHz[len(a.FreqHz)-1], b.FreqHz[len(b.FreqHz)-1])
	fig, mp, pp := freqPanels(opt, lo, hi)
	for i, tr := range []BodeTrace{a, b} {
		st := styleFor(i)
		pts := pairs(tr.FreqHz, tr.MagDB)
		if len(pts) < 2 {
			return nil, fmt.Errorf("plot: trace %q has fewer than 2 finite magnitude values", tr.Label)
		}
		if err := addTrace(mp, tr.Label, pts, st, true); err != nil {
			return nil, err
		}
		if tr.PhaseDeg != nil {
			if ph := pairs(tr.FreqHz, tr.PhaseDeg); len(ph) >= 2 {
				if err := addTrace(pp, tr.Label, ph, st, false); err != nil {
					return nil, err
				}
			}
		}
	}
	dp := newPanel("", labelFreq, "difference (dB)")
	useLogFreqAxis(dp, lo, hi, false)
	dp.Add(grid{logX: true})
	dpn := fig.add(PanelDifference, dp)
	pts := pairs(b.FreqHz, diffDB)
	if len(pts) < 2 {
		return nil, fmt.Errorf("plot: the difference has fewer than 2 finite values")
	}
	if err := addTrace(dpn, "B − A", pts, styleFor(2), true); err != nil {
		return nil, err
	}
	fitY(mp, 0.06)
	fitY(pp, 0.06)
	fitY(dpn, 0.1)
	fig.Layout()
	return fig, nil
}
