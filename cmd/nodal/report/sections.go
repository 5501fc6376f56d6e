package report

import (
	"fmt"
	"math"
	"nodal/cmd/nodal/notation"
	"path"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
)

// section is one titled part of a report, in the form both renderers
// walk: short paragraphs, labelled preformatted blocks, figures and
// tables, in that order.
type section struct {
	ID, Heading string
	Paras       []string
	Blocks      []block
	Figures     []Plot
	Tables      []table
}

// block is a labelled piece of preformatted text (a formula).
type block struct {
	Label, Text string
}

// table is a header and rows of cells; Right marks right-aligned
// (numeric) columns.
type table struct {
	Caption string
	Header  []string
	Right   []bool
	Rows    []row
}

// row is one table row; Class is "pass", "fail" or ""; Verdicts, when
// set, gives each cell its own "pass", "fail" or "" (a verdict column).
type row struct {
	Cells    []string
	Class    string
	Verdicts []string
}

// footer is what closes every report; the masthead shows its Generated,
// CommandLine and Version too.
type footer struct {
	Version, SourceName, SHA256, Safety string
	Generated, CommandLine              string
}

var hex64 = regexp.MustCompile(`^[0-9a-f]{64}$`)

// build checks d and turns it into sections and the footer.
func build(d *Data) (title string, secs []section, foot footer, err error) {
	if d == nil {
		return "", nil, footer{}, fmt.Errorf("report: no data")
	}
	if !hex64.MatchString(d.Source.SHA256) {
		return "", nil, footer{}, fmt.Errorf("report: source checksum %q is not a SHA-256 in hex (64 digits 0-9a-f)", d.Source.SHA256)
	}
	title = d.Title
	if title == "" {
		// An untitled file is headed by its file name.
		title = path.Base(filepath.ToSlash(d.Source.Name))
		if d.Source.Name == "" || title == "." || title == "/" {
			title = "nodal report"
		}
	}
	foot = footer{Version: d.Version, SourceName: d.Source.Name, SHA256: d.Source.SHA256, Safety: SafetyNote,
		Generated: d.Generated, CommandLine: d.CommandLine}
	if foot.Version == "" {
		foot.Version = "development build"
	}

	if len(d.Banner) > 0 {
		secs = append(secs, section{ID: "stability-warning", Heading: "Warning: this circuit is not stable as drawn", Paras: d.Banner})
	}
	sum := section{ID: "summary", Heading: "Circuit"}
	if d.Source.BuiltIn {
		sum.Paras = append(sum.Paras, "This is nodal's built-in demo circuit ("+d.Source.Name+"); give a FILE to analyse your own.")
	} else if d.Source.Name != "" {
		sum.Paras = append(sum.Paras, "Circuit file: "+d.Source.Name)
	}
	if d.Summary != "" {
		sum.Paras = append(sum.Paras, d.Summary)
	}
	if d.Stability != "" {
		sum.Paras = append(sum.Paras, d.Stability)
	}
	sum.Paras = append(sum.Paras, d.Notes...)
	parts := table{Caption: "Parts", Header: []string{"name", "kind", "nodes", "value", "tolerance"}, Right: []bool{false, false, false, true, true}}
	for _, p := range d.Parts {
		tol := p.Tolerance
		if tol == "" {
			tol = "—"
		}
		parts.Rows = append(parts.Rows, row{Cells: []string{p.Name, p.Kind, strings.Join(p.Nodes, " – "), p.Value, tol}})
	}
	sum.Tables = append(sum.Tables, parts)
	secs = append(secs, sum)

	secs = append(secs, responseSections(d)...)
	for _, r := range d.Responses {
		secs = append(secs, responseSections(r)...)
	}

	for _, lp := range d.Loops {
		s := section{ID: "loop-" + lp.Part, Heading: "Loop gain around " + lp.Part,
			Paras:  []string{"T(s) = −(control returned to " + lp.Part + ")/(test signal driving it), Bode's return ratio; s in rad/s."},
			Blocks: []block{{"factored", "T(s) = " + lp.Factored}}}
		if lp.Plot.present() {
			s.Figures = append(s.Figures, lp.Plot)
		}
		t := table{Header: []string{"figure", "value"}, Right: []bool{false, false}}
		for _, f := range lp.Figures {
			t.Rows = append(t.Rows, row{Cells: []string{f[0], f[1]}})
		}
		s.Tables = append(s.Tables, t)
		secs = append(secs, s)
	}

	if len(d.Verdicts) > 0 {
		secs = append(secs, verdictSection(d.Verdicts))
	}
	if n := d.Noise; n != nil {
		secs = append(secs, noiseSection(n))
	}
	if d.SourceText != "" { // last: the listing closes the report
		secs = append(secs, section{ID: "source", Heading: "Circuit source",
			Paras:  []string{"The circuit file as read (" + d.Source.Name + ")."},
			Blocks: []block{{"", strings.TrimRight(d.SourceText, "\n")}}})
	}
	return title, secs, foot, nil
}

// verdictText is the verdict cell of a check.
func verdictText(pass bool) string {
	if pass {
		return "PASS ✓"
	}
	return "FAIL ✗"
}

// verdictSection is the requirements table: the nominal value, the
// worst-case range and the Monte Carlo yield, each with its own verdict.
// A row is marked by its nominal verdict.
func verdictSection(vs []Verdict) section {
	t := table{Header: []string{"requirement", "nominal", "verdict", "worst case", "verdict", "yield", "verdict"},
		Right: []bool{false, true, false, true, false, true, false}}
	var failNom, failWorst, failYield int
	for _, v := range vs {
		class := "pass"
		worst, worstVerdict := "—", "—"
		if v.Worst {
			worst = formatValue(v.WorstMin, v.Unit) + " .. " + formatValue(v.WorstMax, v.Unit)
			worstVerdict = verdictText(v.WorstPass)
			if !v.WorstPass {
				failWorst++
			}
		}
		yield, yieldVerdict := "—", "—"
		if v.Yield != nil {
			yield = strconv.FormatFloat(100**v.Yield, 'f', 1, 64) + " %"
			yieldVerdict = verdictText(*v.Yield == 1)
			if *v.Yield != 1 {
				failYield++
			}
		}
		if !v.Pass {
			failNom++
			class = "fail"
		}
		cls := func(shown bool, pass bool) string {
			switch {
			case !shown:
				return ""
			case pass:
				return "verdict-pass"
			}
			return "verdict-fail"
		}
		t.Rows = append(t.Rows, row{Cells: []string{v.Requirement, formatValue(v.Value, v.Unit), verdictText(v.Pass), worst, worstVerdict, yield, yieldVerdict}, Class: class,
			Verdicts: []string{"", "", cls(true, v.Pass), "", cls(v.Worst, v.WorstPass), "", cls(v.Yield != nil, v.Yield != nil && *v.Yield == 1)}})
	}
	n := len(vs)
	para := fmt.Sprintf("All %d requirements pass at nominal values.", n)
	if failNom > 0 {
		para = fmt.Sprintf("%d of %d requirements fail at nominal values.", failNom, n)
	}
	if failWorst > 0 {
		para += fmt.Sprintf(" %d fail in the worst case.", failWorst)
	}
	if failYield > 0 {
		para += fmt.Sprintf(" %d fail in some Monte Carlo runs (the yield verdict passes only when every run passes).", failYield)
	}
	paras := []string{para}
	return section{ID: "verdicts", Heading: "Requirements", Paras: paras, Tables: []table{t}}
}

// noiseSection is the noise at the output: plot, band figures, sources.
func noiseSection(n *Noise) section {
	s := section{ID: "noise", Heading: "Noise"}
	para := fmt.Sprintf("Noise at %s at %s K: thermal noise 4kTR of every resistor not marked noiseless and the opamps' en and in, uncorrelated; integrated over %s … %s by %s.",
		n.Output, strconv.FormatFloat(n.TempK, 'g', 6, 64), notation.Digits(n.FromHz, 4, "Hz"), notation.Digits(n.ToHz, 4, "Hz"), n.Method)
	s.Paras = append(s.Paras, para)
	if n.Plot.present() {
		s.Figures = append(s.Figures, n.Plot)
	}
	t := table{Header: []string{"figure", "value"}, Right: []bool{false, true}}
	t.Rows = append(t.Rows, row{Cells: []string{"output RMS noise", formatValue(n.OutRMS, n.OutUnit)}})
	if n.InRMS != nil {
		t.Rows = append(t.Rows, row{Cells: []string{"input-referred RMS noise (" + n.Input + ")", formatValue(*n.InRMS, n.InUnit)}})
	}
	t.Rows = append(t.Rows, row{Cells: []string{"equivalent noise bandwidth", formatValue(n.ENBWHz, "Hz")}})
	s.Tables = append(s.Tables, t)
	c := table{Caption: "Contributions over the band, largest first", Header: []string{"source", "output RMS", "share of power"}, Right: []bool{false, true, true}}
	for _, x := range n.Contributions {
		c.Rows = append(c.Rows, row{Cells: []string{x.Source, formatValue(x.RMS, n.OutUnit), strconv.FormatFloat(100*x.Fraction, 'f', 2, 64) + " %"}})
	}
	s.Tables = append(s.Tables, c)
	return s
}

// siUnits take SI prefixes when printed; other units (dB, °, %, plain
// ratios) are printed as plain numbers.
var siUnits = map[string]bool{"Hz": true, "s": true, "V": true, "A": true, "Ω": true, "F": true, "H": true, "rad/s": true, "S": true, "W": true, "V/√Hz": true}

// formatValue writes a metric value or limit with unit in the one style of
// verdict tables (notation.Metric); "—" for NaN (no value: a note says why).
func formatValue(v float64, unit string) string {
	if math.IsNaN(v) {
		return "—"
	}
	if unit == "%" || unit == "s" || unit == "V" || unit == "A" {
		return formatDigits(v, 4, unit)
	}
	return notation.Metric(v, unit)
}

// formatDigits is formatValue with the given significant digits.
func formatDigits(v float64, digits int, unit string) string {
	if math.IsNaN(v) {
		return "—" // no value: the note says why
	}
	if siUnits[unit] {
		return notation.Digits(v, digits, unit)
	}
	s := strconv.FormatFloat(v, 'g', digits, 64)
	if math.IsInf(v, 0) || math.IsNaN(v) || unit == "" {
		return s
	}
	if unit == "°" {
		return s + unit
	}
	return s + " " + unit
}

// fixedDecimals writes v with the given decimals, without the sign of a
// value that rounds to zero ("-0.000" reads as a sign where there is none).
func fixedDecimals(v float64, decimals int) string {
	t := strconv.FormatFloat(v, 'f', decimals, 64)
	if strings.Trim(t, "-0.") == "" {
		return strings.TrimPrefix(t, "-")
	}
	return t
}

// responseSections are the sections of one response: transfer function,
// ODE, roots, Bode plot, step response and tolerances; for a named
// response (d.ResponseName) the headings start with its name and the ids
// with "NAME-".
func responseSections(d *Data) []section {
	var secs []section
	if tf := d.Transfer; tf != nil {
		s := section{ID: "transfer", Heading: "Transfer function"}
		if tf.Input != "" || tf.Output != "" {
			s.Paras = append(s.Paras, "H(s) = "+tf.Output+" / "+tf.Input+", s in rad/s.")
		}
		for _, b := range []block{{"factored", tf.Factored}, {"expanded", tf.Expanded}} {
			if b.Text != "" {
				s.Blocks = append(s.Blocks, b)
			}
		}
		if len(s.Blocks) > 0 || len(s.Paras) > 0 {
			secs = append(secs, s)
		}
		if tf.ODE != "" {
			secs = append(secs, section{ID: "ode", Heading: "Differential equation",
				Paras:  []string{"The same relation in time, with d/dt for s."},
				Blocks: []block{{"", tf.ODE}}})
		}
	}

	if len(d.Roots) > 0 {
		t := table{Header: []string{"", "real part", "imaginary part", "f0", "Q", "multiplicity"}, Right: []bool{false, true, true, true, true, true}}
		for _, r := range d.Roots {
			q := "—"
			if r.Q != nil {
				q = notation.Q(*r.Q)
			}
			t.Rows = append(t.Rows, row{Cells: []string{r.Kind.String(),
				notation.Digits(real(r.S), 6, "rad/s"), notation.Digits(imag(r.S), 6, "rad/s"),
				notation.Digits(r.F0Hz, 5, "Hz"), q, strconv.Itoa(max(r.Multiplicity, 1))}})
		}
		s := section{ID: "roots", Heading: "Poles and zeros", Tables: []table{t},
			Paras: []string{"f0 = |s|/2π; Q = |s|/(−2·Re s) for complex pairs."}}
		if d.PoleZero.present() {
			s.Figures = append(s.Figures, d.PoleZero)
		}
		secs = append(secs, s)
	} else if d.PoleZero.present() {
		secs = append(secs, section{ID: "roots", Heading: "Poles and zeros", Figures: []Plot{d.PoleZero}})
	}

	if d.Bode.present() || len(d.Response) > 0 {
		s := section{ID: "bode", Heading: "Frequency response"}
		if d.Bode.present() {
			s.Figures = append(s.Figures, d.Bode)
		}
		if len(d.Response) > 0 {
			t := table{Header: []string{"frequency", "magnitude", "phase"}, Right: []bool{true, true, true}}
			for _, p := range d.Response {
				t.Rows = append(t.Rows, row{Cells: []string{notation.Digits(p.FreqHz, 4, "Hz"),
					fixedDecimals(p.MagDB, 3) + " dB", fixedDecimals(p.PhaseDeg, 2) + "°"}})
			}
			s.Tables = append(s.Tables, t)
		}
		secs = append(secs, s)
	}

	if st := d.Step; st != nil {
		s := section{ID: "step", Heading: "Step response"}
		if st.Plot.present() {
			s.Figures = append(s.Figures, st.Plot)
		}
		if len(st.Metrics) > 0 {
			t := table{Header: []string{"metric", "value", "note"}, Right: []bool{false, true, false}}
			for _, m := range st.Metrics {
				t.Rows = append(t.Rows, row{Cells: []string{m.Name, formatValue(m.Value, m.Unit), m.Note}})
			}
			s.Tables = append(s.Tables, t)
		}
		secs = append(secs, s)
	}

	if mc := d.MonteCarlo; mc != nil {
		s := section{ID: "montecarlo", Heading: "Tolerances (Monte Carlo)",
			Paras: []string{fmt.Sprintf("%d runs drawn from seed %d; every toleranced part varies at once.", mc.Runs, mc.Seed)}}
		if mc.Band.present() {
			s.Figures = append(s.Figures, mc.Band)
		}
		if len(mc.Stats) > 0 {
			t := table{Caption: "Metric statistics", Header: []string{"metric", "nominal", "mean", "std dev", "min", "max"},
				Right: []bool{false, true, true, true, true, true}}
			for _, st := range mc.Stats {
				// five digits: nominal and mean often agree to four
				cells := []string{st.Name}
				for _, v := range []float64{st.Nominal, st.Mean, st.StdDev, st.Min, st.Max} {
					cells = append(cells, formatDigits(v, 5, st.Unit))
				}
				t.Rows = append(t.Rows, row{Cells: cells})
			}
			s.Tables = append(s.Tables, t)
		}
		if mc.Histograms.present() {
			s.Figures = append(s.Figures, mc.Histograms)
		}
		secs = append(secs, s)
	}

	if d.ResponseName != "" {
		for i := range secs {
			secs[i].ID = d.ResponseName + "-" + secs[i].ID
			secs[i].Heading = d.ResponseName + ": " + secs[i].Heading
		}
	}
	return secs
}
