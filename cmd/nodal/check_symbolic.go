package main

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"nodal/analysis/check"
	"nodal/analysis/derivation"
	"nodal/analysis/symbolic"
	"nodal/netlist"
)

// symbolicCheck is the outcome of the exact comparison of a hand
// derivation with the circuit's symbolic transfer function.
type symbolicCheck struct {
	// Done is true when the comparison was possible: the derivation is
	// polynomial in its names after clearing denominators and every name
	// is a symbol of the circuit (a part name or NAME.a0 and the like).
	Done bool `json:"done"`
	// Identical: N_yours·D_circuit − N_circuit·D_yours ≡ 0 exactly.
	Identical bool `json:"identical"`
	// Reason says why the comparison was not done.
	Reason string `json:"reason,omitempty"`
	// Symbols are the names compared symbolically; every other part
	// value of the circuit is substituted exactly at its nominal value.
	Symbols []string `json:"symbols,omitempty"`
	// Differences lists per power of s which terms yours has extra or
	// misses, in your scaling ("den s^1: missing R2*C1; extra R1*C1").
	Differences []string `json:"differences,omitempty"`
	// Circuit and Yours are the two sides as polynomials (index k the
	// coefficient of s^k).
	Circuit *polysJSON `json:"circuit,omitempty"`
	Yours   *polysJSON `json:"yours,omitempty"`
}

// compareSymbolic compares yours with the circuit's H(s) kept symbolic in
// exactly the names yours uses. It never fails: when the comparison is
// impossible the result says why.
func compareSymbolic(e *env, l *loaded, q tfRequest, yours *derivation.Rational) symbolicCheck {
	num, den, ok, why := symbolic.FromDerivation(yours)
	if !ok {
		return symbolicCheck{Reason: "your expression is not a polynomial in its names (" + why + ")"}
	}
	names := polyNames(append(append([]symbolic.Poly(nil), num...), den...))
	if len(names) == 0 {
		return symbolicCheck{Reason: "your expression names no part"}
	}
	if ps := paramNames(l.circuit, names); len(ps) > 0 {
		return symbolicCheck{Reason: fmt.Sprintf("your expression uses the parameter%s %s, not part symbols", plural(len(ps)), strings.Join(ps, ", "))}
	}
	if ns := nonSymbols(l.circuit, names); len(ns) > 0 {
		return symbolicCheck{Reason: fmt.Sprintf("your expression uses %s, not a part symbol (symbols are the names of resistors, capacitors, inductors and controlled sources, NAME.a0, NAME.rout, NAME.wt, NAME.M)", strings.Join(ns, ", "))}
	}
	p, err := resolveProbe(l.circuit, q)
	if err != nil {
		return symbolicCheck{Reason: err.Error()}
	}
	res, err := symbolic.Transfer(e.ctx, l.circuit, p.Ex, p.Ob, symbolic.Options{Keep: names})
	var se *symbolic.SizeError
	if errors.As(err, &se) {
		return symbolicCheck{Reason: fmt.Sprintf("the circuit's H(s) in your %d names grows past %d terms", len(names), se.Limit)}
	}
	if err != nil {
		return symbolicCheck{Reason: err.Error()}
	}
	out := symbolicCheck{Done: true, Symbols: displayNames(res.Symbols, names),
		Circuit: &polysJSON{Num: res.NumStrings(), Den: res.DenStrings()},
		Yours:   &polysJSON{Num: formatPolys(num, res.Symbols), Den: formatPolys(den, res.Symbols)},
	}
	same, diff := symbolic.Equivalent(num, den, res.Num, res.Den)
	out.Identical = same
	for _, d := range diff.Powers {
		out.Differences = append(out.Differences, powerDiffText(d, res.Symbols))
	}
	if !same && len(out.Differences) == 0 {
		// The coefficients match one by one only after a scale that
		// is not constant: say so rather than print nothing.
		out.Differences = []string{"the two differ by more than a constant factor"}
	}
	return out
}

// powerDiffText is PowerDiff.String with the terms in the circuit's
// display order (R1*C2 rather than C2*R1).
func powerDiffText(d symbolic.PowerDiff, order []string) string {
	side := "num"
	if d.InDen {
		side = "den"
	}
	var msg []string
	if !d.Missing.IsZero() {
		msg = append(msg, "missing "+d.Missing.Format(order))
	}
	if !d.Extra.IsZero() {
		msg = append(msg, "extra "+d.Extra.Format(order))
	}
	return fmt.Sprintf("%s s^%d: %s", side, d.Power, strings.Join(msg, "; "))
}

// displayNames orders names as in the circuit's display order, names the
// result does not contain last.
func displayNames(order, names []string) []string {
	in := map[string]bool{}
	for _, n := range names {
		in[n] = true
	}
	var out []string
	for _, s := range order {
		if in[s] {
			out = append(out, s)
			delete(in, s)
		}
	}
	for _, n := range names {
		if in[n] {
			out = append(out, n)
		}
	}
	return out
}

// polyNames returns the variables of ps, sorted.
func polyNames(ps []symbolic.Poly) []string {
	set := map[string]bool{}
	for _, p := range ps {
		for _, v := range p.Vars() {
			set[v] = true
		}
	}
	out := make([]string, 0, len(set))
	for v := range set {
		out = append(out, v)
	}
	sort.Strings(out)
	return out
}

// nonSymbols returns the names that are no symbol of analysis/symbolic:
// a symbol is the name of a resistor, capacitor, inductor or controlled
// source, or an op-amp or coupling parameter that symbolLookup resolves.
func nonSymbols(c *netlist.Circuit, names []string) []string {
	lookup := symbolLookup(c)
	var out []string
	for _, n := range names {
		if p, ok := c.Part(n); ok {
			switch p.Kind {
			case netlist.Resistor, netlist.Capacitor, netlist.Inductor, netlist.VCVS, netlist.VCCS, netlist.CCVS, netlist.CCCS:
				continue
			}
		} else if _, ok := lookup(n); ok && strings.Contains(n, ".") {
			if _, plain := c.Lookup(n); !plain {
				continue
			}
		}
		out = append(out, n)
	}
	return out
}

// paramNames returns the names that are parameters (let) of c. A name
// that is both a parameter and a part whose value is that parameter's
// (let Rf = 1M, Rf: resistor ... Rf) means the same number either way and
// is the part's symbol.
func paramNames(c *netlist.Circuit, names []string) []string {
	var out []string
	for _, n := range names {
		for _, p := range c.Params {
			if p.Name != n {
				continue
			}
			if part, ok := c.Part(n); !ok || part.Kind == netlist.OpAmp || part.Value != p.Value {
				out = append(out, n)
			}
			break
		}
	}
	return out
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

func formatPolys(ps []symbolic.Poly, order []string) []string {
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = p.Format(order)
	}
	return out
}

// symbolLookup is c.Lookup extended by the symbols of analysis/symbolic
// that are not part values: NAME.a0 (op-amp DC gain, V/V), NAME.rout
// (op-amp output resistance, Ω), NAME.wt (op-amp ωt = 2π·gbw, rad/s) and
// NAME.M (mutual inductance K·√(L1·L2) of a coupling, H), each only when
// the part has that parameter.
func symbolLookup(c *netlist.Circuit) derivation.Lookup {
	return func(name string) (float64, bool) {
		if v, ok := c.Lookup(name); ok {
			return v, true
		}
		i := strings.LastIndexByte(name, '.')
		if i <= 0 {
			return 0, false
		}
		p, ok := c.Part(name[:i])
		if !ok {
			return 0, false
		}
		switch suffix := name[i+1:]; {
		case p.Kind == netlist.OpAmp && suffix == "a0" && p.A0 > 0:
			return p.A0, true
		case p.Kind == netlist.OpAmp && suffix == "rout" && p.Rout > 0:
			return p.Rout, true
		case p.Kind == netlist.OpAmp && suffix == "wt" && p.GBWHz > 0:
			return 2 * math.Pi * p.GBWHz, true
		case p.Kind == netlist.Coupling && suffix == "M":
			l1, ok1 := c.Lookup(p.Coupled[0])
			l2, ok2 := c.Lookup(p.Coupled[1])
			if ok1 && ok2 {
				return p.Value * math.Sqrt(l1*l2), true
			}
		}
		return 0, false
	}
}

// checkVerdict is the final verdict: the band's response comparison with
// --band, else the symbolic one when it was possible, else the numeric one.
func checkVerdict(res *check.CheckResult, sc symbolicCheck) bool {
	if res.Options.BandOnly {
		return res.Agrees
	}
	if sc.Done {
		return sc.Identical
	}
	return res.Agrees
}

// symbolicLines writes the symbolic part of the check report.
func symbolicLines(sc symbolicCheck, numericAgrees bool) []string {
	if !sc.Done {
		return []string{"symbolic comparison: not possible, " + sc.Reason + "; the verdict is the numeric one"}
	}
	var out []string
	if sc.Identical {
		out = append(out, "symbolic comparison: identical")
	} else {
		out = append(out, "symbolic comparison: differs — "+strings.Join(sc.Differences, "; "))
		if numericAgrees {
			out = append(out, "  the values agree but the expressions do not: equal part values hide the slip")
		}
	}
	out = append(out, fmt.Sprintf("  (exact, in %s; every other part at its nominal value)", strings.Join(sc.Symbols, ", ")))
	return out
}
