package report

import (
	"bytes"
	"encoding/xml"
	"errors"
	"html"
	"io"
	"math"
	"math/cmplx"
	"regexp"
	"strings"
	"testing"

	"nodal/cmd/nodal/plot"
)

// A unity-gain equal-component Sallen–Key low-pass, R = 10 kΩ, C = 10 nF:
// f0 = 1/(2πRC) = 1591.55 Hz and Q = 1/(3 − K) = 0.5 (Sallen & Key, "A
// practical method of designing RC active filters", IRE Trans. Circuit
// Theory, 1955; Horowitz & Hill, The Art of Electronics, 3rd ed., §6.3).
// The report only prints what it is given; these are realistic inputs.
const (
	rOhm = 10e3
	cF   = 10e-9
)

var (
	w0   = 1 / (rOhm * cF) // rad/s
	f0Hz = w0 / (2 * math.Pi)
)

func h(s complex128) complex128 {
	w := complex(w0, 0)
	return w * w / (s*s + 2*w*s + w*w) // Q = 0.5: ω0/Q = 2ω0
}

func figures(t testing.TB) (bode, pz, step, band, hist *plot.Figure) {
	t.Helper()
	var f, db, deg []float64
	for i := 0; i <= 200; i++ {
		fi := 10 * math.Pow(1e4, float64(i)/200)
		v := h(complex(0, 2*math.Pi*fi))
		f, db, deg = append(f, fi), append(db, 20*math.Log10(cmplx.Abs(v))), append(deg, cmplx.Phase(v)*180/math.Pi)
	}
	var err error
	if bode, err = plot.Bode([]plot.BodeTrace{{Label: "v(out)", FreqHz: f, MagDB: db, PhaseDeg: deg}}, plot.BodeOptions{}); err != nil {
		t.Fatal(err)
	}
	if pz, err = plot.PoleZero([]complex128{complex(-w0, 0), complex(-w0, 0)}, nil, plot.PoleZeroOptions{}); err != nil {
		t.Fatal(err)
	}
	var ts, ys []float64
	for i := 0; i <= 300; i++ { // critically damped: 1 − (1 + ω0 t)e^{−ω0 t}
		ti := 8 / w0 * float64(i) / 300
		ts, ys = append(ts, ti), append(ys, 1-(1+w0*ti)*math.Exp(-w0*ti))
	}
	if step, err = plot.Step(ts, ys, plot.StepMarks{Final: 1}, plot.StepOptions{}); err != nil {
		t.Fatal(err)
	}
	b := plot.BandTrace{FreqHz: f, NominalDB: db, Runs: 200}
	for _, v := range db {
		b.MinDB, b.MaxDB = append(b.MinDB, v-0.4), append(b.MaxDB, v+0.4)
	}
	if band, err = plot.Band(b, nil, plot.BodeOptions{}); err != nil {
		t.Fatal(err)
	}
	if hist, err = plot.Histogram("f3db (Hz)", []float64{1010, 1020, 1022, 1030, 990, 1001}, 0, 1019); err != nil {
		t.Fatal(err)
	}
	return bode, pz, step, band, hist
}

func ptr(v float64) *float64 { return &v }

// demoData is a full report of the tone stage above.
func demoData(t testing.TB) *Data {
	bode, pz, step, band, hist := figures(t)
	return &Data{
		Title:   "Tone stage low-pass",
		Summary: "Second-order anti-alias filter in front of a vibration logger ADC.",
		Source:  Source{Name: "tone-stage.ckt", SHA256: Checksum([]byte("tone stage"))},
		Version: "0.3.1",
		Notes:   []string{"No pole-zero pairs cancelled."},
		Parts: []Part{
			{Name: "Rin", Kind: "resistor", Nodes: []string{"in", "mid"}, Value: "10 kΩ", Tolerance: "±1 %"},
			{Name: "Rfb", Kind: "resistor", Nodes: []string{"mid", "pos"}, Value: "10 kΩ", Tolerance: "±1 %"},
			{Name: "Cfb", Kind: "capacitor", Nodes: []string{"mid", "out"}, Value: "10 nF", Tolerance: "±5 %"},
			{Name: "Cgnd", Kind: "capacitor", Nodes: []string{"pos", "gnd"}, Value: "10 nF"},
		},
		Transfer: &Transfer{
			Input: "v(in)", Output: "v(out)",
			Factored: "H(s) = 1e8 / ((s + 1e4)(s + 1e4))",
			Expanded: "H(s) = 1e8 / (s^2 + 2e4 s + 1e8)",
			ODE:      "y'' + 2e4 y' + 1e8 y = 1e8 u",
		},
		Roots: []Root{
			{Kind: Pole, S: complex(-w0, 0), F0Hz: f0Hz},
			{Kind: Pole, S: complex(-w0, 0), F0Hz: f0Hz},
			{Kind: Zero, S: complex(-5e5, 2e5), F0Hz: cmplx.Abs(complex(-5e5, 2e5)) / (2 * math.Pi), Q: ptr(0.5385)},
		},
		Bode:     Plot{Figure: bode, Caption: "Bode plot of v(out)/v(in)"},
		PoleZero: Plot{Figure: pz, Caption: "Pole-zero map"},
		Step: &Step{Plot: Plot{Figure: step, Caption: "Step response"}, Metrics: []Metric{
			{Name: "rise time 10–90 %", Value: 3.3579 / w0, Unit: "s"},
			{Name: "overshoot", Value: 0, Unit: "%", Note: "no overshoot"},
		}},
		MonteCarlo: &MonteCarlo{Runs: 200, Seed: 42, Band: Plot{Figure: band, Caption: "Monte Carlo band"},
			Stats:      []Stat{{Name: "f3db", Unit: "Hz", Nominal: 1019.4, Mean: 1018.7, StdDev: 21.3, Min: 961.2, Max: 1077.9}},
			Histograms: Plot{Figure: hist, Caption: "Histogram of f3db"}},
		Verdicts: []Verdict{
			{Requirement: "f3db within 950..1100 Hz", Value: 1019.4, Unit: "Hz", Pass: true, Yield: ptr(0.985)},
			{Requirement: "gain@5kHz below -25 dB", Value: -20.4, Unit: "dB", Pass: false, Yield: ptr(0)},
		},
	}
}

func render(t *testing.T, d *Data) string {
	t.Helper()
	var b bytes.Buffer
	if err := Render(&b, d); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestRenderContainsSectionsAndNumbers(t *testing.T) {
	d := demoData(t)
	out := render(t, d)
	want := []string{
		`<section id="summary">`, `<section id="transfer">`, `<section id="ode">`, `<section id="roots">`,
		`<section id="bode">`, `<section id="step">`, `<section id="montecarlo">`, `<section id="verdicts">`,
		"<h1>Tone stage low-pass</h1>", "vibration logger ADC",
		"Rin", "Cgnd", "mid – out", "10 nF", "±5 %",
		d.Transfer.Factored, d.Transfer.Expanded, d.Transfer.ODE,
		"-10 krad/s", "1.5915 kHz", "0.5385", // roots: ω0 = 1e4 rad/s, f0 = 1591.55 Hz
		"335.8 µs", // rise time 3.3579/ω0
		"200 runs", "seed 42", "1.0194 kHz", "1.0187 kHz", "21.3 Hz", "961.2 Hz", "1.019 kHz",
		`<tr class="pass">`, `<tr class="fail">`, "PASS ✓", "FAIL ✗", "98.5 %", "-20.40 dB",
		"1 of 2 requirements fail",
		SafetyNote, d.Source.SHA256, "0.3.1", "tone-stage.ckt",
		"Bode plot of v(out)/v(in)", `aria-label="Pole-zero map"`,
	}
	// html/template writes + and ' as character references; compare text
	text := html.UnescapeString(out)
	for _, w := range want {
		if !strings.Contains(text, w) {
			t.Errorf("report lacks %q", w)
		}
	}
	// self-contained: nothing to fetch and nothing to run
	for _, bad := range []string{"<script", "<link", "<img", "<iframe", "@import", "url(", "<?xml"} {
		if strings.Contains(out, bad) {
			t.Errorf("report contains %q", bad)
		}
	}
	for _, m := range regexp.MustCompile(`(?:src|href)="([^"]*)"`).FindAllStringSubmatch(out, -1) {
		if !strings.HasPrefix(m[1], "#") {
			t.Errorf("reference to %q; only in-page anchors are allowed", m[1])
		}
	}
}

// TestRenderWellFormed parses the whole page as XML: every element
// closed, attributes quoted, only XML entities. It also counts the inline
// plots (one <svg> per figure, each with a viewBox) and table rows.
func TestRenderWellFormed(t *testing.T) {
	d := demoData(t)
	out := render(t, d)
	dec := xml.NewDecoder(strings.NewReader(out))
	dec.Strict = true
	var stack []string
	svgs, rows, sections := 0, 0, 0
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			stack = append(stack, el.Name.Local)
			switch el.Name.Local {
			case "svg":
				if len(stack) >= 2 && stack[len(stack)-2] == "figure" {
					svgs++
					if attr(el, "viewBox") == "" || attr(el, "role") != "img" {
						t.Errorf("inline svg %d lacks viewBox or role", svgs)
					}
				}
			case "tr":
				rows++
			case "section":
				sections++
			}
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		}
	}
	if len(stack) != 0 {
		t.Errorf("unclosed elements %v", stack)
	}
	if want := 5; svgs != want { // Bode, pole-zero, step, band, histograms
		t.Errorf("%d inline plots, want %d", svgs, want)
	}
	// header rows + data rows: parts 1+4, roots 1+3, metrics 1+2, stats 1+1, verdicts 1+2
	if want := 5 + 4 + 3 + 2 + 3; rows != want {
		t.Errorf("%d table rows, want %d", rows, want)
	}
	if sections != 8 {
		t.Errorf("%d sections, want 8", sections)
	}
}

func attr(el xml.StartElement, name string) string {
	for _, a := range el.Attr {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

func TestRenderLeavesOutAbsentSections(t *testing.T) {
	d := &Data{
		Source: Source{Name: "demo.ckt", SHA256: Checksum(nil), BuiltIn: true},
		Parts:  []Part{{Name: "Rload", Kind: "resistor", Nodes: []string{"out", "gnd"}, Value: "1 kΩ"}},
	}
	out := render(t, d)
	for _, absent := range []string{`id="transfer"`, `id="ode"`, `id="roots"`, `id="bode"`, `id="step"`, `id="montecarlo"`, `id="verdicts"`, "<svg"} {
		if strings.Contains(out, absent) {
			t.Errorf("empty data rendered %q", absent)
		}
	}
	for _, present := range []string{"<title>demo.ckt</title>", "built-in demo", "development build", "Rload", SafetyNote} {
		if !strings.Contains(out, present) {
			t.Errorf("report lacks %q", present)
		}
	}
}

func TestRenderErrors(t *testing.T) {
	tests := []struct {
		name string
		d    *Data
		want string
	}{
		{"nil", nil, "no data"},
		{"no checksum", &Data{}, "SHA-256"},
		{"upper-case checksum", &Data{Source: Source{SHA256: strings.ToUpper(Checksum(nil))}}, "SHA-256"},
		{"bad svg", &Data{Source: Source{SHA256: Checksum(nil)}, Bode: Plot{SVG: "<png/>", Caption: "bode"}}, "no <svg>"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for _, r := range []func(io.Writer, *Data) error{Render, RenderText} {
				var b bytes.Buffer
				err := r(&b, tt.d)
				if tt.name == "bad svg" && err == nil { // text mode draws no plots
					continue
				}
				if err == nil || !strings.Contains(err.Error(), tt.want) {
					t.Errorf("error %v, want %q", err, tt.want)
				}
				if b.Len() != 0 {
					t.Errorf("wrote %d bytes despite the error", b.Len())
				}
			}
		})
	}
}

func TestRenderText(t *testing.T) {
	d := demoData(t)
	var b bytes.Buffer
	if err := RenderText(&b, d); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, w := range []string{
		"Tone stage low-pass\n===", "Circuit\n-------", "Transfer function", "Differential equation", "Poles and zeros",
		"Frequency response", "Step response", "Tolerances (Monte Carlo)", "Requirements",
		"│ Rin ", "mid – out", d.Transfer.Factored, "    " + d.Transfer.ODE, "-10 krad/s", "1.5915 kHz",
		"335.8 µs", "961.2 Hz", "PASS ✓", "FAIL ✗", "98.5 %", "[Bode plot of v(out)/v(in): in the HTML report]",
		SafetyNote, d.Source.SHA256,
	} {
		if !strings.Contains(out, w) {
			t.Errorf("text report lacks %q", w)
		}
	}
	if strings.Contains(out, "<svg") || strings.Contains(out, "NAME") {
		t.Error("text report contains markup or upper-cased headers")
	}
}

// The SHA-256 of "abc" is FIPS 180-2, appendix B.1.
func TestChecksum(t *testing.T) {
	if got, want := Checksum([]byte("abc")), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"; got != want {
		t.Errorf("Checksum(abc) = %s, want %s", got, want)
	}
}

func TestFormatValue(t *testing.T) {
	tests := []struct {
		v    float64
		unit string
		want string
	}{
		{1019.4, "Hz", "1.019 kHz"},
		{0.5, "dB", "0.50 dB"}, // no "500 mdB"
		{-20.4, "dB", "-20.40 dB"},
		{-92.26, "°", "-92.3°"},
		{-92.26, "deg", "-92.3°"},
		{12.5, "%", "12.5 %"},
		{0.7071, "", "0.7071"},
		{3.358e-4, "s", "335.8 µs"},
		{4700, "Ω", "4.7 kΩ"},
	}
	for _, tt := range tests {
		if got := formatValue(tt.v, tt.unit); got != tt.want {
			t.Errorf("formatValue(%g, %q) = %q, want %q", tt.v, tt.unit, got, tt.want)
		}
	}
}

func TestRenderHeaderSourceAndVerdictColumns(t *testing.T) {
	d := &Data{
		Source:      Source{Name: "bench/tone.nodal", SHA256: Checksum([]byte("x"))},
		Version:     "9.9.9",
		Generated:   "2026-12-02 15:40 UTC",
		CommandLine: "nodal report bench/tone.nodal -o 'my report.html'",
		Banner:      []string{"a pole in the right half-plane"},
		SourceText:  "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k <&>\n",
		Parts:       []Part{{Name: "R1", Kind: "resistor", Nodes: []string{"in", "out"}, Value: "1 kΩ"}},
		Verdicts: []Verdict{
			{Requirement: "require f3db within 1.9kHz..2.1kHz", Value: 2000, Unit: "Hz", Pass: true,
				Worst: true, WorstMin: 1886, WorstMax: 2126, WorstPass: false, Yield: ptr(0.972)},
			{Requirement: "require dc within -0.1dB..0.1dB", Value: 0, Unit: "dB", Pass: true},
		},
	}
	out := render(t, d)
	for _, want := range []string{
		"<title>tone.nodal</title>", "<h1>tone.nodal</h1>", // untitled: its file name
		"2026-12-02 15:40 UTC", "nodal 9.9.9", "nodal report bench/tone.nodal -o &#39;my report.html&#39;",
		"a pole in the right half-plane",
		`id="source"`, "R1: resistor (in, out) 1k &lt;&amp;&gt;",
		`<th class="num">worst case</th>`, "1.886 kHz .. 2.126 kHz", "97.2 %", `<td class="verdict-fail">FAIL ✗</td>`, `<td class="verdict-pass">PASS ✓</td>`, "1 fail in the worst case", "1 fail in some Monte Carlo runs",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	// The stability warning is the first section; the listing the last.
	if b, h := strings.Index(out, `<section id="stability-warning"`), strings.Index(out, "<section"); b < 0 || b != h {
		t.Errorf("warning section at %d, first section at %d", b, h)
	}
	if s, v := strings.Index(out, `id="source"`), strings.Index(out, `id="verdicts"`); s < v {
		t.Errorf("source listing at %d before the requirements at %d", s, v)
	}
	// Each verdict column has its own verdict: nominal pass, worst FAIL,
	// yield FAIL on the first row; no worst case or yield on the second.
	row := out[strings.Index(out, "require f3db"):]
	row = row[:strings.Index(row, "</tr>")]
	if strings.Count(row, "PASS ✓") != 1 || strings.Count(row, "FAIL ✗") != 2 {
		t.Errorf("first row %q: want one PASS and two FAIL", row)
	}
	var txt strings.Builder
	if err := RenderText(&txt, d); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"a pole in the right half-plane", "2026-12-02 15:40 UTC · nodal 9.9.9 · nodal report", "Circuit source", "    R1: resistor (in, out) 1k <&>"} {
		if !strings.Contains(txt.String(), want) {
			t.Errorf("text report lacks %q", want)
		}
	}
}

func TestPoleZeroMapsShareOneWidth(t *testing.T) {
	// A map with a zoom panel (roots spread over three decades) is two
	// squares tall; it gets the same width class as a single map, so
	// every map panel is drawn the same size.
	for _, poles := range [][]complex128{{-1e3, complex(-500, 800), complex(-500, -800)}, {-1e6, complex(-500, 800), complex(-500, -800)}} {
		pz, err := plot.PoleZero(poles, nil, plot.PoleZeroOptions{})
		if err != nil {
			t.Fatal(err)
		}
		out := render(t, &Data{Source: Source{Name: "pz.nodal", SHA256: Checksum(nil)}, Parts: []Part{{Name: "R1"}}, PoleZero: Plot{Figure: pz}})
		if !strings.Contains(out, `<svg class="plot-square"`) {
			t.Errorf("poles %v: the map is not drawn at the map width", poles)
		}
	}
}
