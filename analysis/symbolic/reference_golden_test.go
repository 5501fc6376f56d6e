package symbolic_test

// Reference check of the symbolic transfer function on the eleven circuits
// of testdata/reference against the "symbolic" field of their goldens.
//
// Source: testdata/reference/gen_reference.py — one hand-written nodal
// formulation per circuit solved by Debian's python3-sympy 1.11.1 (solve,
// cancel, integer normalisation); it shares no code with nodal. The golden
// strings are sums of products of integers and names; they are parsed with
// nodal's own expression parser (analysis/derivation.ParseTF) and turned
// into exact symbolic.Poly values, so the comparison is exact:
// symbolic.Equivalent checks N_ref·D_nodal − N_nodal·D_ref ≡ 0, i.e.
// equality up to one common factor (the README's normalisation is a
// representation choice).

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"nodal/analysis/internal/reference"
	"sort"
	"strings"
	"testing"

	"nodal/analysis/derivation"
	"nodal/analysis/symbolic"
	"nodal/mna"
	"nodal/netlist"
)

// refDir is the reference directory relative to this package.
const refDir = "../../testdata/reference"

// refFreqTol bounds |ΔH|/|H| of the symbolic result evaluated at the
// golden's frequencies against scipy.signal.freqs (README: 1e-9).
const refFreqTol = 1e-9

// refSymGolden is the part of a golden (testdata/reference/README.md) the
// symbolic check uses.
type refSymGolden struct {
	Circuit  string `json:"circuit"`
	Input    string `json:"input"`
	Output   string `json:"output"`
	Symbolic struct {
		Num []string `json:"num"`
		Den []string `json:"den"`
	} `json:"symbolic"`
	Symbols map[string]string  `json:"symbols"`
	Derived map[string]string  `json:"derived"`
	Values  map[string]float64 `json:"values"`
	Freq    []struct {
		FreqHz   float64 `json:"freq_hz"`
		Mag      float64 `json:"mag"`
		PhaseDeg float64 `json:"phase_deg"`
	} `json:"freq"`
}

// nodalName maps a golden symbol to nodal's symbol name: an op-amp's a0
// is the op-amp's name in the golden ("U1") and NAME.a0 in nodal; the
// mutual inductance is the derived "M" = Link1*sqrt(L1*L2) in the golden and
// "Link1.M" in nodal. Every other symbol is the part name on both sides.
func nodalName(g *refSymGolden, sym string) string {
	if strings.HasPrefix(g.Symbols[sym], "a0 of op-amp") {
		return sym + ".a0"
	}
	if def, ok := g.Derived[sym]; ok && sym == "M" {
		if k, _, ok := strings.Cut(def, "*sqrt("); ok {
			return k + ".M"
		}
	}
	return sym
}

// parseRefPoly parses one golden coefficient string with nodal's expression
// parser and converts the tree to an exact polynomial, renaming symbols
// with nodalName.
func parseRefPoly(g *refSymGolden, src string) (symbolic.Poly, error) {
	tf, err := derivation.ParseTF("golden", src)
	if err != nil {
		return symbolic.Poly{}, err
	}
	return exprPoly(g, tf.Expr)
}

// exprPoly converts a sum-of-products expression tree: integer literals,
// names, unary minus, + − * and ^ with a non-negative integer exponent.
// Anything else (a division, sqrt, a non-integer) is an error: the README
// promises none.
func exprPoly(g *refSymGolden, e derivation.Expr) (symbolic.Poly, error) {
	switch n := e.(type) {
	case *derivation.Number:
		if n.Value != math.Trunc(n.Value) || math.Abs(n.Value) > 1<<53 {
			return symbolic.Poly{}, fmt.Errorf("%v: non-integer %s", n.At, n.Text)
		}
		return symbolic.Int(int64(n.Value)), nil
	case *derivation.Name:
		if n.Name == "s" {
			return symbolic.Poly{}, fmt.Errorf("%v: s inside a coefficient", n.At)
		}
		return symbolic.Var(nodalName(g, n.Name)), nil
	case *derivation.Unary:
		x, err := exprPoly(g, n.X)
		return x.Neg(), err
	case *derivation.Binary:
		x, err := exprPoly(g, n.X)
		if err != nil {
			return x, err
		}
		if n.Op == '^' {
			k, ok := n.Y.(*derivation.Number)
			if !ok || k.Value != math.Trunc(k.Value) || k.Value < 0 {
				return symbolic.Poly{}, fmt.Errorf("%v: exponent is not a non-negative integer", n.At)
			}
			p := symbolic.Int(1)
			for i := 0; i < int(k.Value); i++ {
				p = p.Mul(x)
			}
			return p, nil
		}
		y, err := exprPoly(g, n.Y)
		if err != nil {
			return y, err
		}
		switch n.Op {
		case '+':
			return x.Add(y), nil
		case '-':
			return x.Sub(y), nil
		case '*':
			return x.Mul(y), nil
		}
		return symbolic.Poly{}, fmt.Errorf("%v: operator %c in a golden polynomial", n.At, n.Op)
	}
	return symbolic.Poly{}, fmt.Errorf("%v: unexpected %T in a golden polynomial", e.Position(), e)
}

// refPolys parses a list of golden coefficient strings.
func refPolys(g *refSymGolden, srcs []string) ([]symbolic.Poly, error) {
	out := make([]symbolic.Poly, len(srcs))
	for k, src := range srcs {
		p, err := parseRefPoly(g, src)
		if err != nil {
			return nil, fmt.Errorf("coefficient of s^%d %q: %w", k, src, err)
		}
		out[k] = p
	}
	return out, nil
}

// refSymCase is one golden with nodal's symbolic result for its circuit.
type refSymCase struct {
	name string
	g    refSymGolden
	res  *symbolic.Result
}

// loadRefSymCases reads every golden (see package reference) and derives
// its circuit symbolically with every symbol kept.
func loadRefSymCases(t *testing.T) []refSymCase {
	t.Helper()
	all, err := reference.Load(refDir)
	if err != nil {
		t.Fatal(err)
	}
	var cases []refSymCase
	for _, rc := range all {
		var g refSymGolden
		if err := json.Unmarshal(rc.Raw, &g); err != nil {
			t.Fatalf("%s: %v", rc.Name, err)
		}
		c, err := netlist.Load(g.Circuit, rc.Src, nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := symbolic.Transfer(context.Background(), c, mna.Input{Source: g.Input},
			mna.Output{Kind: mna.NodeVoltage, Node: g.Output}, symbolic.Options{})
		if err != nil {
			t.Fatalf("%s: %v", g.Circuit, err)
		}
		cases = append(cases, refSymCase{rc.Name, g, res})
	}
	return cases
}

// compareRefSym returns every disagreement of nodal's symbolic result with
// the golden: H as a rational function of the symbols (exact), the set of
// symbols and their values, and H at the golden's frequencies.
func compareRefSym(g *refSymGolden, res *symbolic.Result) ([]string, error) {
	var out []string
	num, err := refPolys(g, g.Symbolic.Num)
	if err != nil {
		return nil, fmt.Errorf("golden num: %w", err)
	}
	den, err := refPolys(g, g.Symbolic.Den)
	if err != nil {
		return nil, fmt.Errorf("golden den: %w", err)
	}
	// Exact: sympy's N/D against nodal's, up to one common factor.
	if ok, diff := symbolic.Equivalent(num, den, res.Num, res.Den); !ok {
		out = append(out, fmt.Sprintf("H differs from the sympy golden: %s\n  golden num %q den %q\n  nodal  num %q den %q",
			diff, g.Symbolic.Num, g.Symbolic.Den, res.NumStrings(), res.DenStrings()))
	}
	// The symbols that occur. The golden's "symbols" map lists the part
	// symbols of the hand formulation, which may include one H does not
	// depend on (photodiode_hybrid_pi: Rd carries the cccs's current
	// whatever its value), so the occurring names are taken from the
	// parsed strings; every one must be described in "symbols".
	seen := map[string]bool{}
	for _, p := range append(append([]symbolic.Poly(nil), num...), den...) {
		for _, v := range p.Vars() {
			seen[v] = true
		}
	}
	var want []string
	for v := range seen {
		want = append(want, v)
	}
	for sym := range seen {
		described := false
		for s := range g.Symbols {
			described = described || nodalName(g, s) == sym
		}
		if !described {
			out = append(out, fmt.Sprintf("golden uses %s but does not describe it in symbols", sym))
		}
	}
	got := append([]string(nil), res.Symbols...)
	sort.Strings(want)
	sort.Strings(got)
	if strings.Join(got, " ") != strings.Join(want, " ") {
		out = append(out, fmt.Sprintf("symbols %v, golden strings use %v", got, want))
	}
	// The values nodal would substitute: the golden's are the exact binary
	// values of the file (M = K·√(L1·L2) computed in float64 on both sides,
	// so it may differ in the last bit).
	for s, v := range g.Values {
		if nv, ok := res.Values[nodalName(g, s)]; !ok || math.Abs(nv-v) > 4e-16*math.Abs(v) {
			out = append(out, fmt.Sprintf("value of %s: nodal %.17g (present %v), golden %.17g", s, nv, ok, v))
		}
	}
	// Numeric: nodal's symbolic H with the golden's values against
	// scipy.signal.freqs at the golden's frequencies.
	vals := map[string]float64{}
	for s, v := range g.Values {
		vals[nodalName(g, s)] = v
	}
	_, _, h, err := res.EvalNumeric(vals)
	if err != nil {
		return nil, fmt.Errorf("evaluate nodal's symbolic H: %w", err)
	}
	for _, p := range g.Freq {
		ref := cmplx.Rect(p.Mag, p.PhaseDeg*math.Pi/180)
		hv := h(complex(0, 2*math.Pi*p.FreqHz))
		if e := cmplx.Abs(hv-ref) / p.Mag; !(e <= refFreqTol) {
			out = append(out, fmt.Sprintf("%.6g Hz: symbolic H = %v, scipy %v (relative error %.2g > %g)", p.FreqHz, hv, ref, e, refFreqTol))
		}
	}
	return out, nil
}

// TestReferenceSymbolic compares nodal's symbolic H(s) of every reference
// circuit with the sympy golden (see the header of this file).
func TestReferenceSymbolic(t *testing.T) {
	for _, rc := range loadRefSymCases(t) {
		t.Run(rc.name, func(t *testing.T) {
			diffs, err := compareRefSym(&rc.g, rc.res)
			if err != nil {
				t.Fatal(err)
			}
			for _, d := range diffs {
				t.Error(d)
			}
		})
	}
}

// TestReferenceSymbolicCanFail is the deliberate-slip check: a golden with
// one extra term, or with one coefficient doubled, must be reported as
// different, so the exact comparison demonstrably can fail.
func TestReferenceSymbolicCanFail(t *testing.T) {
	for _, rc := range loadRefSymCases(t) {
		t.Run(rc.name, func(t *testing.T) {
			var sym string
			for s := range rc.g.Symbols {
				if sym == "" || s < sym {
					sym = s
				}
			}
			last := len(rc.g.Symbolic.Den) - 1
			slips := map[string]func(g *refSymGolden){
				"extra term in den s^0": func(g *refSymGolden) { g.Symbolic.Den[0] += " + " + sym },
				"doubled den s^n":       func(g *refSymGolden) { g.Symbolic.Den[last] = "2*(" + g.Symbolic.Den[last] + ")" },
				"sign of num s^n": func(g *refSymGolden) {
					n := len(g.Symbolic.Num) - 1
					g.Symbolic.Num[n] = "-(" + g.Symbolic.Num[n] + ")"
				},
			}
			for what, slip := range slips {
				g := rc.g
				g.Symbolic.Num = append([]string(nil), rc.g.Symbolic.Num...)
				g.Symbolic.Den = append([]string(nil), rc.g.Symbolic.Den...)
				slip(&g)
				diffs, err := compareRefSym(&g, rc.res)
				if err != nil {
					t.Fatalf("%s: %v", what, err)
				}
				if len(diffs) == 0 || !strings.HasPrefix(diffs[0], "H differs") {
					t.Errorf("%s: the exact comparison reports no difference", what)
				}
			}
		})
	}
}

// TestReferenceSymbolicParser checks the golden-string conversion itself on
// a hand-expanded case: (R1 + R2)·(R1 − R2) = R1·R1 − R2·R2 (common practice).
func TestReferenceSymbolicParser(t *testing.T) {
	g := &refSymGolden{Symbols: map[string]string{"R1": "resistor", "R2": "resistor", "U1": "a0 of op-amp U1"},
		Derived: map[string]string{"M": "Link1*sqrt(L1*L2)"}}
	for _, tc := range []struct{ a, b string }{
		{"R1*R1 - R2*R2", "(R1 + R2)*(R1 - R2)"},
		{"R1*U1 + 2*M*M", "U1*R1 + M^2 + M*M"},
	} {
		a, err := parseRefPoly(g, tc.a)
		if err != nil {
			t.Fatal(err)
		}
		b, err := parseRefPoly(g, tc.b)
		if err != nil {
			t.Fatal(err)
		}
		if !a.Equal(b) {
			t.Errorf("%q = %v, %q = %v", tc.a, a, tc.b, b)
		}
	}
	p, err := parseRefPoly(g, "R1*U1 + M*M")
	if err != nil {
		t.Fatal(err)
	}
	if want := symbolic.Var("R1").Mul(symbolic.Var("U1.a0")).Add(symbolic.Var("Link1.M").Mul(symbolic.Var("Link1.M"))); !p.Equal(want) {
		t.Errorf("renaming: got %v, want %v", p, want)
	}
	for _, bad := range []string{"R1/R2", "sqrt(R1)", "0.5*R1", "s*R1"} {
		if _, err := parseRefPoly(g, bad); err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
}
