package main

import (
	"fmt"
	"io"
	"math"
	"math/cmplx"

	"nodal/analysis/signal"
	"nodal/analysis/steady"
)

// driveCmd prints the sinusoidal steady-state output for a drive signal.
type driveCmd struct {
	circuitArgs
	probeArgs
	Signal string `required:"" help:"Input signal, e.g. \"0.8*sin(2*pi*400*t)\" or \"1.5*cos(2*pi*50*t + 30deg) + 2\"." placeholder:"EXPRESSION" expression:""`
	All    bool   `help:"Also print the phasor of every node (single-frequency drive only)."`
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *driveCmd) Help() string {
	return `Drives the input source with a sum of sinusoids and a constant and gives the
exact steady-state output by superposition: each term's amplitude scales by
|H(jω)| and its phase shifts by arg H(jω); the constant uses H(0). Write ω
directly in rad/s (5*sin(2500*t)) or as 2*pi*f; phases in rad or with deg.

A steady state exists only for a stable circuit: an unstable one (a
natural frequency in the right half-plane) is refused with exit status 2,
and so is a marginally stable one driven at the frequency of its undamped
mode; driven elsewhere, a marginal circuit's output is printed with a
warning (the undamped mode never decays).

Examples:

    nodal drive testdata/examples/logger_antialias.nodal --out out --signal "0.8*sin(2*pi*400*t)"
    nodal drive testdata/examples/logger_antialias.nodal --out out --signal "1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) + 2"
    nodal drive testdata/examples/logger_antialias.nodal --out out --signal "sin(2*pi*1k*t)" --all`
}

// nodePhasor is one node's phasor in --all.
type nodePhasor struct {
	Unknown  string  `json:"unknown"`
	Mag      float64 `json:"mag"`
	PhaseDeg float64 `json:"phase_deg"`
}

// Run computes the steady state.
func (c *driveCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json"); err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	sig, err := signal.Parse("--signal", c.Signal)
	if err != nil {
		return err
	}
	for _, w := range sig.Warnings {
		fmt.Fprintln(e.stderr, w.Error())
	}
	sys, err := c.system(l)
	if err != nil {
		return err
	}
	h := func(s complex128) complex128 {
		v, err := sys.H(s)
		if err != nil {
			// A singular point is a pole of H: unbounded.
			return cmplx.Inf()
		}
		return v
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	var omegas []float64
	for _, t := range sig.Terms {
		omegas = append(omegas, t.OmegaRad)
	}
	if sig.DC != 0 {
		omegas = append(omegas, 0)
	}
	if err := steadyStateRefusal(stab, omegas); err != nil {
		return err
	}
	st, err := steady.SteadyState(h, sig)
	if err != nil {
		return err
	}
	var phasors []nodePhasor
	if c.All {
		if len(sig.Terms) != 1 {
			return fmt.Errorf("--all needs a single-frequency drive (one sin or cos term); the signal has %d", len(sig.Terms))
		}
		term := sig.Terms[0]
		x, err := sys.SolveAll(complex(0, term.OmegaRad))
		if err != nil {
			return err
		}
		// The drive phasor A·e^{jφ}, in the drive's own function: a node
		// reading (m, θ) is m·sin(ωt + θ) for a sin drive, m·cos(ωt + θ)
		// for a cos drive.
		u := cmplx.Rect(term.Amplitude, term.PhaseRad)
		for i, name := range sys.Unknowns {
			v := x[i] * u
			phasors = append(phasors, nodePhasor{Unknown: name, Mag: cmplx.Abs(v), PhaseDeg: cmplx.Phase(v) * 180 / math.Pi})
		}
	}
	return writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
		if c.Format == "json" {
			doc := steadyDoc(st, phasors)
			doc.stabilityJSON = newStabilityJSON(stab)
			return writeJSON(w, doc)
		}
		warnStability(e.stderr, stab)
		return steadyTable(w, st, phasors, sig)
	})
}

// steadyTable prints the closed form and the per-term table.
func steadyTable(w io.Writer, st *steady.Steady, phasors []nodePhasor, sig *signal.Signal) error {
	fmt.Fprintln(w, steadyText(st))
	fmt.Fprintln(w)
	t := newTable(w, "term", "freq_hz", "omega_rad_s", "in_amplitude", "in_phase_deg", "gain", "shift_deg", "out_amplitude", "out_phase_deg")
	opt := func(p *float64, dec int) string {
		if p == nil {
			return "unbounded"
		}
		if dec < 0 {
			return num(*p)
		}
		return fixed(*p, dec)
	}
	for _, term := range st.Terms {
		if err := t.row(term.Function, num(term.FreqHz), num(term.OmegaRad), num(term.InAmplitude), fixed(term.InPhaseDeg, 2),
			opt(term.Gain, -1), opt(term.ShiftDeg, 2), opt(term.OutAmplitude, -1), opt(term.OutPhaseDeg, 2)); err != nil {
			return err
		}
	}
	if st.DCIn != 0 {
		dcOut, gain := "unbounded", "unbounded"
		if st.DCOut != nil {
			dcOut, gain = num(*st.DCOut), num(*st.DCOut/st.DCIn)
		}
		if err := t.row("dc", "0", "0", num(st.DCIn), "-", gain, "-", dcOut, "-"); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	if len(phasors) > 0 {
		fmt.Fprintf(w, "\nphasor of every unknown: amplitude·%s(ωt + phase), ω = %s rad/s\n", sig.Terms[0].Func, num(sig.Terms[0].OmegaRad))
		pt := newTable(w, "unknown", "amplitude", "phase_deg")
		for _, p := range phasors {
			if err := pt.row(p.Unknown, num(p.Mag), fixed(p.PhaseDeg, 3)); err != nil {
				return err
			}
		}
		if err := pt.render(); err != nil {
			return err
		}
	}
	return nil
}
