package main

import (
	"fmt"
	"io"
	"math"
	"strings"

	"nodal/analysis/stability"
	"nodal/cmd/nodal/notation"
)

// circuitStability is the stability of the loaded circuit, explained (the
// loops involved, the polarity of ideal op-amps).
func circuitStability(l *loaded) (*stability.Result, error) {
	return stability.Analyze(l.circuit, stability.Options{Explain: true})
}

// naturalText is a natural frequency in rad/s with its frequency in Hz.
func naturalText(z complex128) string {
	return fmt.Sprintf("s = %s rad/s (%s)", complexText(z), notation.Eng(math.Hypot(real(z), imag(z))/(2*math.Pi), "Hz"))
}

// naturalList joins the natural frequencies for a message, conjugates
// written once as ±.
func naturalList(zs []complex128) string {
	var parts []string
	for i := 0; i < len(zs); i++ {
		z := zs[i]
		if imag(z) > 0 && i+1 < len(zs) && zs[i+1] == complex(real(z), -imag(z)) {
			parts = append(parts, fmt.Sprintf("s = %s ± j%s rad/s (%s)", num(real(z)), num(imag(z)),
				notation.Eng(math.Hypot(real(z), imag(z))/(2*math.Pi), "Hz")))
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
		out = append(out, "the circuit is unstable: "+offendingText(res.Offending)+"; no steady state exists and responses grow"+involvedText(res.Involved))
	case stability.Marginal:
		out = append(out, "the circuit is marginally stable: "+offendingText(res.Offending)+"; a response at those frequencies does not decay"+involvedText(res.Involved))
	}
	for _, p := range res.Polarity {
		out = append(out, fmt.Sprintf("%s: the loop around %s is unstable with a finite-gain op-amp (A0 = %s, gbw = %s; %s); are its inputs swapped?",
			p, p, engNumber(stability.FiniteOpAmpA0), notation.Eng(stability.FiniteOpAmpGBWHz, "Hz"), naturalList(res.PolarityFrequencies)))
	}
	return out
}

// offendingText says where the offending natural frequencies lie.
func offendingText(zs []complex128) string {
	right := 0
	for _, z := range zs {
		if real(z) > 0 {
			right++
		}
	}
	where := "on the jω axis"
	switch {
	case right == len(zs):
		where = "in the right half-plane"
	case right > 0:
		where = "in the right half-plane or repeated on the jω axis"
	case len(zs) > 1 && !(len(zs) == 2 && zs[0] == complex(real(zs[1]), -imag(zs[1]))):
		where = "repeated on the jω axis"
	}
	noun := "natural frequency"
	if len(zs) > 1 {
		noun = "natural frequencies"
	}
	return noun + " " + naturalList(zs) + " " + where
}

// steadyStateRefusal returns the reason no steady state exists for a drive
// at the angular frequencies omegas (rad/s, 0 for a DC term), or nil: an
// unstable circuit has none at any frequency (its growing mode runs
// whatever the drive), a marginal one none at the frequency of an
// undamped mode (resonance without loss: the response grows as t·sin).
func steadyStateRefusal(res *stability.Result, omegas []float64) error {
	switch res.Class {
	case stability.Unstable:
		return fmt.Errorf("no steady state exists: the circuit is unstable (%s)%s; nodal time shows the growth", offendingText(res.Offending), involvedText(res.Involved))
	case stability.Marginal:
		for _, w := range omegas {
			for _, z := range res.Offending {
				if math.Abs(math.Abs(imag(z))-w) <= 1e-6*math.Max(w, math.Abs(imag(z))) || (w == 0 && z == 0) {
					return fmt.Errorf("no steady state exists: the drive at %s excites the undamped natural frequency %s of this marginally stable circuit", notation.Eng(w/(2*math.Pi), "Hz"), naturalText(z))
				}
			}
		}
	}
	return nil
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
