package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot/vg"

	"nodal/analysis/noise"
	"nodal/analysis/response"
	"nodal/analysis/stability"
	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
	"nodal/netlist"
)

// noiseCmd prints the output and input-referred noise of a circuit.
type noiseCmd struct {
	circuitArgs
	varyArgs
	probeArgs
	freqArgs
	Band      string `help:"Integrate over F1..F2 (default: the sweep range), e.g. 20Hz..20kHz." placeholder:"F1..F2"`
	SignalRms string `help:"RMS of the wanted signal at the output (V, or A for a current output): adds the SNR over the band." placeholder:"V"`
	Traces    int    `help:"Largest contributors drawn as their own traces with --plot." default:"4"`
	Format    string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output    string `short:"o" help:"Write the table or JSON to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot      string `help:"Also draw the noise densities on log-log axes to this file (.svg or .png)." placeholder:"FILE" type:"path"`
	tempArgs
}

// Help is the extended help with a worked example.
func (c *noiseCmd) Help() string {
	return `Small-signal noise at one output: the thermal noise 4kTR of every resistor
(k = 1.380649e-23 J/K, exact; T from --temp, default 300 K) unless it is
marked noiseless, and each opamp's input noise en= (V/√Hz, in series with
its + input) and in= (A/√Hz, from each input to gnd), with 1/f corners
fen= and fin= (density ∝ √(1 + fc/f)). Sources are uncorrelated: their
output powers add. Each frequency costs one factorisation and one
transposed solve, however many sources there are.

Columns: freq_hz; the output density out_v_per_rthz (out_a_per_rthz for
--out i(PART)); the input-referred density in_*_per_rthz = output density
/ |H| from the input source (--in, or the only source; absent when the
circuit has none); the largest contributor and its share of the output
power. Then over the band: out_rms, in_rms (√∫ S_out/|H|² df), the
equivalent noise bandwidth ∫|H|² df / max|H|², each source's RMS and
share (an opamp's en, in+ and in- are separate rows: U1.en, U1.in+,
U1.in-), and the SNR in dB with --signal-rms.

Integration: globally adaptive Simpson quadrature in ln f. It starts from
50 intervals per decade and keeps halving the interval with the largest
Richardson error estimate until the summed estimate is below 1e-5 of the
total (0.1 % is promised); the estimate and the number of frequencies
evaluated are printed. A band it cannot resolve is an error.

Example (testdata/examples/photodiode_tia.nodal, a photodiode
transimpedance front end; the input is the photocurrent Iph, so the
input-referred noise is a current):

    nodal noise testdata/examples/photodiode_tia.nodal --out out \
        --from 10Hz --to 10MHz --per-decade 2 --band 100Hz..100kHz
    nodal noise testdata/examples/photodiode_tia.nodal --out out \
        --temp 85degC --signal-rms 100mV --format json
    nodal noise testdata/examples/photodiode_tia.nodal --out out --plot noise.svg`
}

// noiseRun is a computed noise analysis.
type noiseRun struct {
	a    *noise.Analyzer
	sp   *noise.Spectrum
	band *noise.Integrated // nil without a band
	snr  *float64
	stab *stability.Result // the circuit's stability (warned, and in JSON)
}

// tempArgs is the --temp flag of every command that computes noise
// (noise, and the noise metrics of verify, tolerance and report).
type tempArgs struct {
	Temp string `help:"Temperature of every resistor for noise: kelvin (300K) or degrees Celsius (85degC); a bare number is refused." default:"300K" placeholder:"T"`
}

// kelvin is the temperature of --temp, K.
func (t tempArgs) kelvin() (float64, error) { return parseTemperature(t.Temp) }

// parseTemperature reads a temperature in kelvin ("300K") or degrees
// Celsius ("85degC", "85°C") and returns kelvin (> 0). A number without a
// unit is an error naming both readings: the unit is never guessed.
func parseTemperature(s string) (float64, error) {
	t := strings.TrimSpace(s)
	offset := 0.0
	for _, suf := range []string{"degC", "°C"} {
		if strings.HasSuffix(t, suf) {
			t, offset = strings.TrimSpace(strings.TrimSuffix(t, suf)), 273.15
			break
		}
	}
	bare := false
	if offset == 0 {
		bare = !strings.HasSuffix(t, "K")
		t = strings.TrimSpace(strings.TrimSuffix(t, "K"))
	}
	v, err := strconv.ParseFloat(t, 64)
	if err == nil && bare {
		// A bare number could be either unit: never guess.
		return 0, fmt.Errorf("--temp %q: give the unit, %sK (kelvin) or %sdegC (degrees Celsius)", s, t, t)
	}
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("--temp %q: want kelvin (300K) or degrees Celsius (85degC)", s)
	}
	if v+offset <= 0 {
		return 0, fmt.Errorf("--temp %q: %g K is not above absolute zero", s, v+offset)
	}
	return v + offset, nil
}

// parseBand reads "F1..F2" in Hz with 0 < F1 < F2.
func parseBand(s string) (float64, float64, error) {
	a, b, ok := strings.Cut(s, "..")
	if !ok {
		return 0, 0, fmt.Errorf("--band %q: write F1..F2, e.g. 20Hz..20kHz", s)
	}
	lo, err := netlist.ParseValue(strings.TrimSpace(a), "Hz")
	if err != nil {
		return 0, 0, fmt.Errorf("--band: %w", err)
	}
	hi, err := netlist.ParseValue(strings.TrimSpace(b), "Hz")
	if err != nil {
		return 0, 0, fmt.Errorf("--band: %w", err)
	}
	if !(lo > 0) || !(hi > lo) || math.IsInf(hi, 0) {
		return 0, 0, fmt.Errorf("--band %q: want 0 < F1 < F2", s)
	}
	return lo, hi, nil
}

// noiseConfig chooses the input: --in, else the only independent source,
// else none.
func noiseConfig(c *netlist.Circuit, in string, out mna.Observation, tempK float64) noise.Config {
	cfg := noise.Config{Out: out, Input: in, HasInput: in != "", TempK: tempK}
	if in == "" {
		n := 0
		for i := range c.Parts {
			if k := c.Parts[i].Kind; k == netlist.VoltageSource || k == netlist.CurrentSource {
				n++
			}
		}
		cfg.HasInput = n == 1
	}
	return cfg
}

// Run computes and prints the noise.
func (c *noiseCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	if len(c.Vary) > 0 {
		return runVariedCmd(e, &c.circuitArgs, &c.Output, &c.Vary, c.Plot, c.Format, c.Run, noiseOverlay)
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	tempK, err := c.kelvin()
	if err != nil {
		return err
	}
	pr, err := c.probe(l)
	if err != nil {
		return err
	}
	a, err := noise.New(l.circuit, noiseConfig(l.circuit, pr.Ex.Source, pr.Ob, tempK))
	if err != nil {
		return err
	}
	freqs, err := c.frequencies(func() (float64, float64) {
		if !a.HasInput() {
			return response.DefaultRange(l.circuit)
		}
		sys, err := mna.Build(l.circuit, mna.Input{Source: a.Input}, pr.Ob)
		if err != nil {
			return response.DefaultRange(l.circuit)
		}
		return rangeOf(l, systemTF(sys))
	})
	if err != nil {
		return err
	}
	if len(freqs) > maxPoints {
		return fmt.Errorf("%d frequencies; at most %d", len(freqs), maxPoints)
	}
	for _, f := range freqs {
		if !(f > 0) {
			return fmt.Errorf("noise needs frequencies above 0 Hz (got %s)", notation.Eng(f, "Hz"))
		}
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	run := &noiseRun{a: a, stab: stab}
	if run.sp, err = a.Spectrum(e.ctx, freqs); err != nil {
		return err
	}
	lo, hi := freqs[0], freqs[len(freqs)-1]
	if c.Band != "" {
		if lo, hi, err = parseBand(c.Band); err != nil {
			return err
		}
	}
	if hi > lo {
		if run.band, err = a.Integrate(e.ctx, lo, hi); err != nil {
			return err
		}
	}
	if c.SignalRms != "" {
		if run.band == nil {
			return fmt.Errorf("--signal-rms needs a band: give --band F1..F2")
		}
		sig, err := netlist.ParseValue(c.SignalRms, a.OutUnit)
		if err != nil {
			return fmt.Errorf("--signal-rms: %w", err)
		}
		if !(sig > 0) || math.IsInf(sig, 0) {
			return fmt.Errorf("--signal-rms %q: want a value > 0", c.SignalRms)
		}
		if run.band.OutRMS == 0 {
			return fmt.Errorf("--signal-rms: the output has no noise in the band, the SNR is unbounded")
		}
		snr := 20 * math.Log10(sig/run.band.OutRMS)
		run.snr = &snr
	}
	if c.Plot != "" && e.plotData != nil {
		e.plotData(variantPlot[noiseTotal]{noiseTitle(l, run), noiseTotal{
			trace:  plot.DensityTrace{FreqHz: run.sp.FreqHz, Density: run.sp.OutDensity},
			yLabel: noiseYLabel(run)}})
	} else if c.Plot != "" {
		if err := writeNoisePlot(e, c.Plot, []string{c.File, c.Output}, l, run, c.Traces); err != nil {
			return err
		}
	}
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, noiseJSON(run))
		}
		warnStability(e.stderr, run.stab)
		return noiseTable(w, run)
	})
}

// unitWord is the lower-case unit in a column name: "v" or "a".
func unitWord(unit string) string { return strings.ToLower(unit) }

// noiseColumns are the unit-bearing names of the output columns.
type noiseColumns struct {
	out, in, rms, inRMS string
}

func columnsFor(a *noise.Analyzer) noiseColumns {
	c := noiseColumns{out: "out_" + unitWord(a.OutUnit) + "_per_rthz", rms: "rms_" + unitWord(a.OutUnit),
		inRMS: "in_rms_" + unitWord(a.InUnit)}
	if a.HasInput() {
		c.in = "in_" + unitWord(a.InUnit) + "_per_rthz"
	}
	return c
}

// temperatureText writes a temperature in kelvin and degrees Celsius.
func temperatureText(k float64) string {
	return fmt.Sprintf("%s K (%s °C)", trimFloat(k, 6), trimFloat(k-273.15, 6))
}

// noiseMetricsNote is the line that says at which temperature the noise
// metrics among metrics (noise@F, noise_rms@F1..F2) were taken, "" when
// there are none.
func noiseMetricsNote(metrics []string, tempK float64) string {
	for _, m := range metrics {
		if spec, _, err := netlist.ParseMetric(m); err == nil && spec.Noise {
			return "noise metrics at " + temperatureText(tempK)
		}
	}
	return ""
}

// noiseTable prints the spectrum and the band figures.
func noiseTable(w io.Writer, r *noiseRun) error {
	a, cols := r.a, columnsFor(r.a)
	fmt.Fprintf(w, "noise at %s, temperature %s", a.Output, temperatureText(a.TempK))
	if a.HasInput() {
		fmt.Fprintf(w, ", input %s", a.Input)
	}
	fmt.Fprintf(w, "\n%d noise sources\n", len(a.Sources))
	headers := []string{"freq_hz", cols.out}
	if cols.in != "" {
		headers = append(headers, cols.in)
	}
	t := newTable(w, append(headers, "top_source", "top_fraction")...)
	for i, f := range r.sp.FreqHz {
		cells := []string{num(f), num(r.sp.OutDensity[i])}
		if cols.in != "" {
			cells = append(cells, num(r.sp.InDensity[i]))
		}
		top, share := r.sp.Top(i)
		name := "-"
		if top >= 0 {
			name = a.Sources[top].Name
		}
		if err := t.row(append(cells, name, fixed(share, 4))...); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	b := r.band
	if b == nil {
		fmt.Fprintln(w, "\nno band to integrate over: give --band F1..F2")
		return nil
	}
	fmt.Fprintf(w, "\nintegrated over %s..%s (adaptive Simpson in ln f, %d frequencies, estimated relative error %.1e)\n",
		notation.Eng(b.FromHz, "Hz"), notation.Eng(b.ToHz, "Hz"), b.Evaluations, b.RelErrorEstimate)
	fmt.Fprintf(w, "  %-12s %s\n", "out_"+cols.rms, num(b.OutRMS))
	if a.HasInput() {
		fmt.Fprintf(w, "  %-12s %s\n", cols.inRMS, inRMSText(b))
	}
	fmt.Fprintf(w, "  %-12s %s (%s)\n", "enbw_hz", num(b.ENBWHz), enbwOf(r))
	if r.snr != nil {
		fmt.Fprintf(w, "  %-12s %s\n", "snr_db", fixed(*r.snr, 2))
	}
	fmt.Fprintln(w)
	ct := newTable(w, "source", cols.rms, "fraction")
	for _, c := range b.Contributions {
		if err := ct.row(c.Source, num(c.RMSOut), fixed(c.Fraction, 4)); err != nil {
			return err
		}
	}
	return ct.render()
}

// inRMSText is the input-referred RMS or why there is none.
func inRMSText(b *noise.Integrated) string {
	if math.IsNaN(b.InRMS) {
		return "- (|H| = 0 somewhere in the band)"
	}
	return num(b.InRMS)
}

// enbwOf says what the noise bandwidth is of.
func enbwOf(r *noiseRun) string {
	if r.band.ENBWOfGain {
		return "of |H|² from " + r.a.Input
	}
	return "of the output density"
}

// object is a JSON object that keeps its keys in order (the unit-bearing
// keys depend on the output).
type object []struct {
	k string
	v any
}

func (o *object) set(k string, v any) {
	*o = append(*o, struct {
		k string
		v any
	}{k, v})
}

// MarshalJSON writes the keys in insertion order.
func (o object) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, kv := range o {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(kv.k)
		v, err := json.Marshal(kv.v)
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// noiseJSON is the JSON document of a noise run.
func noiseJSON(r *noiseRun) object {
	a, cols := r.a, columnsFor(r.a)
	var doc object
	doc.set("output", a.Output)
	if a.HasInput() {
		doc.set("input", a.Input)
	}
	doc.set("temperature_k", a.TempK)
	doc.set("output_unit", a.OutUnit)
	if a.HasInput() {
		doc.set("input_unit", a.InUnit)
	}
	points := make([]object, len(r.sp.FreqHz))
	for i, f := range r.sp.FreqHz {
		var p object
		p.set("freq_hz", f)
		p.set(cols.out, r.sp.OutDensity[i])
		if cols.in != "" {
			p.set(cols.in, finiteOrNil(r.sp.InDensity[i]))
		}
		top, share := r.sp.Top(i)
		if top >= 0 {
			p.set("top_source", a.Sources[top].Name)
			p.set("top_fraction", share)
		} else {
			p.set("top_source", nil)
			p.set("top_fraction", nil)
		}
		points[i] = p
	}
	doc.set("points", points)
	if b := r.band; b != nil {
		var o object
		o.set("from_hz", b.FromHz)
		o.set("to_hz", b.ToHz)
		o.set("out_"+cols.rms, b.OutRMS)
		if a.HasInput() {
			o.set(cols.inRMS, finiteOrNil(b.InRMS))
		}
		o.set("enbw_hz", b.ENBWHz)
		o.set("enbw_of", map[bool]string{true: "gain", false: "output density"}[b.ENBWOfGain])
		if r.snr != nil {
			o.set("snr_db", *r.snr)
		}
		o.set("method", "adaptive Simpson in ln f")
		o.set("evaluations", b.Evaluations)
		o.set("rel_error_estimate", b.RelErrorEstimate)
		cs := make([]object, len(b.Contributions))
		for i, c := range b.Contributions {
			cs[i].set("source", c.Source)
			cs[i].set(cols.rms, c.RMSOut)
			cs[i].set("fraction", c.Fraction)
		}
		o.set("contributions", cs)
		doc.set("band", o)
	}
	if r.stab != nil {
		st := newStabilityJSON(r.stab)
		doc.set("stability", st.Stability)
		doc.set("stability_reason", st.StabilityReason)
		doc.set("all_natural_computed", st.AllNatural)
		doc.set("unstable_poles", st.UnstablePoles)
	}
	return doc
}

// writeNoisePlot writes noiseFigure to path.
func writeNoisePlot(e *env, path string, protect []string, l *loaded, r *noiseRun, traces int) error {
	format, err := plot.FormatFromPath(path)
	if err != nil {
		return err
	}
	fig, err := noiseFigure(l, r, traces)
	if err != nil {
		return err
	}
	return writeTo(e, path, append(protect, l.name), func(w io.Writer) error { return fig.Encode(w, format) })
}

// noiseFigure draws the output density with the largest contributors (by
// their power over the band, or over the sweep without a band), and below
// it the input-referred density when there is an input.
func noiseFigure(l *loaded, r *noiseRun, traces int) (*plot.Figure, error) {
	a, sp := r.a, r.sp
	if len(sp.FreqHz) < 2 {
		return nil, fmt.Errorf("--plot needs at least 2 frequencies")
	}
	order := contributorOrder(r)
	out := []plot.DensityTrace{{Label: "total " + a.Output, FreqHz: sp.FreqHz, Density: sp.OutDensity}}
	for _, j := range order[:min(max(traces, 0), len(order))] {
		d := make([]float64, len(sp.FreqHz))
		for i := range d {
			d[i] = math.Sqrt(sp.ContribPSD[i][j])
		}
		out = append(out, plot.DensityTrace{Label: a.Sources[j].Name, FreqHz: sp.FreqHz, Density: d})
	}
	fig, err := plot.Density(out, plot.DensityOptions{Title: noiseTitle(l, r), YLabel: noiseYLabel(r)})
	if err != nil {
		return nil, err
	}
	if a.HasInput() {
		in, err := plot.Density([]plot.DensityTrace{{Label: "input-referred, " + a.Input, FreqHz: sp.FreqHz, Density: sp.InDensity}},
			plot.DensityOptions{YLabel: "input-referred density (" + a.InUnit + "/√Hz)", Panel: "input", Height: 8 * vg.Centimeter})
		if err != nil {
			return nil, err
		}
		if fig, err = plot.Stack(fig, in); err != nil {
			return nil, err
		}
	}
	return fig, nil
}

// contributorOrder lists source indices largest first: by band power when
// integrated, else by power summed over the sweep points.
func contributorOrder(r *noiseRun) []int {
	index := map[string]int{}
	for j, s := range r.a.Sources {
		index[s.Name] = j
	}
	var order []int
	if r.band != nil {
		for _, c := range r.band.Contributions {
			order = append(order, index[c.Source])
		}
		return order
	}
	sum := make([]float64, len(r.a.Sources))
	for i := range r.sp.FreqHz {
		for j, p := range r.sp.ContribPSD[i] {
			sum[j] += p
		}
	}
	for j := range sum {
		order = append(order, j)
	}
	sort.SliceStable(order, func(x, y int) bool { return sum[order[x]] > sum[order[y]] })
	return order
}

// noiseTitle is the title of a noise plot.
func noiseTitle(l *loaded, r *noiseRun) string {
	title := l.circuit.Title
	if title == "" {
		title = "noise at " + r.a.Output
	}
	return title + ", " + temperatureText(r.a.TempK)
}

// noiseYLabel names the output noise density with its unit.
func noiseYLabel(r *noiseRun) string {
	return "output noise density (" + r.a.OutUnit + "/√Hz)"
}

// noiseTotal is the total output density of one --vary value and the
// axis label of its unit.
type noiseTotal struct {
	trace  plot.DensityTrace
	yLabel string
}

// noiseOverlay draws the total output noise densities of the --vary
// values in one figure, a trace per value (the contributors of each are
// on its own plot).
func noiseOverlay(labels []string, runs []variantPlot[noiseTotal]) (*plot.Figure, error) {
	traces := make([]plot.DensityTrace, len(runs))
	for i, r := range runs {
		traces[i] = r.data.trace
		traces[i].Label = "total, " + labels[i]
	}
	yLabel := ""
	if len(runs) > 0 {
		yLabel = runs[0].data.yLabel
	}
	return plot.Density(traces, plot.DensityOptions{Title: overlayTitle(runs, "one trace per value"), YLabel: yLabel})
}
