package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"nodal/cmd/nodal/notation"

	"nodal/analysis/check"
	"nodal/analysis/derivation"
	"nodal/netlist"
)

// checkCmd compares a hand derivation with the circuit.
type checkCmd struct {
	circuitArgs
	probeArgs
	ODE    string `name:"ode" help:"Your differential equation, e.g. \"R1*C1*y' + y = u\"." placeholder:"EQUATION" xor:"derivation"`
	TF     string `name:"tf" help:"Your transfer function in s, e.g. \"1/(1 + s*R1*C1)\"." placeholder:"EXPRESSION" xor:"derivation"`
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
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

ODE notation: y' y'' y^(3) dy/dt d^2y/dt^2; the output is the signal with
derivatives on the left, the input the one on the right.

Examples:

    nodal check testdata/examples/bridge_rc.nodal --out out --ode "R1*C1*y' + y = u"
    nodal check testdata/examples/tone_lowpass_ideal.nodal --out out --ode "R1*R2*C1*C2*y'' + C2*(R1+R2)*y' + y = u"
    nodal check testdata/examples/tone_lowpass_ideal.nodal --out out --tf "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)"`
}

// Run compares and prints the verdict.
func (c *checkCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json"); err != nil {
		return err
	}
	if c.ODE == "" && c.TF == "" {
		return errors.New("give your derivation with --ode \"EQUATION\" or --tf \"EXPRESSION\"")
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	r, err := extractTF(l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref})
	if err != nil {
		return err
	}
	yours, err := reduceDerivation(l.circuit, c.ODE, c.TF)
	if err != nil {
		return err
	}
	num, den, err := yours.Evaluate(symbolLookup(l.circuit))
	if err != nil {
		return err
	}
	res, err := check.Compare(r.tf, num, den, check.CompareOptions{Values: circuitValues(l.circuit)})
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
	t := newTable(w, "coefficient", "circuit", "yours", "ratio", "status")
	for _, row := range res.Coefficients {
		name := fmt.Sprintf("%s s^%d", row.Side, row.Power)
		ratio := "-"
		if row.Circuit != 0 {
			ratio = trimFloat(row.Ratio, 6)
		}
		if err := t.row(name, engNumber(row.Circuit), engNumber(row.Yours), ratio, string(row.Status)); err != nil {
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
			if err := pt.row(matchText(m.Circuit), matchText(m.Yours), trimFloat(m.RelDiff, 3)); err != nil {
				return err
			}
		}
		if err := pt.render(); err != nil {
			return err
		}
	}
	fmt.Fprintf(w, "\nover %s to %s: largest magnitude difference %s dB (at %s), largest phase difference %s° (at %s)\n",
		notation.Eng(res.FromHz, "Hz"), notation.Eng(res.ToHz, "Hz"),
		fixed(res.MaxMagDiffDB, 4), notation.Eng(res.MaxMagDiffHz, "Hz"),
		fixed(res.MaxPhaseDiffDeg, 3), notation.Eng(res.MaxPhaseDiffHz, "Hz"))
	for _, d := range diagnosis(res) {
		fmt.Fprintf(w, "  - %s\n", d)
	}
	numeric := "differs"
	if res.Agrees {
		numeric = "agrees"
	}
	fmt.Fprintf(w, "numeric comparison: %s\n", numeric)
	for _, line := range symbolicLines(sc, res.Agrees) {
		fmt.Fprintln(w, line)
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
