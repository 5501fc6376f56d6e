package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"

	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
)

// compareCmd puts two responses side by side: two circuits, or a circuit
// and a measurement.
type compareCmd struct {
	Files    []string `arg:"" help:"The circuit file (.nodal), and a second one to compare it with (or --measured)." type:"string"`
	Set      []string `help:"Override a top-level parameter or a part value in both circuits, NAME=VALUE (repeatable)." placeholder:"NAME=VALUE"`
	Measured string   `help:"CSV of a measured response: a header row with freq_hz, mag_db and optionally phase_deg; compared at its frequencies." placeholder:"FILE" type:"string"`
	In       string   `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out      string   `help:"Output: a response of the file(s), a sum of them (woofer+tweeter), a node or i(PART) (default: the first response, then the node named out)." placeholder:"NAME"`
	Ref      string   `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
	freqArgs
	Format  string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output  string `short:"o" help:"Write the table/JSON to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot    string `help:"Also draw both responses overlaid, with their difference below (.svg or .png)." placeholder:"FILE" type:"path"`
	Workers int    `help:"Goroutines for the sweeps (default: all cores)." default:"0"`
}

// Help is the extended help with a worked example.
func (c *compareCmd) Help() string {
	return `Compares the response --out of a circuit with the same response of a
second circuit, or with a measurement (--measured data.csv), at each
frequency: both magnitudes and phases, and the difference B − A (the
second circuit, or the measurement, minus the first) in dB and degrees
(wrapped to (−180°, 180°]). It reports the largest difference and where,
and the RMS difference over the band (over the points, equally weighted:
on a log grid, per log-frequency). Two circuits are compared over
--from/--to/--at or, by default, a range covering the poles and zeros of
both; a measurement at its own frequencies.

The measured file is CSV with a header row; the columns freq_hz and mag_db
(and optionally phase_deg) are found by name, case-insensitive:

    freq_hz,mag_db,phase_deg
    100,-0.03,-4.6
    1000,-2.9,-44.1

Examples:

    nodal compare testdata/examples/speaker_crossover.nodal --measured testdata/compare/woofer_measured.csv --out woofer
    nodal compare testdata/examples/tone_stage.nodal testdata/examples/tone_lowpass_ideal.nodal --out out --plot diff.svg`
}

// comparePoint is one frequency of a comparison.
type comparePoint struct {
	FreqHz        float64  `json:"freq_hz"`
	AMagDB        *float64 `json:"a_mag_db"`
	BMagDB        *float64 `json:"b_mag_db"`
	DiffDB        *float64 `json:"diff_db"`
	APhaseDeg     *float64 `json:"a_phase_deg"`
	BPhaseDeg     *float64 `json:"b_phase_deg"`
	DiffPhaseDeg  *float64 `json:"diff_phase_deg"`
	diffDB, diffP float64
}

// compareJSON is the document of nodal compare.
type compareJSON struct {
	A                 string         `json:"a"`
	B                 string         `json:"b"`
	Output            string         `json:"output"`
	Input             string         `json:"input"`
	Points            []comparePoint `json:"points"`
	MaxDiffDB         *float64       `json:"max_abs_diff_db"`
	MaxDiffDBFreqHz   *float64       `json:"max_abs_diff_db_freq_hz"`
	MaxDiffPhaseDeg   *float64       `json:"max_abs_diff_phase_deg"`
	MaxDiffPhaseFreqH *float64       `json:"max_abs_diff_phase_freq_hz"`
	RMSDiffDB         *float64       `json:"rms_diff_db"`
	RMSDiffPhaseDeg   *float64       `json:"rms_diff_phase_deg"`
	Note              string         `json:"note,omitempty"`
}

// Run compares and prints.
func (c *compareCmd) Run(e *env) error {
	if err := startOutput(&c.Format, append([]string{c.Measured}, c.Files...), []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	switch {
	case len(c.Files) == 1 && c.Measured == "":
		return errors.New("compare needs a second circuit file or --measured data.csv")
	case len(c.Files) == 2 && c.Measured != "":
		return errors.New("compare takes a second circuit or --measured, not both")
	case len(c.Files) > 2:
		return fmt.Errorf("compare takes at most two circuit files, got %d", len(c.Files))
	}
	if err := checkOutputs(append([]string{c.Measured}, c.Files...), c.Output, c.Plot); err != nil {
		return err
	}
	la, err := (&circuitArgs{File: c.Files[0], Set: c.Set}).load(e)
	if err != nil {
		return err
	}
	ta, err := resolveTraces(la, c.In, []string{c.Out}, c.Ref)
	if err != nil {
		return err
	}
	if err := warnUnstable(e, la, ta); err != nil {
		return err
	}
	var b *response.Response
	var freqs []float64
	var meas *measured
	bName := c.Measured
	if c.Measured != "" {
		src, name, err := readSource(e, c.Measured)
		if err != nil {
			return err
		}
		if meas, err = readMeasured(name, src); err != nil {
			return err
		}
		freqs = meas.FreqHz
	} else {
		lb, err := (&circuitArgs{File: c.Files[1], Set: c.Set}).load(e)
		if err != nil {
			return err
		}
		bName = lb.name
		tb, err := resolveTraces(lb, c.In, []string{c.Out}, c.Ref)
		if err != nil {
			return err
		}
		if err := warnUnstable(e, lb, tb); err != nil {
			return err
		}
		freqs, err = c.frequencies(func() (float64, float64) {
			loA, hiA := rangeOf(la, traceTF(ta[0]))
			loB, hiB := rangeOf(lb, traceTF(tb[0]))
			return math.Min(loA, loB), math.Max(hiA, hiB)
		})
		if err != nil {
			return err
		}
		rb, err := sweepTraces(e, tb, freqs, c.Workers)
		if err != nil {
			return err
		}
		b = rb[0]
	}
	ra, err := sweepTraces(e, ta, freqs, c.Workers)
	if err != nil {
		return err
	}
	a := ra[0]
	doc := compareResponses(la.name, bName, a, b, meas)
	if c.Plot != "" {
		if err := c.writePlot(e, a, b, meas, doc); err != nil {
			return err
		}
	}
	return writeTo(e, c.Output, append([]string{c.Measured, c.Plot}, c.Files...), func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, doc)
		}
		return compareTable(w, doc)
	})
}

// warnUnstable says on standard error when the circuit is not stable (its
// frequency response is then not what a measurement would show), and
// gives the traces of that circuit its resonances for the phase
// unwrapping (resonanceMarks).
func warnUnstable(e *env, l *loaded, ts []sweepTrace) error {
	st, err := circuitStability(l)
	if err != nil {
		return err
	}
	warnStability(e.stderr, st)
	for i := range ts {
		ts[i].marksHz = resonanceMarks(st)
	}
	return nil
}

// traceTF is the transfer function of a single-term trace (nil for a sum).
func traceTF(t sweepTrace) *transfer.TransferFunction {
	if len(t.systems) != 1 {
		return nil
	}
	return systemTF(t.systems[0])
}

// compareResponses computes the differences B − A at A's frequencies; B
// is a response or a measurement (meas, phase optional).
func compareResponses(aName, bName string, a, b *response.Response, meas *measured) *compareJSON {
	doc := &compareJSON{A: aName, B: bName, Output: a.Output, Input: a.Input}
	bMag, bPh := meas.magPhase()
	if b != nil {
		bMag, bPh = b.MagDB, b.PhaseDeg
	}
	var sumDB, sumPh float64
	nDB, nPh := 0, 0
	maxDB, maxPh := -1.0, -1.0
	var atDB, atPh float64
	for i, f := range a.FreqHz {
		p := comparePoint{FreqHz: f, AMagDB: finiteOrNil(a.MagDB[i]), BMagDB: finiteOrNil(bMag[i]), APhaseDeg: finiteOrNil(response.WrapDeg(a.PhaseDeg[i]))}
		p.diffDB, p.diffP = math.NaN(), math.NaN()
		if d := bMag[i] - a.MagDB[i]; !math.IsNaN(d) && !math.IsInf(d, 0) {
			p.diffDB, p.DiffDB = d, finiteOrNil(d)
			sumDB += d * d
			nDB++
			if math.Abs(d) > maxDB {
				maxDB, atDB = math.Abs(d), f
			}
		}
		if bPh != nil {
			p.BPhaseDeg = finiteOrNil(response.WrapDeg(bPh[i]))
			if d := response.WrapDeg(bPh[i] - a.PhaseDeg[i]); !math.IsNaN(d) {
				p.diffP, p.DiffPhaseDeg = d, finiteOrNil(d)
				sumPh += d * d
				nPh++
				if math.Abs(d) > maxPh {
					maxPh, atPh = math.Abs(d), f
				}
			}
		}
		doc.Points = append(doc.Points, p)
	}
	if nDB > 0 {
		doc.MaxDiffDB, doc.MaxDiffDBFreqHz, doc.RMSDiffDB = finiteOrNil(maxDB), finiteOrNil(atDB), finiteOrNil(math.Sqrt(sumDB/float64(nDB)))
	}
	if nPh > 0 {
		doc.MaxDiffPhaseDeg, doc.MaxDiffPhaseFreqH, doc.RMSDiffPhaseDeg = finiteOrNil(maxPh), finiteOrNil(atPh), finiteOrNil(math.Sqrt(sumPh/float64(nPh)))
	}
	switch {
	case nDB < len(a.FreqHz):
		doc.Note = fmt.Sprintf("%d of %d points have no finite difference in dB (a zero or a pole of one response) and are left out of the largest and RMS differences", len(a.FreqHz)-nDB, len(a.FreqHz))
	case bPh == nil:
		doc.Note = "the measurement has no phase_deg column: phases are not compared"
	}
	return doc
}

// magPhase is the measurement's dB and phase columns (nil for none).
func (m *measured) magPhase() ([]float64, []float64) {
	if m == nil {
		return nil, nil
	}
	return m.MagDB, m.PhaseDeg
}

func compareTable(w io.Writer, d *compareJSON) error {
	fmt.Fprintf(w, "A = %s, B = %s: %s / %s, differences B − A\n", d.A, d.B, d.Output, d.Input)
	t := newTable(w, "freq_hz", "a_mag_db", "b_mag_db", "diff_db", "a_phase_deg", "b_phase_deg", "diff_phase_deg")
	opt := func(v *float64, digits int) string {
		if v == nil {
			return "-"
		}
		return fixed(*v, digits)
	}
	for _, p := range d.Points {
		if err := t.row(num(p.FreqHz), opt(p.AMagDB, 4), opt(p.BMagDB, 4), opt(p.DiffDB, 4), opt(p.APhaseDeg, 3), opt(p.BPhaseDeg, 3), opt(p.DiffPhaseDeg, 3)); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	if d.MaxDiffDB != nil {
		fmt.Fprintf(w, "largest difference: %s dB at %s; RMS over the band: %s dB\n", fixed(*d.MaxDiffDB, 4), notation.Eng(*d.MaxDiffDBFreqHz, "Hz"), fixed(*d.RMSDiffDB, 4))
	}
	if d.MaxDiffPhaseDeg != nil {
		fmt.Fprintf(w, "largest phase difference: %s° at %s; RMS over the band: %s°\n", fixed(*d.MaxDiffPhaseDeg, 3), notation.Eng(*d.MaxDiffPhaseFreqH, "Hz"), fixed(*d.RMSDiffPhaseDeg, 3))
	}
	if d.Note != "" {
		fmt.Fprintf(w, "note: %s\n", d.Note)
	}
	return nil
}

// writePlot overlays both responses with the difference below.
func (c *compareCmd) writePlot(e *env, a, b *response.Response, meas *measured, d *compareJSON) error {
	format, err := plot.FormatFromPath(c.Plot)
	if err != nil {
		return err
	}
	ta := plot.BodeTrace{Label: "A: " + filepath.Base(d.A), FreqHz: a.FreqHz, MagDB: a.MagDB, PhaseDeg: a.PhaseDeg}
	tb := plot.BodeTrace{Label: "B: " + filepath.Base(d.B), FreqHz: a.FreqHz}
	if b != nil {
		tb.MagDB, tb.PhaseDeg = b.MagDB, b.PhaseDeg
	} else {
		tb.MagDB, tb.PhaseDeg = meas.MagDB, meas.PhaseDeg
		if tb.PhaseDeg != nil {
			tb.PhaseDeg = append([]float64(nil), tb.PhaseDeg...)
			response.UnwrapDeg(tb.PhaseDeg)
		}
	}
	diff := make([]float64, len(d.Points))
	for i, p := range d.Points {
		diff[i] = p.diffDB
	}
	fig, err := plot.Compare(ta, tb, diff, plot.BodeOptions{Title: "A and B, and B − A"})
	if err != nil {
		return err
	}
	return writeTo(e, c.Plot, append([]string{c.Measured, c.Output}, c.Files...), func(w io.Writer) error { return fig.Encode(w, format) })
}
