package main

import (
	"context"
	"encoding/json"
	"math"
	"math/big"
	"math/cmplx"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"nodal/analysis/derivation"
	"nodal/analysis/symbolic"
	"nodal/netlist"
)

// skFile is the unity-gain Sallen-Key low-pass with an ideal op-amp:
// R1 in→a, R2 a→b, C1 a→out (feedback), C2 b→gnd, follower.
const skFile = "../../testdata/examples/tone_lowpass_ideal.nodal"

// symbolicDoc is the JSON document of `nodal transfer --symbolic`.
type symbolicDoc struct {
	What     string    `json:"what"`
	Unit     string    `json:"unit"`
	Symbolic polysJSON `json:"symbolic"`
	Values   struct {
		Num []float64 `json:"num"`
		Den []float64 `json:"den"`
	} `json:"values"`
	Symbols      []string           `json:"symbols"`
	SymbolValues map[string]float64 `json:"symbol_values"`
	H            string             `json:"h"`
	ODE          string             `json:"ode"`
}

func symbolicJSONOf(t *testing.T, args ...string) symbolicDoc {
	t.Helper()
	return symbolicDocOf(t, "transfer", args...)
}

// symbolicDocOf runs a command with --symbolic --format json.
func symbolicDocOf(t *testing.T, cmd string, args ...string) symbolicDoc {
	t.Helper()
	r := runNodal(t, "", append([]string{cmd}, append(args, "--symbolic", "--format", "json")...)...)
	if r.code != 0 {
		t.Fatalf("%v: code %d: %s", args, r.code, r.stderr)
	}
	var doc symbolicDoc
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatalf("%v: %v\n%s", args, err, r.stdout)
	}
	return doc
}

// sumOfProducts matches a coefficient string of the JSON shape:
// products of numbers (exact fractions allowed) and names joined by " + "
// and " - ".
var sumOfProducts = regexp.MustCompile(`^-?[0-9A-Za-z_.]+(/[0-9]+)?(\*[A-Za-z_][0-9A-Za-z_.]*)*( [-+] [0-9A-Za-z_.]+(/[0-9]+)?(\*[A-Za-z_][0-9A-Za-z_.]*)*)*$`)

// polysOf parses coefficient strings back into exact polynomials: every
// string must be a sum of products that nodal's own derivation syntax
// reads (numbers, names, * + -).
func polysOf(t *testing.T, coeffs []string) []symbolic.Poly {
	t.Helper()
	out := make([]symbolic.Poly, len(coeffs))
	for i, c := range coeffs {
		if !sumOfProducts.MatchString(c) {
			t.Errorf("coefficient %q uses more than numbers, names, * + - and exact fractions", c)
		}
		tf, err := derivation.ParseTF("coef", c)
		if err != nil {
			t.Fatalf("coefficient %q: %v", c, err)
		}
		r, err := tf.Reduce()
		if err != nil {
			t.Fatalf("coefficient %q: %v", c, err)
		}
		if len(r.Den) != 1 || len(r.Num) != 1 {
			t.Fatalf("coefficient %q contains s", c)
		}
		num, den, ok, why := symbolic.FromDerivation(&derivation.Rational{Num: r.Num, Den: []derivation.Expr{&derivation.Number{Value: 1, Text: "1"}}})
		if !ok || len(num) != 1 || len(den) != 1 {
			t.Fatalf("coefficient %q: %s", c, why)
		}
		out[i] = num[0]
	}
	return out
}

func v(name string) symbolic.Poly { return symbolic.Var(name) }

func mono(names ...string) symbolic.Poly {
	p := symbolic.Int(1)
	for _, n := range names {
		p = p.Mul(v(n))
	}
	return p
}

// samePolys compares coefficient lists as one polynomial in s.
func samePolys(a, b []symbolic.Poly) bool {
	return symbolic.FromPowers("s", a).Equal(symbolic.FromPowers("s", b))
}

// First-order RC low-pass: H(s) = 1/(1 + s·R1·C1) (common practice); the
// JSON strings are exactly the shape.
func TestSymbolicRCJSON(t *testing.T) {
	doc := symbolicJSONOf(t, rcFile, "--out", "out")
	if strings.Join(doc.Symbolic.Num, "|") != "1" || strings.Join(doc.Symbolic.Den, "|") != "1|R1*C1" {
		t.Errorf("symbolic num %q den %q, want [1] and [1 R1*C1]", doc.Symbolic.Num, doc.Symbolic.Den)
	}
	rc := 10e3 * 15.9155e-9
	if len(doc.Values.Den) != 2 || doc.Values.Den[0] != 1 || math.Abs(doc.Values.Den[1]-rc) > 1e-15*rc {
		t.Errorf("values den %v, want [1 %g]", doc.Values.Den, rc)
	}
	if strings.Join(doc.Symbols, ",") != "R1,C1" || doc.SymbolValues["R1"] != 10e3 || doc.SymbolValues["C1"] != 15.9155e-9 {
		t.Errorf("symbols %v values %v", doc.Symbols, doc.SymbolValues)
	}
	if doc.H != "1/(1 + s*R1*C1)" || doc.ODE != "R1*C1*y' + y = u" || doc.Unit != "V/V" {
		t.Errorf("h %q ode %q unit %q", doc.H, doc.ODE, doc.Unit)
	}
	// The raw document has the top-level "symbolic" object.
	r := runNodal(t, "", "transfer", rcFile, "--out", "out", "--symbolic", "--format", "json")
	var raw map[string]json.RawMessage
	if err := json.Unmarshal([]byte(r.stdout), &raw); err != nil {
		t.Fatal(err)
	}
	var shape struct {
		Num []string `json:"num"`
		Den []string `json:"den"`
	}
	if err := json.Unmarshal(raw["symbolic"], &shape); err != nil || len(shape.Den) != 2 {
		t.Errorf(`"symbolic" = %s (%v)`, raw["symbolic"], err)
	}
}

// Unity-gain Sallen-Key low-pass: D(s) = 1 + s·C2·(R1 + R2) +
// s²·R1·R2·C1·C2, N = 1 (Sedra & Smith, from memory), compared as
// polynomials.
func TestSymbolicSallenKeyUnityGain(t *testing.T) {
	doc := symbolicJSONOf(t, skFile, "--out", "out")
	num, den := polysOf(t, doc.Symbolic.Num), polysOf(t, doc.Symbolic.Den)
	wantDen := []symbolic.Poly{symbolic.Int(1), v("C2").Mul(v("R1").Add(v("R2"))), mono("R1", "R2", "C1", "C2")}
	if !samePolys(num, []symbolic.Poly{symbolic.Int(1)}) || !samePolys(den, wantDen) {
		t.Errorf("got %q / %q, want 1 / %v", doc.Symbolic.Num, doc.Symbolic.Den, wantDen)
	}
	// Values beside the coefficients: C2·(R1+R2) = 4.7n·32k, R1R2C1C2.
	if w := 4.7e-9 * 32e3; math.Abs(doc.Values.Den[1]-w) > 1e-12*w {
		t.Errorf("den s^1 value %g, want %g", doc.Values.Den[1], w)
	}
	if w := 10e3 * 22e3 * 10e-9 * 4.7e-9; math.Abs(doc.Values.Den[2]-w) > 1e-12*w {
		t.Errorf("den s^2 value %g, want %g", doc.Values.Den[2], w)
	}
}

// --keep R1,C2 substitutes R2 = 22k and C1 = 10n exactly: D = 1 +
// s·(22000·C2 + R1·C2) + s²·0.00022·R1·C2.
func TestSymbolicKeep(t *testing.T) {
	doc := symbolicJSONOf(t, skFile, "--out", "out", "--keep", "R1,C2")
	den := polysOf(t, doc.Symbolic.Den)
	c := func(num, den int64) symbolic.Poly { return symbolic.Const(big.NewRat(num, den)) }
	want := []symbolic.Poly{symbolic.Int(1), c(22000, 1).Mul(v("C2")).Add(mono("R1", "C2")), c(22, 100000).Mul(mono("R1", "C2"))}
	if !samePolys(den, want) {
		t.Errorf("den %q, want %v", doc.Symbolic.Den, want)
	}
	if strings.Join(doc.Symbols, ",") != "R1,C2" {
		t.Errorf("symbols %v, want R1,C2", doc.Symbols)
	}
	// --keep "" keeps nothing: the coefficients are plain numbers.
	doc = symbolicJSONOf(t, rcFile, "--out", "out", "--keep", "")
	if len(doc.Symbols) != 0 || doc.Symbolic.Den[1] != "0.000159155" {
		t.Errorf("keep none: symbols %v den %q", doc.Symbols, doc.Symbolic.Den)
	}
}

func TestSymbolicUsageErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"keep without symbolic", []string{"transfer", rcFile, "--out", "out", "--keep", "R1"}, "--symbolic"},
		{"keep unknown name", []string{"transfer", rcFile, "--out", "out", "--symbolic", "--keep", "R9"}, "R9"},
		{"plot with symbolic", []string{"transfer", rcFile, "--out", "out", "--symbolic", "--plot", "pz.svg"}, "--plot"},
		{"two probes", []string{"impedance", rcFile, "--port", "Vs", "--node", "out", "--symbolic"}, "one of --port or --node"},
		{"no probe", []string{"impedance", rcFile, "--symbolic"}, "--port SOURCE or --node NODE"},
		{"port with ref", []string{"impedance", rcFile, "--port", "Vs", "--ref", "in", "--symbolic"}, "--ref goes with --node"},
		{"impedance flag on transfer", []string{"transfer", rcFile, "--zout", "out", "--symbolic"}, "unknown flag --zout"},
	} {
		r := runNodal(t, "", tc.args...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%s: code %d stderr %q; want exit 2 mentioning %q", tc.name, r.code, r.stderr, tc.want)
		}
	}
}

// An RC ladder of 12 sections has a D(s) of F(25) = 75025 terms, far past
// the default limit: the command stops with exit 2 and suggests --keep.
func TestSymbolicSizeLimitSuggestsKeep(t *testing.T) {
	var b strings.Builder
	b.WriteString("Vs: voltage source (n0, gnd) 1\n")
	for i := 1; i <= 12; i++ {
		prev, node := "n"+strconv.Itoa(i-1), "n"+strconv.Itoa(i)
		b.WriteString("R" + strconv.Itoa(i) + ": resistor (" + prev + ", " + node + ") 1k\n")
		b.WriteString("C" + strconv.Itoa(i) + ": capacitor (" + node + ", gnd) 1n\n")
	}
	r := runNodal(t, b.String(), "transfer", "-", "--out", "n12", "--symbolic")
	if r.code != exitInput || !strings.Contains(r.stderr, "--keep R1,C1,R2") || !strings.Contains(r.stderr, "too large") {
		t.Errorf("code %d stderr %q; want exit 2 with a --keep suggestion", r.code, r.stderr)
	}
	// With two parts kept the same circuit is immediate.
	r = runNodal(t, b.String(), "transfer", "-", "--out", "n12", "--symbolic", "--keep", "R1,C12")
	if r.code != 0 || !strings.Contains(r.stdout, "symbols: R1 = 1e3, C12 = 1e-9") {
		t.Errorf("with --keep: code %d\n%s%s", r.code, r.stdout, r.stderr)
	}
}

// Impedances of the RC low-pass: at node out R1/(1 + s·R1·C1) with the
// source shorted, at the port of Vs (1 + s·R1·C1)/(s·C1) (common practice).
func TestSymbolicImpedances(t *testing.T) {
	doc := symbolicDocOf(t, "impedance", rcFile, "--node", "out")
	if doc.H != "R1/(1 + s*R1*C1)" || doc.Unit != "Ω" {
		t.Errorf("node out: h %q unit %q", doc.H, doc.Unit)
	}
	doc = symbolicDocOf(t, "impedance", rcFile, "--port", "Vs")
	if doc.H != "(1 + s*R1*C1)/(s*C1)" || doc.ODE != "C1*v' = R1*C1*i' + i" {
		t.Errorf("port Vs: h %q ode %q", doc.H, doc.ODE)
	}
	// Between out and in with the source shorted: the same R1 ∥ C1.
	doc = symbolicDocOf(t, "impedance", rcFile, "--node", "out", "--ref", "in")
	if doc.H != "R1/(1 + s*R1*C1)" {
		t.Errorf("node out ref in: h %q", doc.H)
	}
}

// The table groups by power of s with the value beside each coefficient,
// and H(s) and the ODE it prints read back into `nodal check` as
// identical (the printed forms are in the check syntax).
func TestSymbolicTableRoundTrip(t *testing.T) {
	for _, f := range []string{skFile, "../../testdata/reference/circuits/mfb_bandpass.nodal", "../../testdata/reference/circuits/finite_gain_inverting.nodal"} {
		r := runNodal(t, "", "transfer", f, "--out", "out", "--symbolic")
		if r.code != 0 {
			t.Fatalf("%s: code %d %s", f, r.code, r.stderr)
		}
		if !strings.Contains(r.stdout, "D(s) by power of s:\n  s^0") {
			t.Errorf("%s: no grouped D(s) in\n%s", f, r.stdout)
		}
		doc := symbolicJSONOf(t, f, "--out", "out")
		for _, flag := range []string{"--tf=" + doc.H, "--ode=" + doc.ODE} {
			c := runNodal(t, "", "check", f, "--out", "out", flag)
			if c.code != 0 || !strings.Contains(c.stdout, "symbolic comparison: identical") {
				t.Errorf("%s %s: code %d\n%s%s", f, flag, c.code, c.stdout, c.stderr)
			}
		}
	}
	r := runNodal(t, "", "transfer", skFile, "--out", "out", "--symbolic")
	for _, want := range []string{"  s^1       150.4e-6   R1*C2 + R2*C2\n", "  s^2       10.34e-9   R1*R2*C1*C2\n",
		"H(s) = 1/(1 + s*(R1*C2 + R2*C2) + s^2*R1*R2*C1*C2)", "R1*R2*C1*C2*y'' + (R1*C2 + R2*C2)*y' + y = u"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("no %q in\n%s", want, r.stdout)
		}
	}
}

// probeFiles lists every circuit of the project's testdata with its input
// and output: the reference circuits from their "# input: X output: Y"
// header, the examples (one source each) at node out.
func probeFiles(t *testing.T) [][3]string {
	t.Helper()
	var out [][3]string
	hdr := regexp.MustCompile(`(?m)^# input:\s*(\S+)\s+output:\s*(\S+)`)
	refs, _ := filepath.Glob("../../testdata/reference/circuits/*.nodal")
	for _, f := range refs {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		m := hdr.FindSubmatch(src)
		if m == nil {
			t.Fatalf("%s: no input/output header", f)
		}
		out = append(out, [3]string{f, string(m[1]), string(m[2])})
	}
	ex, _ := filepath.Glob("../../testdata/examples/*.nodal")
	for _, f := range ex {
		out = append(out, [3]string{f, "", "out"})
	}
	if len(refs) < 10 || len(ex) < 4 {
		t.Fatalf("found %d reference circuits and %d examples", len(refs), len(ex))
	}
	return out
}

// For every circuit in testdata, the symbolic result with the part values
// substituted equals the numeric transfer function at several complex
// points to 1e-10 relative: the voltage ratio, the output impedance and
// the input impedance. The numeric side is the direct complex solve of
// the MNA system (mna.System.H) and analysis.Extract's H(s); when Extract
// has cancelled a pole-zero pair (within its 1e-6 relative rule) it is an
// approximation and is held to 1e-5 only. The points are spread around
// the circuit's own pole magnitudes.
func TestSymbolicMatchesNumericEverywhere(t *testing.T) {
	e := &env{ctx: context.Background()}
	for _, pf := range probeFiles(t) {
		src, err := os.ReadFile(pf[0])
		if err != nil {
			t.Fatal(err)
		}
		l, err := elaborate(&env{stderr: discard{}}, pf[0], src, nil)
		if err != nil {
			t.Fatalf("%s: %v", pf[0], err)
		}
		in := pf[1]
		if in == "" {
			in = sourceNames(l.circuit)[0]
		}
		for _, q := range []tfRequest{{In: pf[1], Out: pf[2]}, {Node: pf[2]}, {Port: in}} {
			name := filepath.Base(pf[0]) + " " + describeRequest(q)
			num, nerr := extractTF(l, q)
			st, serr := deriveSymbolic(e, l, q, nil)
			if nerr != nil || serr != nil {
				// Both must refuse alike (an op-amp input draws no current).
				if nerr == nil || serr == nil || nerr.Error() != serr.Error() {
					t.Errorf("%s: numeric error %v, symbolic error %v", name, nerr, serr)
				}
				continue
			}
			_, _, h, err := st.res.EvalNumeric(st.res.Values)
			if err != nil {
				t.Errorf("%s: %v", name, err)
				continue
			}
			w0 := 1e3
			if n := len(num.tf.Poles); n > 0 {
				lg := 0.0
				for _, p := range num.tf.Poles {
					lg += math.Log(math.Max(cmplx.Abs(p), 1))
				}
				w0 = math.Exp(lg / float64(n))
			}
			extractTol := 1e-10
			if len(num.tf.Cancelled) > 0 {
				extractTol = 1e-5
			}
			for _, k := range []complex128{0.05i, complex(-0.3, 0.7), complex(0.2, -1.3), 3i, complex(5, 8)} {
				s := k * complex(w0, 0)
				got := h(s)
				direct, err := num.sys.H(s)
				if err != nil {
					t.Fatalf("%s: direct solve: %v", name, err)
				}
				for _, ref := range []struct {
					what string
					want complex128
					tol  float64
				}{{"direct solve", direct, 1e-10}, {"Extract", num.tf.EvalFactored(s), extractTol}} {
					if got == 0 {
						// H ≡ 0 exactly (the output of an op-amp without
						// rout: Zout = 0); the float solve leaves round-off
						// far below any part value (1e-9 Ω or V/V).
						if cmplx.Abs(ref.want) > 1e-9 {
							t.Errorf("%s at s=%.4g: symbolic 0, %s %v", name, s, ref.what, ref.want)
						}
						continue
					}
					if rel := cmplx.Abs(got-ref.want) / cmplx.Abs(ref.want); !(rel <= ref.tol) {
						t.Errorf("%s at s=%.4g: symbolic %v, %s %v (rel %.2g > %g)", name, s, got, ref.what, ref.want, rel, ref.tol)
					}
				}
			}
		}
	}
}

func describeRequest(q tfRequest) string {
	switch {
	case q.Node != "":
		return "impedance --node " + q.Node
	case q.Port != "":
		return "impedance --port " + q.Port
	}
	return "--out " + q.Out
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }

// sourceNames lists the independent sources of c.
func sourceNames(c *netlist.Circuit) []string {
	var out []string
	for _, p := range c.Parts {
		if p.Kind == netlist.VoltageSource || p.Kind == netlist.CurrentSource {
			out = append(out, p.Name)
		}
	}
	return out
}

// What nodal transfer --symbolic prints as H(s) and as the ODE pastes into
// nodal check --tf and --ode, which agree with the circuit (exit 0), for
// circuits with an op-amp, with every controlled-source form and with a
// current-source input; a perturbed copy is refused (exit 1).
func TestSymbolicPastesIntoCheck(t *testing.T) {
	for _, tc := range []struct{ file, out string }{
		{"../../testdata/examples/tone_lowpass_ideal.nodal", "out"},
		{"../../testdata/reference/circuits/photodiode_hybrid_pi.nodal", "out"},
		{"../../testdata/reference/circuits/sensor_bridge_rc.nodal", "out"},
		{"../../testdata/reference/circuits/buffered_rc2.nodal", "out"},
	} {
		doc := symbolicJSONOf(t, tc.file, "--out", tc.out)
		for _, flag := range []string{"--tf", "--ode"} {
			text := doc.H
			if flag == "--ode" {
				text = doc.ODE
			}
			r := runNodal(t, "", "check", tc.file, "--out", tc.out, flag, text)
			if r.code != 0 {
				t.Errorf("%s: check %s %q: code %d\n%s%s", filepath.Base(tc.file), flag, text, r.code, r.stdout, r.stderr)
			}
			bad := "2*(" + text + ")" // twice the gain
			if lhs, rhs, ok := strings.Cut(text, " = "); ok {
				bad = lhs + " = 2*(" + rhs + ")"
			}
			if r := runNodal(t, "", "check", tc.file, "--out", tc.out, flag, bad); r.code != exitVerdict {
				t.Errorf("%s: check %s %q (perturbed): code %d, want %d", filepath.Base(tc.file), flag, bad, r.code, exitVerdict)
			}
		}
	}
}
