package main

import (
	"errors"
	"fmt"
	"io"
	"math"

	"nodal/analysis/check"
	"nodal/analysis/derivation"
	"nodal/cmd/nodal/notation"
	"nodal/netlist"
	"nodal/netlist/syntax"
)

// checkCmd compares a hand derivation with the circuit.
type checkCmd struct {
	circuitArgs
	probeArgs
	ODE      string `name:"ode" help:"Your differential equation, e.g. \"R1*C1*y' + y = u\"." placeholder:"EQUATION" xor:"derivation" expression:""`
	TF       string `name:"tf" help:"Your transfer function in s, e.g. \"1/(1 + s*R1*C1)\"." placeholder:"EXPRESSION" xor:"derivation" expression:""`
	Band     string `help:"Judge the responses only over this band, e.g. 20Hz..20kHz; the verdict is then the response comparison there." placeholder:"F1..F2"`
	Ideal    bool   `help:"Evaluate the circuit with every op-amp ideal (no a0, gbw or rout) for the comparison."`
	MagTol   string `name:"mag-tol" help:"Largest magnitude difference that agrees, in dB (default 0.01dB)." placeholder:"DB"`
	PhaseTol string `name:"phase-tol" help:"Largest phase difference that agrees, in degrees (default 0.1deg)." placeholder:"DEG"`
	Format   string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output   string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *checkCmd) Help() string {
	return `Compares a hand-derived ODE or transfer function with the circuit's exact
H(s), independent of overall scale: coefficient by coefficient (circuit,
yours, ratio), poles and zeros side by side, and the largest magnitude and
phase difference over the frequency range. Coefficients may use the file's
parameters and part values by name (R1, C2, LP1.R3, fc) and op-amp and
coupling symbols (U1.a0 DC gain, U1.rout ohms, U1.wt = 2π·gbw in rad/s,
Link1.M mutual inductance in henries). The verdict is
"agrees" (exit 0) or "differs" (exit 1), with a note on the likely slip.

When your expression uses only part names (R1, C2, U1.a0) and numbers, it is
also compared exactly with the circuit's symbolic H(s) in those names (the
other parts at their nominal values): "identical", or per power of s which
terms are missing or extra. That exact comparison gives the verdict, so a
slip hidden by equal part values (R1*C1 written for R2*C2) is caught.
Parameters (let), sqrt and pi leave the numeric comparison alone in charge.

ODE notation: y' y'' y^(3) dy/dt d^2y/dt^2, and everything nodal prints
(y′ y″ y‴ y⁽⁴⁾, s², ·, −, [ ]), so an ODE or H(s) from "nodal transfer"
pastes back; the output is the signal with derivatives on the left, the
input the one on the right. A value beginning with "-" needs no "=".

A number is compared to the precision it is written to: half a unit in
its last digit (59.97e-9 is ±0.005e-9); a whole number without exponent
or prefix (1, 2, 1500000000) is exact, and so are part names.

--band F1..F2 compares the responses only in that band (a derivation with
an ideal op-amp against a circuit with a 10 MHz one, in the audio band);
--ideal makes every op-amp of the circuit ideal for the comparison.
--mag-tol and --phase-tol set what agrees (defaults 0.01 dB and 0.1°).

Examples:

    nodal check testdata/examples/bridge_rc.nodal --out out --ode "R1*C1*y' + y = u"
    nodal check testdata/examples/tone_lowpass_ideal.nodal --out out --ode "R1*R2*C1*C2*y'' + C2*(R1+R2)*y' + y = u"
    nodal check testdata/examples/tone_lowpass_ideal.nodal --out out --tf "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)"
    nodal check testdata/examples/logger_antialias.nodal --out out --tf "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)" --band 20Hz..500Hz`
}

// Run compares and prints the verdict.
func (c *checkCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json"); err != nil {
		return err
	}
	if c.ODE == "" && c.TF == "" {
		return errors.New("give your derivation with --ode \"EQUATION\" or --tf \"EXPRESSION\"")
	}
	var band [2]float64
	var err error
	if c.Band != "" {
		if band[0], band[1], err = parseBand(c.Band); err != nil {
			return err
		}
	}
	var magTol, phaseTol float64
	if c.MagTol != "" {
		if magTol, err = syntax.ParseFlag("--mag-tol", c.MagTol, "dB"); err != nil {
			return err
		}
	}
	if c.PhaseTol != "" {
		if phaseTol, err = syntax.ParseFlag("--phase-tol", c.PhaseTol, "deg"); err != nil {
			return err
		}
	}
	if magTol < 0 || phaseTol < 0 || math.IsInf(magTol, 0) || math.IsInf(phaseTol, 0) {
		return errors.New("--mag-tol and --phase-tol must be positive and finite")
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	if c.Ideal {
		l = l.withIdealOpAmps()
	}
	r, err := extractTF(l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref})
	if err != nil {
		return err
	}
	yours, err := reduceDerivation(l.circuit, c.ODE, c.TF)
	if err != nil {
		return err
	}
	lookup := symbolLookup(l.circuit)
	num, den, err := yours.Evaluate(lookup)
	if err != nil {
		return err
	}
	tn, td := yours.Precision(lookup)
	res, err := check.Compare(r.tf, num, den, check.CompareOptions{Values: circuitValues(l.circuit),
		YoursNumTol: tn, YoursDenTol: td, FromHz: band[0], ToHz: band[1], BandOnly: c.Band != "",
		MagTolDB: magTol, PhaseTolDeg: phaseTol})
	if err != nil {
		return err
	}
	sc := compareSymbolic(e, l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref}, yours)
	agrees := checkVerdict(res, sc)
	if err := writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, checkDoc(res, agrees, sc))
		}
		return checkTable(w, r, res, sc)
	}); err != nil {
		return err
	}
	if !agrees {
		return &verdictError{msg: "differs"}
	}
	return nil
}

// reduceDerivation parses the user's ODE or transfer function into a
// rational function of s whose coefficients may name circuit values.
func reduceDerivation(c *netlist.Circuit, ode, tf string) (*derivation.Rational, error) {
	lookup := symbolLookup(c)
	known := func(name string) bool { _, ok := lookup(name); return ok }
	if ode != "" {
		eq, err := derivation.ParseODE("--ode", ode)
		if err != nil {
			return nil, err
		}
		return eq.Reduce(derivation.Signals{Known: known})
	}
	t, err := derivation.ParseTF("--tf", tf)
	if err != nil {
		return nil, err
	}
	return t.Reduce()
}

// checkTable prints the comparison and the verdict line.
func checkTable(w io.Writer, r *tfResult, res *check.CheckResult, sc symbolicCheck) error {
	fmt.Fprintf(w, "%s against your derivation (both normalised: lowest-order denominator coefficient 1)\n\n", r.what)
	if res.Options.BandOnly {
		fmt.Fprintf(w, "judged on the responses over %s to %s only; the coefficients are shown for information\n\n",
			notation.Eng(res.FromHz, "Hz"), notation.Eng(res.ToHz, "Hz"))
	}
	t := newTable(w, "coefficient", "circuit", "yours", "written_to", "ratio", "status")
	for _, row := range res.Coefficients {
		name := fmt.Sprintf("%s s^%d", row.Side, row.Power)
		ratio := "-"
		if row.Circuit != 0 {
			ratio = ratioText(row.Ratio, row.Status == check.CoefAgrees)
		}
		if err := t.row(name, engNumber(row.Circuit), engNumber(row.Yours), precisionText(row), ratio, string(row.Status)); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	for _, set := range []struct {
		name string
		ms   []check.RootMatch
	}{{"poles", res.Poles}, {"zeros", res.Zeros}} {
		if len(set.ms) == 0 {
			continue
		}
		fmt.Fprintf(w, "\n%s (rad/s)\n", set.name)
		pt := newTable(w, "circuit", "yours", "rel_diff")
		for _, m := range set.ms {
			diff := trimFloat(m.RelDiff, 3)
			switch {
			case m.Yours == nil:
				diff = "missing in yours"
			case m.Circuit == nil:
				diff = "extra in yours"
			}
			if err := pt.row(matchText(m.Circuit), matchText(m.Yours), diff); err != nil {
				return err
			}
		}
		if err := pt.render(); err != nil {
			return err
		}
	}
	fmt.Fprintf(w, "\nover %s to %s: largest magnitude difference %s dB (at %s%s), largest phase difference %s° (at %s%s)\n",
		notation.Eng(res.FromHz, "Hz"), notation.Eng(res.ToHz, "Hz"),
		fixed(res.MaxMagDiffDB, 4), notation.Eng(res.MaxMagDiffHz, "Hz"), allowanceText(res.MagAllowanceDB, res.Options.MagTolDB, 4, " dB"),
		fixed(res.MaxPhaseDiffDeg, 3), notation.Eng(res.MaxPhaseDiffHz, "Hz"), allowanceText(res.PhaseAllowanceDeg, res.Options.PhaseTolDeg, 3, "°"))
	for _, d := range diagnosis(res) {
		fmt.Fprintf(w, "  - %s\n", d)
	}
	numeric := "differs"
	if res.Agrees {
		numeric = "agrees"
	}
	fmt.Fprintf(w, "numeric comparison: %s\n", numeric)
	for _, line := range symbolicLines(sc, res.Agrees && !res.Options.BandOnly) {
		fmt.Fprintln(w, line)
	}
	if res.Options.BandOnly && sc.Done {
		fmt.Fprintln(w, "  (with --band the verdict is the response comparison over the band)")
	}
	verdict := "agrees"
	if !checkVerdict(res, sc) {
		verdict = "differs"
	}
	fmt.Fprintf(w, "\nverdict: %s\n", verdict)
	return nil
}

// matchText formats one side of a root match.
func matchText(z *complex128) string {
	if z == nil {
		return "(none)"
	}
	if math.Abs(imag(*z)) == 0 {
		return num(real(*z))
	}
	return complexText(*z)
}

// circuitValues maps every parameter and part name to its SI value, so
// the diagnosis can name a ratio of values ("= C1/C2").
func circuitValues(c *netlist.Circuit) map[string]float64 {
	v := map[string]float64{}
	for _, p := range c.Params {
		v[p.Name] = p.Value
	}
	for _, p := range c.Parts {
		if x, ok := c.Lookup(p.Name); ok && x != 0 {
			v[p.Name] = x
		}
	}
	return v
}

// ratioText writes a coefficient ratio with 6 significant digits, more
// when a ratio that does not agree would otherwise print as 1 (so "1"
// never sits beside "differs").
func ratioText(r float64, agrees bool) string {
	for digits := 6; digits <= 17; digits++ {
		t := trimFloat(r, digits)
		if agrees || r == 1 || (t != "1" && t != "-1") {
			return t
		}
	}
	return trimFloat(r, -1)
}

// precisionText writes the precision a coefficient of yours was written
// to: "exact", or ± half a unit of its last digit.
func precisionText(row check.CoefRow) string {
	if row.Yours == 0 {
		return "-"
	}
	if row.Precision == 0 {
		return "exact"
	}
	return "±" + engNumber(row.Precision)
}

// allowanceText says how far the written precision lets the response
// move at a frequency, on top of the tolerance tol ("" when it is exact).
func allowanceText(allow, tol float64, digits int, unit string) string {
	if allow == 0 {
		return ""
	}
	return fmt.Sprintf("; allowed %s%s: %s%s for the digits written + %s%s", fixed(allow+tol, digits), unit, fixed(allow, digits), unit, fixed(tol, digits), unit)
}

// withIdealOpAmps returns l with every op-amp of its circuit ideal (a0,
// gbw and rout removed), the file untouched.
func (l *loaded) withIdealOpAmps() *loaded {
	c := *l.circuit
	c.Parts = append([]netlist.Part(nil), c.Parts...)
	for i := range c.Parts {
		if c.Parts[i].Kind == netlist.OpAmp {
			c.Parts[i].A0, c.Parts[i].GBWHz, c.Parts[i].Rout = 0, 0, 0
		}
	}
	out := *l
	out.circuit = &c
	return &out
}
