// Package report renders nodal's analysis of one circuit as a single
// self-contained HTML file (inline CSS and SVG, no scripts, no network) or
// as terminal tables. Its input is the plain Data struct below, filled in
// by the command; the package does no analysis of its own.
package report

import (
	"crypto/sha256"
	"encoding/hex"

	"nodal/cmd/nodal/plot"
)

// SafetyNote is printed in every report's footer.
const SafetyNote = "nodal models ideal linear small-signal behaviour. It does not check voltage, power or isolation ratings; " +
	"mains-connected or safety-relevant designs follow local codes and licensed review."

// Data is everything a report shows. Only Title, Source and Parts are
// needed; every other section is left out when its field is empty.
type Data struct {
	// Title names the circuit ("" = "nodal report").
	Title string
	// Summary is a one-paragraph description of the circuit, if any.
	Summary string
	// Source identifies the circuit file the report was made from.
	Source Source
	// Version is nodal's version string ("" = "development build").
	Version string
	// Notes are remarks of the analysis worth a reader's attention
	// (for instance cancelled pole-zero pairs), shown with the summary.
	Notes []string
	// Generated is when the report was made, as text ("2026-12-02 15:40
	// UTC"); "" leaves it out.
	Generated string
	// CommandLine is the command that made the report ("nodal report
	// tone.nodal -o tone.html"); "" leaves it out.
	CommandLine string
	// SourceText is the circuit file as read, listed at the end of the
	// report; "" leaves the listing out.
	SourceText string

	Parts    []Part
	Transfer *Transfer
	Roots    []Root
	Bode     Plot
	// Response is a short table of the frequency response (for instance one
	// point per decade and the −3 dB points), shown under the Bode plot and
	// in the text report.
	Response []ResponsePoint
	PoleZero Plot
	Step     *Step
	// MonteCarlo is the tolerance analysis, when the file has tolerances.
	MonteCarlo *MonteCarlo
	// Verdicts are the requirement checks, when the file has requirements.
	Verdicts []Verdict
	// Banner, when not empty, is shown at the very top of the report: the
	// circuit is not stable (or an ideal op-amp hides a wrong polarity),
	// one paragraph per finding.
	Banner []string
	// Stability is the one-line stability statement of the summary.
	Stability string
	// Loops are the loop gains named by requirements (phase_margin@U1 ...).
	Loops []Loop
	// Noise is the noise at the output, when the file has a noise
	// requirement (noise@F, noise_rms@F1..F2).
	Noise *Noise
	// ResponseName is the named response the response sections
	// (Transfer, Roots, Bode, Response, PoleZero, Step, MonteCarlo) are
	// of; "" when the report has one output. Their headings then start
	// with it.
	ResponseName string
	// Responses are the further named responses of the file, each with
	// ResponseName and only its response sections set; each gets the
	// same sections after the first response's.
	Responses []*Data
}

// Loop is the loop gain around one gain element: T(s) factored, its Bode
// plot with the margins marked, and the figures (name, value) rows.
type Loop struct {
	Part     string
	Factored string
	Plot     Plot
	Figures  [][2]string
}

// Noise is the noise section: the density plot, the figures integrated
// over FromHz..ToHz (Hz) at TempK (K) and each source's share. OutRMS is
// in OutUnit ("V"); InRMS in InUnit, nil without an input source or when
// |H| vanishes in the band; ENBWHz of |H|² (of the output density without
// input). Method says how the band was integrated.
type Noise struct {
	Output, Input   string
	TempK           float64
	FromHz, ToHz    float64
	OutRMS          float64
	OutUnit, InUnit string
	InRMS           *float64
	ENBWHz          float64
	Method          string
	Plot            Plot
	Contributions   []NoiseContribution
}

// NoiseContribution is one source's output RMS over the band (in the
// output's unit) and its share of the output mean-square (0…1).
type NoiseContribution struct {
	Source   string
	RMS      float64
	Fraction float64
}

// Source is the circuit file: its name as the user gave it and the
// SHA-256 of its bytes (64 lower-case hex digits; see Checksum).
// BuiltIn marks the embedded demo circuit.
type Source struct {
	Name    string
	SHA256  string
	BuiltIn bool
}

// Checksum returns the SHA-256 of data as 64 lower-case hex digits, the
// form Source.SHA256 expects.
func Checksum(data []byte) string {
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])
}

// Part is one row of the parts table, already written as text: the part's
// name, its kind ("resistor", "capacitor", …), the nodes it connects in
// order, its value with unit ("4.7 kΩ") and tolerance ("±1 %", "" for
// none).
type Part struct {
	Name, Kind string
	Nodes      []string
	Value      string
	Tolerance  string
}

// Transfer is the transfer function from Input to Output in the forms the
// analysis wrote out: Factored (gain, zeros and poles), Expanded
// (polynomials in s) and the ODE relating output and input in time. Empty
// strings are left out.
type Transfer struct {
	Input, Output string
	Factored      string
	Expanded      string
	ODE           string
}

// RootKind says whether a Root is a pole or a zero.
type RootKind int

const (
	// Pole of the transfer function.
	Pole RootKind = iota
	// Zero of the transfer function.
	Zero
)

// String returns "pole" or "zero".
func (k RootKind) String() string {
	if k == Zero {
		return "zero"
	}
	return "pole"
}

// Root is one pole or zero: its value s in rad/s, its natural frequency
// F0Hz = |s|/2π in Hz, and its quality factor Q = |s|/(−2·Re s) for a
// complex root (transfer.PairOf; +Inf on the jω axis, nil for real roots).
type Root struct {
	Kind RootKind
	S    complex128
	F0Hz float64
	Q    *float64
	// Multiplicity is how many times S is a root (an m-fold root is one
	// Root); 0 means 1.
	Multiplicity int
}

// Plot is a figure drawn inline as SVG: either Figure (rendered by the
// report) or SVG (a ready SVG document from a trusted source; an XML
// prolog is stripped). Caption describes it. The zero Plot is absent.
type Plot struct {
	Figure  *plot.Figure
	SVG     string
	Caption string
}

// present reports whether the plot has something to draw.
func (p Plot) present() bool { return p.Figure != nil || p.SVG != "" }

// Step is the step response section: the plot and its metrics.
type Step struct {
	Plot    Plot
	Metrics []Metric
}

// Metric is one named number with its unit ("Hz", "s", "dB", "%", "" for
// a plain ratio); Note adds a remark ("no overshoot"). Units that take SI
// prefixes (Hz, s, V, A, Ω, F, H, rad/s) are written with them.
type Metric struct {
	Name  string
	Value float64
	Unit  string
	Note  string
}

// MonteCarlo is the tolerance analysis: Runs random draws from Seed, the
// min–max band plot, the metric statistics and the metric histograms.
type MonteCarlo struct {
	Runs       int
	Seed       int64
	Band       Plot
	Stats      []Stat
	Histograms Plot
}

// Stat summarises one metric over the Monte Carlo runs, in Unit: the
// nominal value, sample mean, sample standard deviation, minimum and
// maximum.
type Stat struct {
	Name, Unit                      string
	Nominal, Mean, StdDev, Min, Max float64
}

// Verdict is one requirement check: the requirement as written, the
// nominal value of its metric (in Unit), whether the nominal design
// passes; the range over the worst-case corners (WorstMin..WorstMax, with
// Worst false when no corner was evaluated, as for a circuit without
// tolerances) and whether it passes; after a Monte Carlo run, the
// fraction of runs that pass (Yield in 0…1, nil without one). The yield
// verdict passes when every run passes.
type Verdict struct {
	Requirement string
	Value       float64
	Unit        string
	Pass        bool

	Worst              bool
	WorstMin, WorstMax float64
	WorstPass          bool

	Yield *float64
}

// ResponsePoint is one row of the frequency-response table: frequency in
// Hz, magnitude in dB and phase in degrees.
type ResponsePoint struct {
	FreqHz, MagDB, PhaseDeg float64
}
