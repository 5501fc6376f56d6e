package main

import (
	"fmt"
	"io"
	"math"
	"strings"

	"nodal/analysis/stability"
	"nodal/netlist"
)

// circuitStability is the stability of the loaded circuit, explained (the
// loops involved, the polarity of ideal op-amps).
func circuitStability(l *loaded) (*stability.Result, error) {
	return stability.Analyze(l.circuit, stability.Options{Explain: true})
}

// naturalText is a natural frequency in rad/s with its frequency in Hz.
func naturalText(z complex128) string {
	return fmt.Sprintf("s = %s rad/s (%s)", complexText(z), netlist.FormatEng(math.Hypot(real(z), imag(z))/(2*math.Pi), "Hz"))
}

// naturalList joins the natural frequencies for a message, conjugates
// written once as ±.
func naturalList(zs []complex128) string {
	var parts []string
	for i := 0; i < len(zs); i++ {
		z := zs[i]
		if imag(z) > 0 && i+1 < len(zs) && zs[i+1] == complex(real(z), -imag(z)) {
			parts = append(parts, fmt.Sprintf("s = %s ± j%s rad/s (%s)", num(real(z)), num(imag(z)),
				netlist.FormatEng(math.Hypot(real(z), imag(z))/(2*math.Pi), "Hz")))
			i++
			continue
		}
		parts = append(parts, naturalText(z))
	}
	return strings.Join(parts, ", ")
}

// stabilityLines are the warnings a stability result calls for, one per
// line, without a "warning:" prefix; none for a stable circuit whose
// ideal op-amps are all right.
func stabilityLines(res *stability.Result) []string {
	var out []string
	switch res.Class {
	case stability.Unstable:
		out = append(out, "the circuit is unstable: natural frequencies "+naturalList(res.Offending)+
			" are in the right half-plane or repeated on the jω axis; no steady state exists and responses grow"+involvedText(res.Involved))
	case stability.Marginal:
		out = append(out, "the circuit is marginally stable: natural frequencies "+naturalList(res.Offending)+
			" lie on the jω axis; a response at those frequencies does not decay"+involvedText(res.Involved))
	}
	for _, p := range res.Polarity {
		out = append(out, fmt.Sprintf("%s: the loop around %s is unstable with a finite-gain op-amp (a0=%g, gbw=%s; %s); are its inputs swapped?",
			p, p, stability.FiniteOpAmpA0, netlist.FormatEng(stability.FiniteOpAmpGBWHz, "Hz"), naturalList(res.PolarityFrequencies)))
	}
	return out
}

// involvedText names the gain elements whose loop carries the offending
// frequencies.
func involvedText(parts []string) string {
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return "; the loop around " + parts[0] + " is involved"
	}
	return "; the loops around " + strings.Join(parts, ", ") + " are involved"
}

// warnStability writes the stability warnings to w (standard error).
func warnStability(w io.Writer, res *stability.Result) {
	for _, line := range stabilityLines(res) {
		fmt.Fprintln(w, "nodal: warning: "+line)
	}
}

// addStabilityJSON adds "stability" and "unstable_poles" (the offending
// natural frequencies, rad/s; empty when stable) to a JSON document.
func addStabilityJSON(doc map[string]any, res *stability.Result) {
	doc["stability"] = res.Class.String()
	doc["unstable_poles"] = rootsJSON(res.Offending)
	if len(res.Polarity) > 0 {
		doc["polarity_warnings"] = res.Polarity
	}
}
