package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"nodal/cmd/nodal/notation"
	"strconv"
	"strings"

	"nodal/analysis/response"
	"nodal/analysis/symbolic"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
	"nodal/netlist"
)

// transferCmd prints the transfer function and what can be read off it.
type transferCmd struct {
	circuitArgs
	varyArgs
	In       string `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out      string `help:"Output: a response of the file, a node, or i(PART) (default: the first response, then the node named out)." placeholder:"NAME"`
	Ref      string `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
	Format   string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output   string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot     string `help:"Also draw the pole-zero map to this file (.svg or .png)." placeholder:"FILE" type:"path"`
	From     string `help:"Low end of the range a reduced model is verified over (circuits above 300 unknowns), e.g. 1mHz." placeholder:"F"`
	To       string `help:"High end of the range a reduced model is verified over, e.g. 10Hz." placeholder:"F"`
	AllPoles bool   `name:"all-poles" help:"Extract every pole and zero (the full eigenvalue problem) also above 300 unknowns, instead of the dominant ones of a verified reduced model."`
	symbolicArgs
}

// Help is the extended help with a worked example.
func (c *transferCmd) Help() string {
	return `Computes the exact rational transfer function H(s) = N(s)/D(s) of the
circuit from its MNA pencil: poles as generalised eigenvalues, zeros from
the bordered pencil, the gain from one evaluation. It prints H(s) expanded
and factored, poles and zeros (rad/s and Hz) with corner frequencies, f0, Q
and ζ, the DC gain and high-frequency asymptote, the −3 dB frequencies, the
peak gain and its frequency, the peaking above the passband gain of a low-
or high-pass, the dominant pole pair (or why there is none: "first-order:
no pole pair"), and the circuit's differential equation. D(s) is normalised so
that its lowest-order non-zero coefficient is 1. The circuit's stability
(all its natural frequencies, modes cancelled out of H included) is
stated too: a warning on standard error when it is marginal or unstable,
"stability" and "unstable_poles" in JSON; ideal op-amps are also tried
with a finite model (A0 = 10⁶, 10 MHz) to catch swapped inputs.

Examples:

    nodal transfer testdata/examples/logger_antialias.nodal --out out
    nodal transfer testdata/examples/logger_antialias.nodal --out out --format json
    nodal transfer testdata/examples/logger_antialias.nodal --out out --plot pz.svg
    nodal transfer testdata/examples/logger_antialias.nodal --out out --symbolic
    nodal transfer testdata/examples/tone_lowpass_ideal.nodal --out out --symbolic --keep R1,C1

With --symbolic, N(s) and D(s) are exact polynomials in s whose
coefficients are sums of products of part names (resistors as R, so
nothing is divided), printed by power of s with the value of each
coefficient beside it, followed by H(s) and the ODE written in the
syntax of nodal check (paste them into --tf or --ode). Ideal op-amps
contribute no symbol; a finite gain is NAME.a0. --keep keeps only the
named parts symbolic and substitutes the others exactly; use it when a
large circuit's expressions grow past the size limit. Impedances are
nodal impedance.

Above 300 unknowns the full eigenvalue problem is not attempted by
default: transfer prints the dominant poles and zeros of a reduced model
(Krylov projection, PRIMA-style, with expansion points across the range)
of the smallest order in its sequence whose H(s) matches direct solves
within 0.01 dB and 0.1° at every point of a dense grid over the range,
and says so: the order, the range, the largest error. The range is
--from/--to, else from a decade below the lowest pole to where the gain
falls 100 dB below its peak. No model that failed the check is printed.
--all-poles forces the full extraction (up to 2000 unknowns). The README
runs it on testdata/perf/cable_ladder_1000.nodal (1,002 unknowns).

Variants (a section per value, JSON an array of {variant, transfer}):

    nodal transfer testdata/examples/tone_stage.nodal --vary Ct=2n2,4n7,10n
    nodal transfer testdata/examples/speaker_crossover.nodal --out tweeter`
}

// tfRequest says which transfer function to extract: a ratio (In, Out,
// Ref), or an impedance at a source's port (Port) or between a node and gnd
// or ZRef (Node, ZRef).
type tfRequest struct {
	In, Out, Ref     string
	Port, Node, ZRef string
}

// tfResult is an extracted transfer function with what it is of.
type tfResult struct {
	tf    *transfer.TransferFunction
	sys   *mna.System
	what  string // "H(s) = v(out)/v(Vs)", "Z(s) at the port of Vs" ...
	yName string // output signal name for the ODE
	uName string // input signal name for the ODE
	unit  string // unit of H: "V/V", "Ω", ...
}

// tfProbe is a resolved tfRequest: the probe of the MNA system, and what
// the transfer function means.
type tfProbe struct {
	mna.Probe
	what         string // "" for a voltage ratio: set from the resolved source
	yName, uName string
	unit         string // "" for a voltage ratio: set from the resolved source
}

// resolveProbe checks the request and says which probe to build: a port
// or node impedance is a test current in and the voltage across it out.
func resolveProbe(c *netlist.Circuit, q tfRequest) (tfProbe, error) {
	switch {
	case q.Port != "" && q.Node != "":
		return tfProbe{}, errors.New("give one of --port or --node")
	case q.Port != "" && q.ZRef != "":
		return tfProbe{}, errors.New("--ref goes with --node: the impedance at a port is across the source's terminals")
	case q.Node != "":
		what := fmt.Sprintf("Z(s) at node %s to gnd (independent sources zeroed)", q.Node)
		if q.ZRef != "" {
			what = fmt.Sprintf("Z(s) between nodes %s and %s (independent sources zeroed)", q.Node, q.ZRef)
		}
		return tfProbe{Probe: mna.NodeImpedance(q.Node, q.ZRef), what: what, yName: "v", uName: "i", unit: "Ω"}, nil
	case q.Port != "":
		return tfProbe{Probe: mna.SourceImpedance(q.Port), what: fmt.Sprintf("Z(s) at the port of %s (the source removed)", q.Port), yName: "v", uName: "i", unit: "Ω"}, nil
	}
	p, _, err := probeFor(c, q.In, q.Out, q.Ref)
	return tfProbe{Probe: p, yName: "y", uName: "u"}, err
}

// describe fills in the meaning and unit of a voltage or current ratio
// once the input source is resolved.
func (p tfProbe) describe(c *netlist.Circuit, in mna.Input, out mna.Output) (what, unit string) {
	if p.what != "" {
		return p.what, p.unit
	}
	src, _ := c.Part(in.Source)
	unit = "V/V"
	if src != nil && src.Kind == netlist.CurrentSource {
		unit = "V/A"
		if out.Kind == mna.PartCurrent {
			unit = "A/A"
		}
	} else if out.Kind == mna.PartCurrent {
		unit = "A/V"
	}
	return fmt.Sprintf("H(s) = %s / %s", response.OutputLabel(out), in.Source), unit
}

// extractTF builds the system and extracts the requested transfer function.
func extractTF(l *loaded, q tfRequest) (*tfResult, error) {
	p, sys, err := buildTF(l, q)
	if err != nil {
		return nil, err
	}
	return extractFrom(l, p, sys)
}

// buildTF resolves the request and builds its MNA system.
func buildTF(l *loaded, q tfRequest) (tfProbe, *mna.System, error) {
	p, err := resolveProbe(l.circuit, q)
	if err != nil {
		return p, nil, err
	}
	sys, err := mna.Build(l.circuit, p.Ex, p.Ob)
	if err != nil {
		return p, nil, impedanceError(p, err)
	}
	return p, sys, nil
}

// extractFrom extracts the full transfer function of a built system.
func extractFrom(l *loaded, p tfProbe, sys *mna.System) (*tfResult, error) {
	tf, err := transfer.Extract(sys)
	if err != nil {
		return nil, impedanceError(p, err)
	}
	what, unit := p.describe(l.circuit, sys.Input, sys.Output)
	return &tfResult{tf: tf, sys: sys, what: what, yName: p.yName, uName: p.uName, unit: unit}, nil
}

// impedanceError says, for the input impedance of a source whose system
// (source replaced by a test current) is singular for every s, that the
// test current has no path: the impedance is infinite. The numeric and
// the symbolic engines give the same message.
func impedanceError(p tfProbe, err error) error {
	var se *mna.StructureError
	if p.Ex.Kind == mna.SourceTest && (errors.As(err, &se) || errors.Is(err, symbolic.ErrSingular)) {
		return fmt.Errorf("%s delivers no current: its input impedance is infinite", p.Ex.Source)
	}
	return err
}

// Run prints the transfer function report.
func (c *transferCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	if err := c.symbolicArgs.check(); err != nil {
		return err
	}
	if len(c.Vary) > 0 {
		if c.Symbolic {
			return errors.New("--vary goes with the numeric transfer function: run it without --symbolic")
		}
		return c.runVariants(e)
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	if c.Symbolic {
		if c.From != "" || c.To != "" || c.AllPoles {
			return errors.New("--from, --to and --all-poles go with the numeric transfer function: run it without --symbolic")
		}
		return c.runSymbolic(e, l)
	}
	p, sys, err := buildTF(l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref})
	if err != nil {
		return err
	}
	if sys.Size() > reducedAboveUnknowns && !c.AllPoles {
		return c.runReduced(e, l, p, sys)
	}
	if c.From != "" || c.To != "" {
		return fmt.Errorf("--from and --to set the range of a reduced model, made for circuits above %d unknowns; this one has %d and gets the full extraction", reducedAboveUnknowns, sys.Size())
	}
	r, err := extractFrom(l, p, sys)
	if err != nil {
		if sys.Size() > reducedAboveUnknowns {
			return fmt.Errorf("%w (without --all-poles, transfer gives the dominant poles and zeros of a reduced model verified over a frequency range)", err)
		}
		return err
	}
	if err := c.plotRoots(e, r.tf, "poles (×) and zeros (○) of "+r.what); err != nil {
		return err
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	rep := newTFReport(r)
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			doc := tfDoc(rep)
			doc.stabilityJSON = newStabilityJSON(stab)
			return writeJSON(w, doc)
		}
		warnStability(e.stderr, stab)
		return rep.table(w)
	})
}

// plotRoots draws the pole-zero map of h to --plot, if given.
func (c *transferCmd) plotRoots(e *env, h *transfer.TransferFunction, title string) error {
	if c.Plot == "" {
		return nil
	}
	format, err := plot.FormatFromPath(c.Plot)
	if err != nil {
		return err
	}
	fig, err := plot.PoleZero(h.Poles, h.Zeros, plot.PoleZeroOptions{Title: title})
	if err != nil {
		return err
	}
	return writeTo(e, c.Plot, []string{c.File, c.Output}, func(w io.Writer) error { return fig.Encode(w, format) })
}

// variantTFJSON is the transfer function of one --vary value.
type variantTFJSON struct {
	Variant  []variantJSON `json:"variant"`
	Transfer any           `json:"transfer"`
}

// runVariants prints the transfer function for every --vary value: a
// section each, or a JSON array of {variant, transfer}; with --plot, one
// pole-zero map with every value's roots in its own colour.
func (c *transferCmd) runVariants(e *env) error {
	if err := checkOutputs([]string{c.File}, c.Output, c.Plot); err != nil {
		return err
	}
	format := ""
	if c.Plot != "" {
		var err error
		if format, err = plot.FormatFromPath(c.Plot); err != nil {
			return err
		}
	}
	vs, err := c.variants()
	if err != nil {
		return err
	}
	ls, err := c.loadVariants(e, vs)
	if err != nil {
		return err
	}
	reps := make([]*tfReport, len(ls))
	sets := make([]plot.RootSet, len(ls))
	for i, l := range ls {
		r, err := extractTF(l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref})
		if err != nil {
			return fmt.Errorf("%s: %w", vs[i].label(), err)
		}
		reps[i] = newTFReport(r)
		sets[i] = plot.RootSet{Label: vs[i].label(), Poles: r.tf.Poles, Zeros: r.tf.Zeros}
	}
	if c.Plot != "" {
		fig, err := plot.PoleZeroSets(sets, plot.PoleZeroOptions{Title: "poles (×) and zeros (○) of " + reps[0].r.what + ", per value"})
		if err != nil {
			return err
		}
		if err := writeTo(e, c.Plot, []string{c.File, c.Output}, func(w io.Writer) error { return fig.Encode(w, format) }); err != nil {
			return err
		}
	}
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			docs := make([]variantTFJSON, len(reps))
			for i, rep := range reps {
				docs[i] = variantTFJSON{Variant: vs[i].json(), Transfer: tfDoc(rep)}
			}
			return writeJSON(w, docs)
		}
		for i, rep := range reps {
			if i > 0 {
				fmt.Fprintln(w)
			}
			fmt.Fprintf(w, "── %s ──\n", vs[i].label())
			if err := rep.table(w); err != nil {
				return err
			}
		}
		return nil
	})
}

// tfReport holds every figure read off a transfer function, computed once
// for the table, the JSON and the HTML report.
type tfReport struct {
	r         *tfResult
	dc, hf    transfer.Asymptote
	bw        *transfer.Bandwidth
	bwErr     error
	peak      *transfer.Peak
	peakErr   error
	pairs     []transfer.RootPair
	zeroPairs []transfer.RootPair
	ode       transfer.ODE
	// peaking is the peak above the passband gain of a low- or high-pass
	// (dB); peakingErr is set for any other response.
	peaking    float64
	peakingErr error
	// pair is the dominant second-order section (f0, Q); pairErr says why
	// there is none ("first-order: no pole pair").
	pair    transfer.RootPair
	pairErr error
}

// noPeakingDB is how close to the passband gain (dB) the peak of a low- or
// high-pass must be to print "no peaking".
const noPeakingDB = 0.01

// newTFReport computes the report figures.
func newTFReport(r *tfResult) *tfReport {
	rep := &tfReport{r: r, dc: r.tf.DCGain(), hf: r.tf.HighFreqAsymptote(), pairs: r.tf.PolePairs(), zeroPairs: r.tf.ZeroPairs(), ode: r.tf.ODE()}
	if bw, err := r.tf.F3dB(); err == nil {
		rep.bw = &bw
	} else {
		rep.bwErr = err
	}
	if pk, err := r.tf.Peak(); err == nil {
		rep.peak = &pk
	} else {
		rep.peakErr = err
	}
	rep.peaking, rep.peakingErr = r.tf.PeakingDB()
	rep.pair, rep.pairErr = r.tf.DominantPair()
	return rep
}

// table prints the report for the terminal.
func (rep *tfReport) table(w io.Writer) error {
	if err := rep.closedForm(w); err != nil {
		return err
	}
	fmt.Fprintln(w)
	t := newTable(w, "figure", "value")
	rows := relabelForUnit(rep.figureRows(), rep.r.unit)
	for _, row := range rows {
		if err := t.row(row[0], row[1]); err != nil {
			return err
		}
	}
	return t.render()
}

// closedForm prints what the function is, its expanded, factored and
// zero-pole forms, its ODE, poles and zeros.
func (rep *tfReport) closedForm(w io.Writer) error {
	h := rep.r.tf
	fmt.Fprintf(w, "%s  [%s]\n\n", rep.r.what, rep.r.unit)
	if h.Fits() {
		fmt.Fprintf(w, "expanded:   %s\n", rationalText(h.Num, h.Den))
	} else {
		num, den, sc := h.ScaledPoly()
		fmt.Fprintf(w, "expanded:   %s  (ŝ = s/%s: the coefficients in s do not fit a float64)\n",
			strings.ReplaceAll(rationalText(num, den), "s", "ŝ"), engNumber(sc))
	}
	fmt.Fprintf(w, "factored:   %s\n", factoredText(h))
	fmt.Fprintf(w, "zero-pole:  %s\n", zpkText(h))
	fmt.Fprintln(w, "            (s and every frequency in rad/s)")
	fmt.Fprintf(w, "\norder %d; differential equation (%s output, %s input, t in s):\n    %s\n", h.Order(), rep.r.yName, rep.r.uName, odeText(rep.ode, rep.r.yName, rep.r.uName))
	for _, cz := range h.Cancelled {
		fmt.Fprintf(w, "cancelled pole-zero pair at s = %s rad/s (a mode the output does not see)\n", complexText(cz))
	}
	fmt.Fprintln(w)
	return rootsTables(w, h)
}

// rootsTables prints the poles and the zeros (or "no finite zeros").
func rootsTables(w io.Writer, h *transfer.TransferFunction) error {
	if err := rootsTable(w, "poles", h.Poles); err != nil {
		return err
	}
	if len(h.Zeros) > 0 {
		fmt.Fprintln(w)
		return rootsTable(w, "zeros", h.Zeros)
	}
	fmt.Fprintln(w, "\nno finite zeros")
	return nil
}

// figureRows are the name/value rows of the gain figures.
func (rep *tfReport) figureRows() [][2]string {
	var rows [][2]string
	switch {
	case rep.dc.Power == 0:
		rows = append(rows, [2]string{"DC gain", fmt.Sprintf("%s (%s dB)", num(rep.dc.Gain), fixed(rep.dc.GainDB, 3))})
	case rep.dc.Power > 0:
		rows = append(rows, [2]string{"DC gain", fmt.Sprintf("0 (rises %+g dB/decade from DC)", rep.dc.SlopeDBPerDecade)})
	default:
		rows = append(rows, [2]string{"DC gain", fmt.Sprintf("unbounded (integrator, %+g dB/decade)", rep.dc.SlopeDBPerDecade)})
	}
	if rep.hf.Power == 0 {
		rows = append(rows, [2]string{"high-frequency gain", fmt.Sprintf("%s (%s dB), flat", num(rep.hf.Gain), fixed(rep.hf.GainDB, 3))})
	} else {
		rows = append(rows, [2]string{"high-frequency asymptote", fmt.Sprintf("%s·s%s: %+g dB/decade", engNumber(rep.hf.Gain), notation.Superscript(rep.hf.Power), rep.hf.SlopeDBPerDecade)})
	}
	if rep.bw != nil {
		var fs []string
		for _, f := range rep.bw.CrossingsHz {
			fs = append(fs, notation.Eng(f, "Hz"))
		}
		v := "none"
		if len(fs) > 0 {
			v = strings.Join(fs, ", ")
		}
		rows = append(rows, [2]string{"−3 dB frequencies", fmt.Sprintf("%s (reference %s dB)", v, fixed(rep.bw.RefDB, 3))})
	} else {
		rows = append(rows, [2]string{"−3 dB frequencies", "none: " + rep.bwErr.Error()})
	}
	if rep.peak != nil {
		where := notation.Eng(rep.peak.FreqHz, "Hz")
		if rep.peak.OmegaRad == 0 {
			where = "DC"
		} else if math.IsInf(rep.peak.OmegaRad, 1) {
			where = "the high-frequency limit"
		}
		rows = append(rows, [2]string{"peak gain", fmt.Sprintf("%s dB at %s", fixed(rep.peak.GainDB, 3), where)})
	} else {
		rows = append(rows, [2]string{"peak gain", "none: " + rep.peakErr.Error()})
	}
	// Peaking is only of a low- or high-pass: a band-pass resonance has no
	// passband to rise above, so it is never "no peaking".
	if rep.peakingErr == nil {
		if rep.peaking < noPeakingDB {
			rows = append(rows, [2]string{"peaking", "no peaking (within 0.01 dB of the passband gain)"})
		} else {
			rows = append(rows, [2]string{"peaking", fmt.Sprintf("%s dB above the passband gain", fixed(rep.peaking, 3))})
		}
	}
	if rep.pairErr == nil {
		rows = append(rows, [2]string{"dominant pole pair", fmt.Sprintf("f0 %s, Q %s", notation.Eng(rep.pair.F0Hz, "Hz"), notation.Q(rep.pair.Q))})
	} else {
		rows = append(rows, [2]string{"dominant pole pair", "none: " + rep.pairErr.Error()})
	}
	return rows
}

// rootsTable prints poles or zeros with their meaning, each distinct
// root once with its multiplicity.
func rootsTable(w io.Writer, what string, roots []complex128) error {
	fmt.Fprintln(w, what)
	t := newTable(w, "re_rad_s", "im_rad_s", "freq_hz", "multiplicity", "meaning")
	for _, d := range transfer.DistinctRoots(roots) {
		r := d.Root
		mag := math.Hypot(real(r), imag(r))
		meaning := ""
		switch {
		case r == 0:
			meaning = "at s = 0"
		case imag(r) == 0:
			meaning = "real: corner " + notation.Eng(mag/(2*math.Pi), "Hz")
			if real(r) > 0 {
				meaning += ", right half-plane"
			}
		default:
			p := transfer.PairOf(r)
			meaning = fmt.Sprintf("pair: f0 %s, Q %s, ζ %s", notation.Eng(p.F0Hz, "Hz"), notation.Q(p.Q), trimFloat(p.Zeta, 4))
			if real(r) > 0 {
				meaning += ", right half-plane"
			}
		}
		if err := t.row(num(real(r)), num(imag(r)), num(mag/(2*math.Pi)), strconv.Itoa(d.Multiplicity), meaning); err != nil {
			return err
		}
	}
	return t.render()
}
