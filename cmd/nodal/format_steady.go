package main

import (
	"strings"

	"nodal/analysis/signal"
	"nodal/analysis/steady"
)

// steadyText renders the steady-state output as a closed form in the
// style of the drive, e.g.
//
//	y(t) = 0.5657*sin(2*pi*400*t - 45.0°) + 2
//
// Amplitudes have 4 significant digits, phases one decimal in degrees; the
// text parses again with signal.Parse. An unbounded part is named instead
// of given a number:
//
//	y(t) unbounded: sin(2*pi*50*t) drives a pole on the jω axis
func steadyText(st *steady.Steady) string {
	var bad []string
	for _, t := range st.Terms {
		if t.Unbounded {
			bad = append(bad, t.Input.Func+"("+t.Input.OmegaText+")")
		}
	}
	if st.DCUnbounded {
		bad = append(bad, "the constant")
	}
	if len(bad) > 0 {
		verb := "drives a pole"
		if len(bad) > 1 {
			verb = "drive poles"
		}
		return "y(t) unbounded: " + strings.Join(bad, ", ") + " " + verb + " on the jω axis"
	}
	var b strings.Builder
	for _, t := range st.Terms {
		if *t.OutAmplitude == 0 {
			continue
		}
		signal.WriteTerm(&b, b.Len() == 0, t.Function, *t.OutAmplitude, t.Input.OmegaText, *t.OutPhaseDeg)
	}
	if *st.DCOut != 0 || b.Len() == 0 {
		signal.WriteConstant(&b, b.Len() == 0, *st.DCOut)
	}
	return "y(t) = " + b.String()
}
