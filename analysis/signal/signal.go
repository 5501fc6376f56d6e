// Package signal parses drive-signal expressions: a sum of sinusoids and a
// constant, such as
//
//	0.8*sin(2*pi*400*t)
//	1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) + 2
//	5*sin(2500*t)
//	-sin(2*pi*1k*t - 0.5)
//
// Angular frequency may be written directly in rad/s (2500*t) or as 2*pi*f
// with f in Hz. Phases are in radians unless a number carries the suffix
// deg or °. Numbers are read as everywhere in nodal (syntax.ParseNumber):
// SI prefixes (T G M k m u µ n p f), IEC 60062 codes (1k5) and attached
// units (1kHz). The grammar is built with participle; see grammar.go.
package signal

import (
	"fmt"
	"math"
	"strings"

	"nodal/netlist/syntax"
)

// piValue is π for the frequency and phase arithmetic.
const piValue = math.Pi

// Term is one sinusoid Amplitude·Func(OmegaRad·t + PhaseRad).
//
// Invariants: Func is "sin" or "cos"; OmegaRad > 0 and finite; Amplitude
// and PhaseRad are finite; a phase written as more than a full turn is
// reduced to [−π, π], a smaller one is kept as written. Amplitude keeps the sign as written (-sin(...)
// gives −1). OmegaText is the ω·t product as written with blanks removed
// (e.g. "2*pi*400*t" or "2500*t"), so output can be printed in the style of
// the input; WrittenAsHz says it was written as 2*pi*f*t.
type Term struct {
	Func        string
	Amplitude   float64
	OmegaRad    float64
	PhaseRad    float64
	WrittenAsHz bool
	OmegaText   string
	Pos         syntax.Pos // of the term
}

// FreqHz returns the term's frequency in Hz, OmegaRad/(2π).
func (t Term) FreqHz() float64 { return t.OmegaRad / (2 * piValue) }

// Signal is a drive u(t) = DC + Σ Terms[i]. Terms keep the order written;
// several terms may share a frequency. DC is the sum of all constants.
//
// Warnings are readings the parser made but the user may not have meant,
// as positioned warnings (syntax.SevWarning): a phase without deg or rad
// is radians, and one above 2π in magnitude ("90") is probably degrees.
type Signal struct {
	Terms    []Term
	DC       float64
	Warnings []*syntax.Diagnostic
}

// String renders the signal in the parser's own syntax, so that
// Parse(s.String()) gives back the same values (to printing precision).
func (s *Signal) String() string {
	var b strings.Builder
	for _, t := range s.Terms {
		WriteTerm(&b, b.Len() == 0, t.Func, t.Amplitude, t.OmegaText, t.PhaseRad*180/piValue)
	}
	if s.DC != 0 || b.Len() == 0 {
		WriteConstant(&b, b.Len() == 0, s.DC)
	}
	return b.String()
}

// WriteTerm appends "A*func(OMEGATEXT ± PHASE°)" to b in the parser's
// syntax, joined with " + " or " - " unless first. The amplitude 1 is
// omitted, a phase that prints as 0.0° is omitted. Numbers use FormatNumber;
// the phase is in degrees with one decimal.
func WriteTerm(b *strings.Builder, first bool, fn string, amplitude float64, omegaText string, phaseDeg float64) {
	neg := amplitude < 0
	writeSign(b, first, neg)
	a := amplitude
	if neg {
		a = -a
	}
	if s := FormatNumber(a); s != "1" {
		b.WriteString(s)
		b.WriteString("*")
	}
	b.WriteString(fn)
	b.WriteString("(")
	b.WriteString(omegaText)
	ph := fmt.Sprintf("%.1f", phaseDeg)
	switch {
	case ph == "0.0" || ph == "-0.0":
	case strings.HasPrefix(ph, "-"):
		b.WriteString(" - " + ph[1:] + "°")
	default:
		b.WriteString(" + " + ph + "°")
	}
	b.WriteString(")")
}

// WriteConstant appends the constant c to b, joined with " + " or " - "
// unless first.
func WriteConstant(b *strings.Builder, first bool, c float64) {
	writeSign(b, first, c < 0)
	if c < 0 {
		c = -c
	}
	b.WriteString(FormatNumber(c))
}

func writeSign(b *strings.Builder, first, neg bool) {
	switch {
	case first && neg:
		b.WriteString("-")
	case neg:
		b.WriteString(" - ")
	case !first:
		b.WriteString(" + ")
	}
}

// FormatNumber prints x with 4 significant digits, without exponent for
// 1e-4 ≤ |x| < 1e6 and without trailing zeros (0.5657, 12.5, 2, 1.5e-07).
func FormatNumber(x float64) string {
	if x == 0 {
		return "0"
	}
	ax := x
	if ax < 0 {
		ax = -ax
	}
	if ax < 1e-4 || ax >= 1e6 {
		return fmt.Sprintf("%.4g", x)
	}
	s := fmt.Sprintf("%.4g", x)
	if strings.ContainsAny(s, "eE") { // %g switched to exponent form for ≥1e4
		s = fmt.Sprintf("%.0f", x)
	}
	return s
}

// At returns u(t) = DC + Σ A·f(ωt + φ) at time t in seconds.
func (s *Signal) At(t float64) float64 {
	u := s.DC
	for _, term := range s.Terms {
		x := term.OmegaRad*t + term.PhaseRad
		if term.Func == "cos" {
			u += term.Amplitude * math.Cos(x)
		} else {
			u += term.Amplitude * math.Sin(x)
		}
	}
	return u
}
