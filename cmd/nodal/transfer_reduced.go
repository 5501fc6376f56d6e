package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"math/cmplx"

	"nodal/analysis/reduce"
	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/notation"
	"nodal/mna"
	"nodal/netlist/syntax"
)

// reducedAboveUnknowns is the size above which transfer gives the
// dominant poles and zeros of a verified reduced model instead of the
// full extraction (--all-poles forces the full one).
const reducedAboveUnknowns = 300

// exploreOrder is the order of the unverified model whose poles choose
// the default range of a reduction.
const exploreOrder = 24

// reducedRange is the frequency range (Hz) a reduction is verified over:
// --from/--to when given, else exploreRange.
func (c *transferCmd) reducedRange(e *env, l *loaded, sys *mna.System) (float64, float64, error) {
	var from, to float64
	var err error
	if c.From != "" {
		if from, err = syntax.ParseFlag("--from", c.From, "Hz"); err != nil {
			return 0, 0, err
		}
	}
	if c.To != "" {
		if to, err = syntax.ParseFlag("--to", c.To, "Hz"); err != nil {
			return 0, 0, err
		}
	}
	if c.From == "" || c.To == "" {
		lo, hi, err := exploreRange(e, l, sys, from)
		if err != nil {
			return 0, 0, err
		}
		if c.From == "" {
			from = lo
		}
		if c.To == "" {
			to = hi
		}
	}
	if !(from > 0) || math.IsInf(from, 0) {
		return 0, 0, fmt.Errorf("--from must be above 0 Hz for a reduced model (got %s)", notation.Eng(from, "Hz"))
	}
	if !(to > from) || math.IsInf(to, 0) || to > maxFrequencyHz {
		return 0, 0, fmt.Errorf("--to (%s) must be above --from (%s) and at most %s", notation.Eng(to, "Hz"), notation.Eng(from, "Hz"), notation.Eng(maxFrequencyHz, "Hz"))
	}
	return from, to, nil
}

// scanStepsPerDecade is the density of the direct solves that find the
// top of the default range.
const scanStepsPerDecade = 4

// exploreRange is the default range of a reduction, like a sweep's (the
// response within shapeWindowDB of its largest gain): from a decade below
// the lowest pole of an unverified model expanded about DC (about the
// parts' lowest corner when Y(0) is singular), rounded down to a decade,
// up to where direct solves stepping up from there (4 a decade) first
// find the gain shapeWindowDB below the largest so far (found by
// bisection when that step fell off a cliff; rounded up to 1,
// 2 or 5 times a power of ten when the gain there is still within twice
// the window), or to ten times the parts' highest corner when it never
// falls that far. from (Hz), when above 0, is a given low end.
func exploreRange(e *env, l *loaded, sys *mna.System, from float64) (float64, float64, error) {
	pLo, pHi := response.DefaultRange(l.circuit)
	lo := from
	if !(lo > 0) {
		tf, err := reduce.Explore(e.ctx, sys, 0, exploreOrder)
		var se *mna.SingularError
		if errors.As(err, &se) {
			tf, err = reduce.Explore(e.ctx, sys, 2*math.Pi*pLo, exploreOrder)
		}
		if err != nil {
			return 0, 0, fmt.Errorf("no default range for the reduced model (%w): give --from and --to", err)
		}
		lo = pLo
		for _, p := range tf.Poles {
			if a := cmplx.Abs(p) / (2 * math.Pi); a > 0 {
				lo = math.Pow(10, math.Floor(math.Log10(a/10)+0.01))
				break
			}
		}
	}
	w := mna.NewSweeper(sys)
	limit := 10 * math.Max(pHi, lo)
	gain := func(f float64) (float64, bool) {
		h, _, err := w.Eval(complex(0, 2*math.Pi*f))
		return cmplx.Abs(h), err == nil // an error: a pole on the axis
	}
	window := math.Pow(10, -shapeWindowDB/20.0)
	top := 0.0
	f, prev := lo, 0.0
	for ; f < limit; prev, f = f, f*math.Pow(10, 1.0/scanStepsPerDecade) {
		if err := e.ctx.Err(); err != nil {
			return 0, 0, err
		}
		g, ok := gain(f)
		if !ok {
			continue
		}
		top = math.Max(top, g)
		if top > 0 && g < top*window {
			break
		}
	}
	// A cliff (a line above its cut-off falls thousands of dB in one
	// step): bisect, in log f, for where the gain crosses the window.
	if g, ok := gain(f); ok && prev > 0 && f < limit && g < top*window*window {
		a, b := prev, f
		for i := 0; i < 30 && b/a > 1.001; i++ {
			m := math.Sqrt(a * b)
			if gm, ok := gain(m); ok && gm < top*window {
				b = m
			} else {
				a = m
			}
		}
		f = b
	}
	f = math.Min(f, limit)
	// Rounded up only while the gain there is within twice the window
	// of the peak: past a steep roll-off (a line above its cut-off) the
	// rounded end could be thousands of dB down, where nothing can be
	// checked.
	if r := roundUp125(f); r <= limit {
		if h, _, err := w.Eval(complex(0, 2*math.Pi*r)); err == nil && cmplx.Abs(h) >= top*math.Pow(10, -2*shapeWindowDB/20.0) {
			return lo, r, nil
		}
	}
	return lo, f, nil
}

// roundUp125 rounds f > 0 up to 1, 2 or 5 times a power of ten.
func roundUp125(f float64) float64 {
	d := math.Pow(10, math.Floor(math.Log10(f)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*d >= f*(1-1e-12) {
			return m * d
		}
	}
	return 10 * d
}

// runReduced prints the dominant poles and zeros of a verified reduced
// model of the system (more than reducedAboveUnknowns unknowns).
func (c *transferCmd) runReduced(e *env, l *loaded, p tfProbe, sys *mna.System) error {
	from, to, err := c.reducedRange(e, l, sys)
	if err != nil {
		return err
	}
	m, err := reduce.Reduce(e.ctx, sys, reduce.Options{FromHz: from, ToHz: to})
	if err != nil {
		if errors.Is(err, reduce.ErrNotVerified) {
			return fmt.Errorf("transfer function of %d unknowns: %w; nothing is printed that was not verified: try a narrower range (--from, --to), or --all-poles for the full extraction", sys.Size(), err)
		}
		return fmt.Errorf("transfer function of %d unknowns (reduced model): %w", sys.Size(), err)
	}
	what, unit := p.describe(l.circuit, sys.Input, sys.Output)
	r := &tfResult{tf: m.TF, sys: sys, what: what, yName: p.yName, uName: p.uName, unit: unit}
	if err := c.plotRoots(e, m.TF, fmt.Sprintf("dominant poles (×) and zeros (○) of %s: reduced model of order %d", r.what, m.Order)); err != nil {
		return err
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	rep := newReducedReport(r, m)
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			doc := tfDoc(rep)
			doc.ODE, doc.HFAsymptote = "", nil
			doc.Reduced = true
			doc.ReducedModel = newReducedJSON(m)
			doc.stabilityJSON = newStabilityJSON(stab)
			return writeJSON(w, doc)
		}
		warnStability(e.stderr, stab)
		return rep.reducedTable(w, m)
	})
}

// newReducedReport is newTFReport for a reduced model: the figures read
// off the model only where it was verified (the −3 dB frequencies and the
// peak inside the range; the DC gain from a direct solve).
func newReducedReport(r *tfResult, m *reduce.Model) *tfReport {
	rep := newTFReport(r)
	if rep.bw != nil {
		var in []float64
		for _, f := range rep.bw.CrossingsHz {
			if f >= m.FromHz && f <= m.ToHz {
				in = append(in, f)
			}
		}
		bw := *rep.bw
		bw.CrossingsHz = in
		rep.bw = &bw
	}
	if rep.peak != nil && !(rep.peak.FreqHz >= m.FromHz && rep.peak.FreqHz <= m.ToHz) && !(rep.peak.OmegaRad == 0 && r.tf.DirectDC != nil) {
		rep.peak, rep.peakErr = nil, errors.New("the reduced model's largest gain is outside the verified range")
		rep.peakingErr = rep.peakErr
	}
	rep.pair, rep.pairErr = dominantPairInRange(r.tf, m.ToHz)
	return rep
}

// dominantPairInRange is transfer.DominantPair of the reduced model's poles
// of at most toHz (the top of the verified range): a pole beyond the range
// is there only to match the response at its end, not one of the circuit's.
// The reduced model of a 1000-section RC ladder verified over 1 mHz–10 Hz
// has a complex pair at 1.76 kHz, so f0 1.763 kHz and Q 0.574 were printed
// for a network whose poles are all real (Q ≤ 0.5).
func dominantPairInRange(h *transfer.TransferFunction, toHz float64) (transfer.RootPair, error) {
	var in []complex128
	for _, p := range h.Poles {
		if cmplx.Abs(p) <= 2*math.Pi*toHz {
			in = append(in, p)
		}
	}
	pair, err := (&transfer.TransferFunction{Poles: in}).DominantPair()
	if err != nil {
		return pair, fmt.Errorf("among the poles in the verified range (up to %s): %w", notation.Eng(toHz, "Hz"), err)
	}
	return pair, nil
}

// reducedStatement says what the reduced model is and how it was checked.
func reducedStatement(m *reduce.Model) string {
	return fmt.Sprintf("dominant poles and zeros of a reduced model of order %d (of %d unknowns: Krylov projection, PRIMA-style, at %d expansion points),\n"+
		"verified against direct solves at %d frequencies over %s–%s: within %s dB and %s° (limits %g dB, %g°).\n"+
		"Those well inside the range approximate the circuit's dominant poles and zeros; those near or past its ends are the reduced\n"+
		"model's own, what it takes to match the response there. The circuit has other poles and zeros (--all-poles: the full extraction).",
		m.Order, m.Unknowns, len(m.Expansions), m.CheckPoints, notation.Eng(m.FromHz, "Hz"), notation.Eng(m.ToHz, "Hz"),
		trimFloat(m.MaxErrDB, 2), trimFloat(m.MaxErrDeg, 2), m.TolDB, m.TolDeg)
}

// reducedTable prints the reduced model's report for the terminal.
func (rep *tfReport) reducedTable(w io.Writer, m *reduce.Model) error {
	h := rep.r.tf
	fmt.Fprintf(w, "%s  [%s]\n\n%s\n", rep.r.what, rep.r.unit, reducedStatement(m))
	if m.Stable {
		fmt.Fprintln(w, "Every pole of the reduced model is in the left half-plane (a property of the reduced model).")
	} else {
		fmt.Fprintln(w, "The reduced model has poles on or right of the jω axis.")
	}
	fmt.Fprintf(w, "\nfactored:   %s\n", factoredText(h))
	fmt.Fprintf(w, "zero-pole:  %s\n", zpkText(h))
	fmt.Fprintln(w, "            (s and every frequency in rad/s)")
	fmt.Fprintln(w)
	if err := rootsTables(w, h); err != nil {
		return err
	}
	fmt.Fprintln(w)
	t := newTable(w, "figure", "value")
	var rows [][2]string
	for _, row := range rep.figureRows() {
		if row[0] == "high-frequency gain" || row[0] == "high-frequency asymptote" {
			continue // the reduced model's, not verified past the range
		}
		if row[0] == "−3 dB frequencies" && rep.bw != nil {
			row[1] += " within the range"
		}
		rows = append(rows, row)
	}
	for _, row := range relabelForUnit(rows, rep.r.unit) {
		if err := t.row(row[0], row[1]); err != nil {
			return err
		}
	}
	return t.render()
}

// reducedJSON says, in a transfer document, that the roots are those of
// a reduced model and how it was verified.
type reducedJSON struct {
	Order         int           `json:"order"`
	BasisSize     int           `json:"basis_size"`
	Unknowns      int           `json:"unknowns"`
	FromHz        float64       `json:"from_hz"`
	ToHz          float64       `json:"to_hz"`
	CheckPoints   int           `json:"check_points"`
	MaxErrorDB    float64       `json:"max_error_db"`
	MaxErrorDeg   float64       `json:"max_error_deg"`
	TolDB         float64       `json:"tol_db"`
	TolDeg        float64       `json:"tol_deg"`
	Expansions    []complexJSON `json:"expansion_points_rad_s"`
	ReducedStable bool          `json:"reduced_model_stable"`
}

func newReducedJSON(m *reduce.Model) *reducedJSON {
	return &reducedJSON{Order: m.Order, BasisSize: m.Basis, Unknowns: m.Unknowns, FromHz: m.FromHz, ToHz: m.ToHz, CheckPoints: m.CheckPoints,
		MaxErrorDB: m.MaxErrDB, MaxErrorDeg: m.MaxErrDeg, TolDB: m.TolDB, TolDeg: m.TolDeg, Expansions: rootsJSON(m.Expansions), ReducedStable: m.Stable}
}
