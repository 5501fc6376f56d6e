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
		out = append(out, "the circuit is unstable: "+offendingText(res.Offending)+"; no steady state exists and responses grow"+involvedText(res.Involved)+foundText(res))
	case stability.Unchecked, stability.Passive:
		out = append(out, unprovenText(res))
	case stability.Marginal:
		out = append(out, "the circuit is marginally stable: "+offendingText(res.Offending)+"; a response at those frequencies does not decay"+involvedText(res.Involved))
	}
	for _, p := range res.Polarity {
		out = append(out, fmt.Sprintf("%s: the loop around %s is unstable with a finite-gain op-amp (A0 = %s, gbw = %s; %s); are its inputs swapped?",
			p, p, engNumber(stability.FiniteOpAmpA0), notation.Eng(stability.FiniteOpAmpGBWHz, "Hz"), naturalList(res.PolarityFrequencies)))
	}
	return out
}

// unprovenText is the warning of a circuit whose stability nodal cannot
// prove (the classes Unchecked and Passive), with the reason.
func unprovenText(res *stability.Result) string {
	past := fmt.Sprintf("past %d unknowns nodal does not compute every natural frequency", stability.MaxUnknowns)
	switch res.Reason {
	case stability.ReasonPassiveZero:
		return "stability not proven strict: every part is passive, so no natural frequency lies in the right half-plane, but s = 0 is one (a node reached only through capacitors or current sources, or a loop of inductors and voltage sources); " + past
	case stability.ReasonPassiveLossless:
		return "stability not proven strict: every part is passive, so no natural frequency lies in the right half-plane, but a lossless mode on the jω axis (a capacitor or inductor no resistor damps) is not ruled out; " + past
	case stability.ReasonPassiveBlock:
		return fmt.Sprintf("stability not proven strict: a block of %d unknowns holds only passive parts, so none of its natural frequencies lies in the right half-plane, but they are not computed (%s); the other blocks are stable or marginal", res.LargestBlock, past)
	case stability.ReasonNotFound:
		return fmt.Sprintf("stability not checked: a block of %d unknowns has active parts; shift-and-invert Arnoldi with shifts from %s to %s found no natural frequency in the right half-plane, which does not prove there is none (%s); nothing here says it is stable",
			res.LargestBlock, notation.Eng(res.SearchedRad[0], "rad/s"), notation.Eng(res.SearchedRad[1], "rad/s"), past)
	}
	return "stability not checked: " + res.Reason.String() + "; nothing here says it is stable"
}

// foundText says how the offending frequencies of a large circuit were
// found ("" when every natural frequency was computed).
func foundText(res *stability.Result) string {
	if res.AllNatural {
		return ""
	}
	if res.Reason != stability.ReasonFound {
		return fmt.Sprintf(" (the natural frequencies of a block of %d unknowns were not all computed)", res.LargestBlock)
	}
	return fmt.Sprintf(" (found by shift-and-invert Arnoldi in a block of %d unknowns and checked: an exact natural frequency of the circuit with G and C changed by at most %s of their norms; the other natural frequencies were not computed)",
		res.LargestBlock, engNumber(res.Backward))
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

// resonanceMarks are the resonances of the circuit whose stability is st:
// |Im p|/2π (Hz) of its complex natural frequencies p, where a sweep's
// phase unwrapping splits a step between two points
// (response.SweepOptions.PhaseMarksHz) so that a resonance narrower than
// the step cannot hide a whole turn. None for st nil or without natural
// frequencies (a large circuit's are not all computed).
func resonanceMarks(st *stability.Result) []float64 {
	if st == nil {
		return nil
	}
	var marks []float64
	for _, p := range st.Natural {
		if imag(p) > 0 {
			marks = append(marks, imag(p)/(2*math.Pi))
		}
	}
	return marks
}
