package netlist

import (
	"errors"
	"fmt"
	"math"
	"nodal/netlist/syntax"
	"strings"
	"testing"
)

// base is a valid circuit that diagnostic cases extend.
const base = "V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1n\n"

// loadDiags loads src and returns every diagnostic (errors and warnings).
func loadDiags(t *testing.T, src string) ErrorList {
	t.Helper()
	c, err := Load("t.nodal", []byte(src), nil)
	if err != nil {
		var l ErrorList
		if !errors.As(err, &l) {
			t.Fatalf("error %v is not an ErrorList", err)
		}
		return l
	}
	return c.Warnings
}

func TestDiagnostics(t *testing.T) {
	for _, tc := range []struct {
		name      string
		src       string
		line, col int
		msg, hint string
		warning   bool
	}{
		{"missing colon", base + "R2 a b 10k\n", 4, 4, `unexpected "a"`, `expected ":" after the element name`, false},
		{"missing comma", base + "R2: resistor (a b) 10k\n", 4, 17, `unexpected "b"`, `expected "," or ")"`, false},
		{"no terminals", base + "X: nope\n", 4, 8, "unexpected end of statement", "expected the terminals in parentheses", false},
		{"bad char", base + "R2: resistor (in, out) 10k $\n", 4, 28, `unexpected character "$"`, "", false},
		{"dot command", ".op\n" + base, 1, 1, `unexpected character "."`, "a statement starts with", false},
		{"unclosed", base + "R2: resistor (in, out\n", 4, 22, "unexpected end of statement", `expected "," or ")"`, false},
		{"unknown kind", base + "C2: capacitr (out, gnd) 1n\n", 4, 5, `unknown element kind or block "capacitr"`, `did you mean "capacitor"?`, false},
		{"unknown block", "block amp (a, b)\nR1: resistor (a, b) 1k\nend\n" + base + "Stage1: ampp (in, out)\n", 7, 9, `unknown element kind or block "ampp"`, `did you mean "amp"?`, false},
		{"duplicate element", base + "R1: resistor (in, gnd) 1k\n", 4, 1, `duplicate name "R1" (first defined at t.nodal:2:1)`, "", false},
		{"duplicate let", "let a = 1\nlet a = 2\n" + base, 2, 1, `duplicate parameter "a"`, "", false},
		{"duplicate block", "block b (x)\nend\nblock b (x)\nend\n" + base, 3, 1, `duplicate block "b"`, "", false},
		{"terminal count", base + "R2: resistor (in, out, gnd) 1k\n", 4, 1, "resistor R2 takes 2 terminals (a, b), got 3", "", false},
		{"opamp terminals", base + "U1: opamp (in, out)\n", 4, 1, "opamp U1 takes 3 terminals", "", false},
		{"missing value", base + "R2: resistor (in, out)\n", 4, 1, "resistor R2 needs a value in Ω", "", false},
		{"zero value", base + "R2: resistor (in, out) 0\n", 4, 24, "resistor R2: value must be > 0, got 0 Ω", "", false},
		{"value too small", base + "R2: resistor (in, out) 1e-300\n", 4, 24, "too small to represent", "", false},
		{"value too large", base + "C2: capacitor (in, out) 1e200\n", 4, 25, "too large to represent", "", false},
		{"negative value", base + "C2: capacitor (in, out) -1n\n", 4, 25, "value must be > 0", "", false},
		{"infinite value", base + "R2: resistor (in, out) 1/0\n", 4, 24, "value is not finite", "", false},
		{"undefined parameter", "let Rbase = 1k\n" + base + "R2: resistor (in, out) Rbse\n", 5, 24, `undefined parameter "Rbse"`, `did you mean "Rbase"?`, false},
		{"unit mismatch", base + "R2: resistor (in, out) 10nF\n", 4, 24, "unit mismatch: the value of resistor R2 is in Ω, not F", "", false},
		{"unit via let", "let C = 10nF\n" + base + "R2: resistor (in, out) 2*C\n", 5, 24, "is in Ω, not F", "", false},
		{"gain unit", base + "Gain1: voltage source (x, gnd) 2V*v(in, out)\n", 4, 32, "unit mismatch: the gain of voltage source Gain1 is a plain number, not V", "", false},
		{"transconductance unit", base + "Gm1: current source (x, gnd) 2kΩ*v(in)\n", 4, 30, "the gain of current source Gm1 is in S, not Ω", "", false},
		{"transresistance unit", base + "Tz1: voltage source (x, gnd) 2mS*i(R1)\n", 4, 30, "the gain of voltage source Tz1 is in Ω, not S", "", false},
		{"percent as value", base + "R2: resistor (in, out) 5%\n", 4, 24, "% is only allowed in a tolerance", "", false},
		{"add units", base + "R2: resistor (in, out) 1kΩ + 1nF\n", 4, 28, "cannot add Ω and F", "", false},
		{"signed control node", base + "E1: voltage source (x, gnd) 2*v(-1, out)\n", 4, 33, "voltage source E1: v( ) takes node names", ControlForms, false},
		{"coupling not inductor", base + "L1: inductor (in, gnd) 1m\nLink1: coupling (L1, R1) 0.5\n", 5, 22, "coupling Link1: R1 is a resistor, not an inductor", "", false},
		{"coupling K too big", base + "L1: inductor (in, gnd) 1m\nL2: inductor (out, gnd) 1m\nLink1: coupling (L1, L2) 1.2\n", 6, 26, "0 < |K| ≤ 1", "", false},
		{"coupling missing", base + "L1: inductor (in, gnd) 1m\nLink1: coupling (L1, L9) 0.5\n", 5, 22, `coupling Link1: no element "L9"`, "", false},
		{"coupling self", base + "L1: inductor (in, gnd) 1m\nLink1: coupling (L1, L1) 0.5\n", 5, 22, "couples L1 with itself", "", false},
		{"control missing element", base + "Tz1: voltage source (x, gnd) 1k*i(Vx)\n", 4, 35, `voltage source Tz1: no element "Vx"`, "", false},
		{"two controls", base + "Gm1: current source (x, gnd) 1m*v(in) + 2m*v(out)\n", 4, 44, "current source Gm1: a second control term", ControlForms, false},
		{"product of controls", base + "Gm1: current source (x, gnd) 1m*v(in)*v(out)\n", 4, 39, "current source Gm1: a second control term", ControlForms, false},
		{"control in a function", base + "Gain1: voltage source (x, gnd) 2*sqrt(v(in))\n", 4, 39, "voltage source Gain1: a control must be a factor", ControlForms, false},
		{"control plus constant", base + "Gain1: voltage source (x, gnd) 2*v(in) + 1\n", 4, 40, "voltage source Gain1: a control term cannot be added", ControlForms, false},
		{"control divides", base + "Gain1: voltage source (x, gnd) 2/v(in)\n", 4, 34, "voltage source Gain1: a control cannot divide", ControlForms, false},
		{"control power", base + "Gain1: voltage source (x, gnd) 2*v(in)^2\n", 4, 34, "voltage source Gain1: a control must be a factor", ControlForms, false},
		{"control of two parts", base + "Gain1: voltage source (x, gnd) 2*i(R1, R2)\n", 4, 34, "voltage source Gain1: i( ) takes the name of one part", ControlForms, false},
		{"control self", base + "Gain1: voltage source (x, gnd) 2*i(Gain1)\n", 4, 36, "voltage source Gain1: i(Gain1) names the source itself", "", false},
		{"control in a resistor", base + "R2: resistor (in, out) 10*v(in)\n", 4, 27, "a control v( ) is not a value here", "nothing else takes a control", false},
		{"control in a let", "let k = i(R1)\n" + base, 1, 9, "a control i( ) is not a value here", "", false},
		{"misspelt voltage source", base + "V2: voltsource (in, gnd) 1\n", 4, 5, `unknown element kind or block "voltsource"`, `the nearest is "voltage source"`, false},
		{"misspelt current source", base + "I2: currentsrc (in, gnd) 1\n", 4, 5, `unknown element kind or block "currentsrc"`, `the nearest is "current source"`, false},
		{"old vcvs", base + "E2: vcvs (in, gnd) 1 sense=(out, gnd)\n", 4, 5, `unknown element kind or block "vcvs"`, `the nearest is "voltage source"`, false},
		{"old vccs", base + "G2: vccs (in, gnd) 1 sense=(out, gnd)\n", 4, 5, `unknown element kind or block "vccs"`, "the kinds are resistor, capacitor, inductor, voltage source, current source, opamp, coupling", false},
		{"old ccvs", base + "H2: ccvs (in, gnd) 1 sense=R1\n", 4, 5, `unknown element kind or block "ccvs"`, "the nearest is", false},
		{"old cccs", base + "F2: cccs (in, gnd) 1 sense=R1\n", 4, 5, `unknown element kind or block "cccs"`, `the nearest is "current source"`, false},
		{"old sense", base + "G2: current source (in, gnd) 1m sense=(out, gnd)\n", 4, 33, `unknown option "sense" for current source`, "phase=", false},
		{"old tol", base + "R2: resistor (in, out) 1k tol=5%\n", 4, 27, `unknown option "tol" for resistor`, "±5% normal", false},
		{"old tol on let", "let C = 1n tol=5%\n" + base, 1, 12, `unknown option "tol"`, "±5% normal", false},
		{"unknown option", base + "U1: opamp (in, x, x) gwb=1MHz\n", 4, 22, `unknown option "gwb" for opamp`, `did you mean "gbw"?`, false},
		{"opamp value", base + "U1: opamp (in, x, x) 5\n", 4, 22, "an opamp takes no value", "", false},
		{"opamp a0", base + "U1: opamp (in, x, x) a0=0\n", 4, 1, "a0 must be finite and > 0", "", false},
		{"opamp en unit", base + "U1: opamp (in, x, x) en=4pA\n", 4, 25, "unit mismatch: en of opamp U1 is in V, not A", "", false},
		{"opamp in per volt", base + "U1: opamp (in, x, x) in=1nV/rtHz\n", 4, 25, "unit mismatch: in of opamp U1 is in A, not V", "", false},
		{"opamp en negative", base + "U1: opamp (in, x, x) en=-4nV\n", 4, 1, "en must be finite and ≥ 0", "", false},
		{"opamp fen unit", base + "U1: opamp (in, x, x) fen=2V\n", 4, 26, "unit mismatch: fen of opamp U1 is in Hz, not V", "", false},
		{"noiseless capacitor", base + "C2: capacitor (in, out) 1n noiseless\n", 4, 1, "capacitor C2 cannot be noiseless", "only a resistor", false},
		{"noiseless instance", "block a (x)\nR1: resistor (x, gnd) 1k\nend\n" + base + "Stage1: a (in) noiseless\n", 7, 1, "a block instance cannot be noiseless", "", false},
		{"resistor option list", base + "R2: resistor (in, out) 1k zz=1\n", 4, 27, `unknown option "zz" for resistor`, "and the flag fixed or noiseless", false},
		{"bad tolerance", base + "R2: resistor (in, out) 1k ±150%\n", 4, 28, "tolerance must be above 0 and below 100%", "", false},
		{"tolerance unit", base + "R2: resistor (in, out) 1k ±5Hz\n", 4, 28, "unit Hz is not allowed", "", false},
		{"normal without tol", base + "R2: resistor (in, out) 1k normal\n", 4, 27, "normal without a tolerance", "±5% normal", false},
		{"normal twice", base + "R2: resistor (in, out) 1k ±1% normal normal\n", 4, 38, "normal given twice", "", false},
		{"old dist", base + "R2: resistor (in, out) 1k ±1% dist=normal\n", 4, 31, `unknown option "dist" for resistor`, "±5% normal", false},
		{"two tolerances", base + "R2: resistor (in, out) 1k ±1% ±2%\n", 4, 31, "second tolerance", "", false},
		{"block cycle", "block a (x)\nY: b (x)\nend\nblock b (x)\nZ: a (x)\nend\n" + base + "Stage1: a (in)\n", 5, 1, "block cycle: a → b → a", "", false},
		{"self cycle", "block a (x)\nY: a (x)\nend\n" + base + "Stage1: a (in)\n", 2, 1, "block cycle: a → a", "", false},
		{"block ports", "block a (x, y)\nR1: resistor (x, y) 1k\nend\n" + base + "Stage1: a (in)\n", 7, 1, "block a has 2 ports, got 1 terminals", "", false},
		{"block param", "block a (x, y) R=1k\nR1: resistor (x, y) R\nend\n" + base + "Stage1: a (in, out) Q=2\n", 7, 21, `block a has no parameter "Q"`, "block a has parameters: R", false},
		{"instance value", "block a (x, y)\nR1: resistor (x, y) 1k\nend\n" + base + "Stage1: a (in, out) 5\n", 7, 21, "a block instance takes no value", "", false},
		{"nested block", "block a (x)\nblock b (y)\nend\nend\n" + base, 2, 1, `block "b" starts inside block "a"`, "", false},
		{"block without end", base + "block a (x)\nR9: resistor (x, gnd) 1\n", 4, 1, `block "a" has no end`, "", false},
		{"end without block", base + "end\n", 4, 1, "end without a block", "", false},
		{"no ground", "V1: voltage source (a, b) 1\nR1: resistor (a, b) 1k\n", 1, 1, "no element touches the reference node gnd", "", false},
		{"empty", "# nothing\n", 1, 1, "the circuit has no elements", "", false},
		{"single terminal", base + "R2: resistor (out, dangling) 1k\n", 4, 20, `node "dangling" is connected to only one terminal (of R2)`, "", true},
		{"unknown function", base + "R2: resistor (in, out) sqr(4)\n", 4, 24, `unknown function "sqr"`, `did you mean "sqrt"?`, false},
		{"arity", base + "R2: resistor (in, out) min(4)\n", 4, 24, "min takes two or more arguments", "", false},
		{"trig degrees", base + "R2: resistor (in, out) 1k*sin(30deg)\n", 4, 27, "sin takes radians", "", false},
		{"reserved", "let pi = 3\n" + base, 1, 1, `"pi" is reserved`, "", false},
		{"second title", "title \"a\"\ntitle \"b\"\n" + base, 2, 1, "second title", "", false},
		{"require metric", base + "require gian@1kHz below 0dB\n", 4, 9, `unknown metric "gian"`, `did you mean "gain"?`, false},
		{"require list", base + "require zzz above 1\n", 4, 9, `unknown metric "zzz"`, "metrics: gain@F, phase@F, f3db, peak, peaking, fpeak, f0, q, dc", false},
		{"require freq", base + "require gain below 0dB\n", 4, 9, "gain needs a frequency", "", false},
		{"require unit", base + "require f3db within 1kHz..2dB\n", 4, 27, "limit of f3db must be Hz", "", false},
		{"require noise band", base + "require noise_rms@20Hz below 1uV\n", 4, 9, "write the band as F1..F2", "", false},
		{"require noise unit", base + "require noise@1kHz below 3dB\n", 4, 26, "limit of noise must be V", "", false},
		{"require band order", base + "require noise_rms@20kHz..20Hz below 1uV\n", 4, 9, "F1 < F2", "", false},
		{"require range", base + "require q within 1\n", 4, 18, "within needs a range", "", false},
		{"require empty range", base + "require q within 2..1\n", 4, 18, "empty range", "", false},
		{"node name", base + "R2: resistor (in, 1x) 1k\n", 4, 19, "node names are identifiers or non-negative integers", "", false},
		{"dotted name", base + "R.2: resistor (in, out) 1k\n", 4, 1, `element name "R.2" may not contain "."`, "", false},
		{"unit prefix K", base + "R2: resistor (in, out) 10K\n", 4, 24, "kilo is a lower-case k", "", false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			diags := loadDiags(t, tc.src)
			for _, d := range diags {
				if strings.Contains(d.Msg, tc.msg) {
					if d.Pos.Line != tc.line || d.Pos.Col != tc.col || d.Pos.File != "t.nodal" {
						t.Errorf("%q at %s; want line %d col %d", d.Msg, d.Pos, tc.line, tc.col)
					}
					if !strings.Contains(d.Hint, tc.hint) {
						t.Errorf("hint %q; want %q", d.Hint, tc.hint)
					}
					if (d.Severity == SevWarning) != tc.warning {
						t.Errorf("severity %v; want warning=%v", d.Severity, tc.warning)
					}
					if d.Line == "" {
						t.Errorf("diagnostic has no source line")
					}
					return
				}
			}
			t.Errorf("no diagnostic %q in:\n%v", tc.msg, diags)
		})
	}
}

// TestDiagnosticFormat checks the FILE:LINE:COL form with source line and
// caret, and that several errors are reported at once.
func TestDiagnosticFormat(t *testing.T) {
	_, err := Load("f.nodal", []byte(base+"R2: resistr (in, out) 1k\nR3: resistor (in, out)\n"), nil)
	if err == nil {
		t.Fatal("no error")
	}
	want := "f.nodal:4:5: unknown element kind or block \"resistr\" (did you mean \"resistor\"?)\n    R2: resistr (in, out) 1k\n        ^\n" +
		"f.nodal:5:1: resistor R3 needs a value in Ω\n    R3: resistor (in, out)\n    ^"
	if err.Error() != want {
		t.Errorf("got\n%s\nwant\n%s", err, want)
	}
	var many strings.Builder
	many.WriteString(base)
	for i := 0; i < 30; i++ {
		many.WriteString("Rx: resistor (a b)\n")
	}
	_, err = Parse("m.nodal", []byte(many.String()))
	var l ErrorList
	// Parsing stops after MaxReported errors, with a note naming the lines
	// left unchecked (the file has 3 good lines, then 30 bad ones).
	if !errors.As(err, &l) || len(l) != syntax.MaxReported+1 || strings.Count(err.Error(), "syntax error") != syntax.MaxReported ||
		!strings.Contains(err.Error(), "m.nodal:24:1: stopped after 20 errors; lines 24 to 33 were not checked (fix these and run again)") {
		t.Errorf("want 20 syntax errors and the note; got %d: ...%s", len(l), err.Error()[max(0, len(err.Error())-120):])
	}
}

func TestRefuseNonText(t *testing.T) {
	for _, tc := range []struct {
		name string
		src  []byte
		want string
	}{
		{"nul", []byte("R1: resistor (a, gnd) 1k\x00\n"), "not text (it contains a NUL byte)"},
		{"utf8", []byte("R1: resistor (a, gnd) 1k \xff\xfe\n"), "not UTF-8 text"},
		{"oversize", make([]byte, MaxSourceBytes+1), "limited to 67108864 bytes (64 MiB)"},
	} {
		_, err := Parse("bin", tc.src)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v; want %q", tc.name, err, tc.want)
		}
	}
}

// TestTooLarge checks that block expansion is bounded: 2^30 instances are
// refused quickly instead of being built.
func TestTooLarge(t *testing.T) {
	var b strings.Builder
	b.WriteString("block b0 (x)\nR: resistor (x, gnd) 1\nend\n")
	for i := 1; i <= 30; i++ {
		fmt.Fprintf(&b, "block b%d (x)\nP: b%d (x)\nQ: b%d (x)\nend\n", i, i-1, i-1)
	}
	b.WriteString("X: b30 (in)\n")
	_, err := Load("big.nodal", []byte(b.String()), nil)
	if err == nil || !strings.Contains(err.Error(), "circuit too large") {
		t.Errorf("error %v", err)
	}
}

// TestToleranceLimitNamed: ±100 % is refused with the limit said and the
// value as written (not "between 0 and 100 %, got 1").
func TestToleranceLimitNamed(t *testing.T) {
	_, err := Load("t.nodal", []byte("Vs: voltage source (in, gnd) 1\nR1: resistor (in, gnd) 1k ±100%\n"), Overrides{})
	if err == nil || !strings.Contains(err.Error(), "below 100%") || !strings.Contains(err.Error(), "got 100 %") {
		t.Errorf("error %v; want the limit and the value written", err)
	}
}

// TestLeadingPlusIsAccepted: +1k is 1k, as a value and inside expressions.
func TestLeadingPlusIsAccepted(t *testing.T) {
	c, err := Load("t.nodal", []byte("Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) +1k\nC1: capacitor (out, gnd) 1n + +2n\n"), Overrides{})
	if err != nil {
		t.Fatal(err)
	}
	if c.Parts[1].Value != 1e3 || math.Abs(c.Parts[2].Value-3e-9) > 1e-24 {
		t.Errorf("values %v, %v; want 1k and 3n", c.Parts[1].Value, c.Parts[2].Value)
	}
}

// TestTooLargeFlatBlock: a block of 1,001 instances of a 1,000-part
// block is past the budget (more than MaxParts parts) by its pre-count,
// and refused at its instance before any part is built.
func TestTooLargeFlatBlock(t *testing.T) {
	var b strings.Builder
	b.WriteString("block big (x)\n")
	for i := 0; i < 1000; i++ {
		fmt.Fprintf(&b, "R%d: resistor (x, gnd) 1k\n", i)
	}
	b.WriteString("end\nblock huge (x)\n")
	for i := 0; i <= MaxParts/1000; i++ {
		fmt.Fprintf(&b, "X%d: big (x)\n", i)
	}
	b.WriteString("end\nR: resistor (top, gnd) 1k\nH: huge (top)\n")
	c, err := Load("many.nodal", []byte(b.String()), nil)
	if err == nil || !strings.Contains(err.Error(), "many.nodal:2007:1: circuit too large") || !strings.Contains(err.Error(), "memory budget") {
		t.Errorf("error %v", err)
	}
	if c != nil && len(c.Parts) > 1 {
		t.Errorf("%d parts built before the refusal", len(c.Parts))
	}
}
