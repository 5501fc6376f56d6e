package plot

import (
	"fmt"
	"strconv"

	"gonum.org/v1/plot/vg/draw"

	"nodal/cmd/nodal/notation"
)

// LoopMarks are the figures of a loop gain to mark on its Bode plot: each
// gain crossover (|T| = 1) with the phase margin read there, each phase
// crossover (arg T = −180° mod 360°) with the gain margin read there.
// PhaseAtCrossoverDeg[i] is arg T at CrossoversHz[i] (the point marked on
// the phase curve); PhaseLineDeg[i] the −180° + k·360° line it is measured
// from.
type LoopMarks struct {
	CrossoversHz        []float64
	PhaseAtCrossoverDeg []float64
	PhaseMarginDeg      []float64
	PhaseCrossoversHz   []float64
	MagAtPhaseCrossDB   []float64
	GainMarginDB        []float64
}

// Loop draws the Bode plot of a loop gain T with its margins marked: a
// 0 dB line on the magnitude panel, a −180° line on the phase panel, a
// dotted vertical line at every crossover, the phase margin as a point on
// the phase curve at each gain crossover and the gain margin as a point on
// the magnitude curve at each phase crossover.
//
// Series keys: those of Bode for tr, plus "phase/LABEL/phase-margin" and
// "magnitude/LABEL/gain-margin" (one point per crossover).
func Loop(tr BodeTrace, m LoopMarks, opt BodeOptions) (*Figure, error) {
	if len(m.CrossoversHz) != len(m.PhaseMarginDeg) || len(m.CrossoversHz) != len(m.PhaseAtCrossoverDeg) ||
		len(m.PhaseCrossoversHz) != len(m.GainMarginDB) || len(m.PhaseCrossoversHz) != len(m.MagAtPhaseCrossDB) {
		return nil, fmt.Errorf("plot: loop marks of unequal lengths")
	}
	fig, err := Bode([]BodeTrace{tr}, opt)
	if err != nil {
		return nil, err
	}
	mp, pp := loopRefs(fig)
	label := tr.Label
	if label == "" {
		label = "trace 1"
	}
	var pmPts, gmPts [][2]float64
	var pmNotes, gmNotes []string
	for i, f := range m.CrossoversHz {
		pmPts = append(pmPts, [2]float64{f, m.PhaseAtCrossoverDeg[i]})
		pmNotes = append(pmNotes, "phase margin "+strconv.FormatFloat(m.PhaseMarginDeg[i], 'f', 1, 64)+"° at "+notation.Digits(f, 4, "Hz"))
	}
	for i, f := range m.PhaseCrossoversHz {
		gmPts = append(gmPts, [2]float64{f, m.MagAtPhaseCrossDB[i]})
		gmNotes = append(gmNotes, "gain margin "+strconv.FormatFloat(m.GainMarginDB[i], 'f', 1, 64)+" dB at "+notation.Digits(f, 4, "Hz"))
	}
	for _, f := range append(append([]float64(nil), m.CrossoversHz...), m.PhaseCrossoversHz...) {
		for _, pn := range []*panel{mp, pp} {
			pn.p.Add(refLine{vertical: true, at: f, style: markLineStyle()})
		}
	}
	if len(pmPts) > 0 {
		if err := addMarks(pp, label+"/phase-margin", pmPts, pmNotes, draw.RingGlyph{}); err != nil {
			return nil, err
		}
	}
	if len(gmPts) > 0 {
		if err := addMarks(mp, label+"/gain-margin", gmPts, gmNotes, draw.PyramidGlyph{}); err != nil {
			return nil, err
		}
	}
	return fig, nil
}

// loopRefs adds the 0 dB and −180° reference lines to a Bode figure of a
// loop gain and returns its magnitude and phase panels.
func loopRefs(fig *Figure) (mag, phase *panel) {
	mag, phase = fig.panels[0], fig.panels[1]
	mag.p.Add(refLine{at: 0, style: markLineStyle()})
	phase.p.Add(refLine{at: -180, style: markLineStyle()})
	return mag, phase
}

// Loops overlays the Bode plots of several loop gains (one per value of a
// varied part), each with its legend entry, over the 0 dB and −180°
// reference lines. Crossovers and margins are not marked (they would
// clutter the overlay); Loop marks them for one loop gain.
//
// Series keys: those of Bode.
func Loops(traces []BodeTrace, opt BodeOptions) (*Figure, error) {
	fig, err := Bode(traces, opt)
	if err != nil {
		return nil, err
	}
	loopRefs(fig)
	return fig, nil
}
