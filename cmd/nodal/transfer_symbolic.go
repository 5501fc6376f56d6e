package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"nodal/analysis/symbolic"
	"nodal/netlist"
)

// symbolicTF is a symbolic transfer function with what it is of.
type symbolicTF struct {
	res          *symbolic.Result // H = Σ Num[k]·s^k / Σ Den[k]·s^k, s in rad/s
	what, unit   string
	yName, uName string
	// numVals and denVals are the coefficients' values at the nominal
	// part values, as the coefficients stand (no rescaling).
	numVals, denVals []float64
}

// parseKeep turns the --keep values into symbolic.Options.Keep: nil keeps
// every symbol; an explicitly empty list (--keep "") keeps none.
func parseKeep(keep []string, given bool) []string {
	if !given {
		return nil
	}
	out := []string{}
	for _, k := range keep {
		for _, f := range strings.Split(k, ",") {
			if f = strings.TrimSpace(f); f != "" {
				out = append(out, f)
			}
		}
	}
	return out
}

// deriveSymbolic computes the symbolic transfer function asked for by q.
// A too-large expression is a *symbolic.SizeError wrapped with an example
// of --keep.
func deriveSymbolic(e *env, l *loaded, q tfRequest, keep []string) (*symbolicTF, error) {
	p, err := resolveProbe(l.circuit, q)
	if err != nil {
		return nil, err
	}
	res, err := symbolic.Transfer(e.ctx, l.circuit, p.Ex, p.Ob, symbolic.Options{Keep: keep})
	if err != nil {
		var se *symbolic.SizeError
		if errors.As(err, &se) {
			return nil, fmt.Errorf("%w, for example --keep %s", err, strings.Join(keepExample(l.circuit), ","))
		}
		return nil, impedanceError(p, err)
	}
	what, unit := p.describe(l.circuit, res.Input, res.Output)
	st := &symbolicTF{res: res, what: what, unit: unit, yName: p.yName, uName: p.uName}
	st.numVals, st.denVals, err = res.CoefficientValues(res.Values)
	if err != nil {
		return nil, err
	}
	return st, nil
}

// keepExample names up to three resistors and capacitors of c, to show
// how --keep is written.
func keepExample(c *netlist.Circuit) []string {
	var out []string
	for _, p := range c.Parts {
		if (p.Kind == netlist.Resistor || p.Kind == netlist.Capacitor) && len(out) < 3 {
			out = append(out, p.Name)
		}
	}
	if len(out) == 0 {
		out = []string{"R1", "C1"}
	}
	return out
}

// coeffStrings writes every coefficient in the result's display order.
func (st *symbolicTF) coeffStrings() (num, den []string) {
	return st.res.NumStrings(), st.res.DenStrings()
}

// isSum reports whether a coefficient string has more than one term.
func isSum(c string) bool {
	return strings.Contains(c, " + ") || strings.Contains(c, " - ")
}

// symbolicSum writes Σ coeffs[k]·v(k) in nodal's derivation syntax (so it
// can be pasted into `nodal check`), skipping zero coefficients, in the
// order of ks. term(k, c) joins one coefficient with its variable part.
func symbolicSum(coeffs []string, ks []int, term func(k int, c string) string) string {
	var b strings.Builder
	first := true
	for _, k := range ks {
		c := coeffs[k]
		if c == "0" {
			continue
		}
		neg := strings.HasPrefix(c, "-") && !isSum(c)
		if neg {
			c = c[1:]
		}
		switch {
		case first && neg:
			b.WriteString("-")
		case !first && neg:
			b.WriteString(" - ")
		case !first:
			b.WriteString(" + ")
		}
		b.WriteString(term(k, c))
		first = false
	}
	if first {
		return "0"
	}
	return b.String()
}

// factorTimes writes c*x, dropping a factor 1 and parenthesising a sum.
func factorTimes(c, x string, xFirst bool) string {
	switch {
	case x == "":
		return c
	case c == "1":
		return x
	case isSum(c):
		c = "(" + c + ")"
	}
	if xFirst {
		return x + "*" + c
	}
	return c + "*" + x
}

// ascending returns 0..n-1; descending n-1..0.
func ascending(n int) []int {
	ks := make([]int, n)
	for i := range ks {
		ks[i] = i
	}
	return ks
}

func descending(n int) []int {
	ks := ascending(n)
	for i, j := 0, n-1; i < j; i, j = i+1, j-1 {
		ks[i], ks[j] = ks[j], ks[i]
	}
	return ks
}

// sPolyText writes Σ c_k·s^k as "1 + s*(R1*C1 + R2*C2) + s^2*R1*R2*C1*C2".
func sPolyText(coeffs []string) string {
	return symbolicSum(coeffs, ascending(len(coeffs)), func(k int, c string) string {
		x := ""
		switch k {
		case 0:
		case 1:
			x = "s"
		default:
			x = fmt.Sprintf("s^%d", k)
		}
		return factorTimes(c, x, true)
	})
}

// hText writes H(s) = N/D in derivation syntax.
func (st *symbolicTF) hText() string {
	num, den := st.coeffStrings()
	n, d := sPolyText(num), sPolyText(den)
	if d == "1" {
		return n
	}
	if isSum(n) {
		n = "(" + n + ")"
	}
	return n + "/(" + d + ")"
}

// derivText writes the k-th derivative of signal v: y, y', y”, y^(3).
func derivText(v string, k int) string {
	switch k {
	case 0:
		return v
	case 1, 2:
		return v + strings.Repeat("'", k)
	}
	return fmt.Sprintf("%s^(%d)", v, k)
}

// odeText writes Σ a_k·y⁽ᵏ⁾ = Σ b_k·u⁽ᵏ⁾ (a = D, b = N, highest order
// first) in derivation syntax, so `nodal check --ode` reads it back.
func (st *symbolicTF) odeText() string {
	num, den := st.coeffStrings()
	side := func(coeffs []string, v string) string {
		return symbolicSum(coeffs, descending(len(coeffs)), func(k int, c string) string {
			return factorTimes(c, derivText(v, k), false)
		})
	}
	return side(den, st.yName) + " = " + side(num, st.uName)
}

// symbolsText lists the kept symbols with their nominal values.
func (st *symbolicTF) symbolsText() string {
	if len(st.res.Symbols) == 0 {
		return "none (every value substituted)"
	}
	parts := make([]string, len(st.res.Symbols))
	for i, s := range st.res.Symbols {
		parts[i] = fmt.Sprintf("%s = %s", s, engNumber(st.res.Values[s]))
	}
	return strings.Join(parts, ", ")
}

// table prints the symbolic report.
func (st *symbolicTF) table(w io.Writer) error {
	num, den := st.coeffStrings()
	fmt.Fprintf(w, "%s  [%s], symbolic (s in rad/s, values in SI units)\n\n", st.what, st.unit)
	fmt.Fprintf(w, "symbols: %s\n", st.symbolsText())
	for _, side := range []struct {
		name   string
		coeffs []string
		vals   []float64
	}{{"N(s)", num, st.numVals}, {"D(s)", den, st.denVals}} {
		fmt.Fprintf(w, "\n%s by power of s:\n", side.name)
		for k, c := range side.coeffs {
			fmt.Fprintf(w, "  %-5s %12s   %s\n", fmt.Sprintf("s^%d", k), engNumber(side.vals[k]), c)
		}
	}
	fmt.Fprintf(w, "\nH(s) = %s\n", st.hText())
	fmt.Fprintf(w, "\ndifferential equation (%s output, %s input, t in s):\n    %s\n", st.yName, st.uName, st.odeText())
	for _, c := range st.res.Cancelled {
		fmt.Fprintf(w, "cancelled common factor: %s\n", c.Format(st.res.Symbols))
	}
	return nil
}

// symbolicJSON is the JSON document of `nodal transfer --symbolic`.
type symbolicJSON struct {
	What         string             `json:"what"`
	Unit         string             `json:"unit"`
	Symbolic     polysJSON          `json:"symbolic"`
	Values       valuesJSON         `json:"values"`
	Symbols      []string           `json:"symbols"`
	SymbolValues map[string]float64 `json:"symbol_values"`
	H            string             `json:"h"`
	ODE          string             `json:"ode"`
	Cancelled    []string           `json:"cancelled,omitempty"`
}

// valuesJSON holds the coefficient values at the nominal part values,
// index k the coefficient of s^k.
type valuesJSON struct {
	Num []float64 `json:"num"`
	Den []float64 `json:"den"`
}

func (st *symbolicTF) json() symbolicJSON {
	doc := symbolicJSON{
		What: st.what, Unit: st.unit,
		Symbolic:     polysJSON{Num: st.res.NumStrings(), Den: st.res.DenStrings()},
		Values:       valuesJSON{Num: st.numVals, Den: st.denVals},
		Symbols:      append([]string{}, st.res.Symbols...),
		SymbolValues: map[string]float64{},
		H:            st.hText(),
		ODE:          st.odeText(),
	}
	for _, s := range st.res.Symbols {
		doc.SymbolValues[s] = st.res.Values[s]
	}
	for _, c := range st.res.Cancelled {
		doc.Cancelled = append(doc.Cancelled, c.Format(st.res.Symbols))
	}
	return doc
}

// runSymbolic is `nodal transfer --symbolic`.
func (c *transferCmd) runSymbolic(e *env, l *loaded) error {
	if c.Plot != "" {
		return errors.New("--plot draws numeric poles and zeros: run it without --symbolic")
	}
	return c.symbolicArgs.write(e, l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref}, c.File, c.Output, c.Format)
}

// symbolicArgs are the flags of a symbolic result (nodal transfer, nodal
// impedance).
type symbolicArgs struct {
	Symbolic bool     `help:"Give N(s) and D(s) in the parts' own names (R1, C2, U1.a0) with each coefficient's value."`
	Keep     []string `help:"With --symbolic: keep only these parts (or symbols such as U1.a0) symbolic, substitute the rest." placeholder:"R1,C1,..." sep:","`
}

// check refuses --keep without --symbolic.
func (a *symbolicArgs) check() error {
	if a.Keep != nil && !a.Symbolic {
		return errors.New("--keep chooses the symbols of --symbolic: add --symbolic")
	}
	return nil
}

// write derives the symbolic result of q and writes it as a table or JSON
// to output (standard output when empty), never over file.
func (a *symbolicArgs) write(e *env, l *loaded, q tfRequest, file, output, format string) error {
	st, err := deriveSymbolic(e, l, q, parseKeep(a.Keep, a.Keep != nil))
	if err != nil {
		return err
	}
	return writeTo(e, output, []string{file}, func(w io.Writer) error {
		if format == "json" {
			return writeJSON(w, st.json())
		}
		return st.table(w)
	})
}
