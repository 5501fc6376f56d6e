package main

import (
	"encoding/json"
	"strings"
	"testing"
)

// ladderRC2 is a two-section RC ladder (R1 in→a, C1 a→gnd, R2 a→out,
// C2 out→gnd) with equal parts, so R1·C1 = R1·C2 = R2·C1 = R2·C2 in value.
// H(s) = 1/(1 + s·(R1·C1 + R1·C2 + R2·C2) + s²·R1·R2·C1·C2) (common
// practice: nodal analysis of the two-section ladder).
const ladderRC2 = `Vs: voltage source (in, gnd) 1
R1: resistor (in, a) 10k
C1: capacitor (a, gnd) 10n
R2: resistor (a, out) 10k
C2: capacitor (out, gnd) 10n
`

func TestCheckSymbolic(t *testing.T) {
	for _, tc := range []struct {
		name  string
		file  string
		stdin string
		flag  string
		code  int
		want  []string
	}{
		{"Sallen-Key ODE identical", skFile, "", "--ode=R1*R2*C1*C2*y'' + C2*(R1+R2)*y' + y = u", 0,
			[]string{"numeric comparison: agrees", "symbolic comparison: identical", "in R1, R2, C1, C2", "verdict: agrees"}},
		{"Sallen-Key scaled and divided form identical", skFile, "", "--ode=y'' + (1/(R1*C1) + 1/(R2*C1))*y' + y/(R1*R2*C1*C2) = u/(R1*R2*C1*C2)", 0,
			[]string{"symbolic comparison: identical", "verdict: agrees"}},
		// R1·C1 written where R1·C2 belongs (Sedra & Smith form, from memory,
		// has C2·(R1 + R2)).
		{"Sallen-Key slip", skFile, "", "--tf=1/(1 + s*(R1*C1 + R2*C2) + s^2*R1*R2*C1*C2)", exitVerdict,
			[]string{"numeric comparison: differs", "symbolic comparison: differs — den s^1: missing R1*C2; extra R1*C1", "verdict: differs"}},
		// The numerically-equal-but-symbolically-different derivation: R2·C1
		// written for R2·C2; with equal parts the values agree exactly.
		{"equal values hide the slip", "-", ladderRC2, "--tf=1/(1 + s*(R1*C1 + R1*C2 + R2*C1) + s^2*R1*R2*C1*C2)", exitVerdict,
			[]string{"numeric comparison: agrees", "symbolic comparison: differs — den s^1: missing R2*C2; extra R2*C1", "equal part values hide the slip", "verdict: differs"}},
		{"ladder right", "-", ladderRC2, "--tf=1/(1 + s*(R1*C1 + R1*C2 + R2*C2) + s^2*R1*R2*C1*C2)", 0,
			[]string{"symbolic comparison: identical", "verdict: agrees"}},
		{"missing s^2 term named per power", "-", ladderRC2, "--ode=(R1*C1 + R1*C2 + R2*C2)*y' + y = u", exitVerdict,
			[]string{"den s^2: missing R1*R2*C1*C2"}},
		// A number in place of a part: C1 is compared at its nominal value.
		{"number for a part", rcFile, "", "--ode=R1*15.9155n*y' + y = u", 0,
			[]string{"symbolic comparison: identical", "in R1;", "verdict: agrees"}},
		{"op-amp gain symbol", "../../testdata/reference/circuits/finite_gain_inverting.nodal", "",
			"--tf=-R2*U1.a0/(R1 + R2 + R1*U1.a0 + s*R1*R2*C2*(1 + U1.a0))", 0,
			[]string{"symbolic comparison: identical", "U1.a0", "verdict: agrees"}},
		{"ideal form against a finite gain", "../../testdata/reference/circuits/finite_gain_inverting.nodal", "",
			"--tf=-R2/R1/(1 + s*R2*C2)", exitVerdict,
			[]string{"symbolic comparison: differs — num s^0: missing -100000*R2; extra -R2"}},
		// Fall back to the numeric comparison, said in one line.
		{"parameters", "../../testdata/examples/logger_antialias.nodal", "", "--ode=R*C0*y' + y = u", exitVerdict,
			[]string{"symbolic comparison: not possible, your expression uses the parameters C0, R, not part symbols; the verdict is the numeric one"}},
		{"sqrt", rcFile, "", "--ode=sqrt(R1*R1)*C1*y' + y = u", 0,
			[]string{"symbolic comparison: not possible, your expression is not a polynomial", "sqrt", "verdict: agrees"}},
		{"a source is no symbol", rcFile, "", "--ode=Vs*R1*C1*y' + y = u", 0,
			[]string{"symbolic comparison: not possible, your expression uses Vs, not a part symbol", "verdict: agrees"}},
		{"numbers only", rcFile, "", "--ode=159.155u*y' + y = u", 0,
			[]string{"symbolic comparison: not possible, your expression names no part", "verdict: agrees"}},
	} {
		r := runNodal(t, tc.stdin, "check", tc.file, "--out", "out", tc.flag)
		if r.code != tc.code {
			t.Errorf("%s: code %d, want %d\n%s%s", tc.name, r.code, tc.code, r.stdout, r.stderr)
		}
		for _, w := range tc.want {
			if !strings.Contains(r.stdout, w) {
				t.Errorf("%s: no %q in\n%s", tc.name, w, r.stdout)
			}
		}
	}
}

func TestCheckSymbolicJSON(t *testing.T) {
	r := runNodal(t, ladderRC2, "check", "-", "--out", "out", "--format", "json",
		"--tf=1/(1 + s*(R1*C1 + R1*C2 + R2*C1) + s^2*R1*R2*C1*C2)")
	if r.code != exitVerdict {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Agrees        bool `json:"agrees"`
		NumericAgrees bool `json:"numeric_agrees"`
		Symbolic      struct {
			Done        bool     `json:"done"`
			Identical   bool     `json:"identical"`
			Symbols     []string `json:"symbols"`
			Differences []string `json:"differences"`
			Circuit     struct {
				Den []string `json:"den"`
			} `json:"circuit"`
			Yours struct {
				Den []string `json:"den"`
			} `json:"yours"`
		} `json:"symbolic"`
		Coefficients []json.RawMessage `json:"coefficients"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	s := doc.Symbolic
	if doc.Agrees || !doc.NumericAgrees || !s.Done || s.Identical || strings.Join(s.Symbols, ",") != "R1,R2,C1,C2" ||
		strings.Join(s.Differences, "|") != "den s^1: missing R2*C2; extra R2*C1" || len(doc.Coefficients) == 0 {
		t.Errorf("document %+v", doc)
	}
	if strings.Join(s.Circuit.Den, "|") != "1|R1*C1 + R1*C2 + R2*C2|R1*R2*C1*C2" || strings.Join(s.Yours.Den, "|") != "1|R1*C1 + R1*C2 + R2*C1|R1*R2*C1*C2" {
		t.Errorf("circuit den %q yours den %q", s.Circuit.Den, s.Yours.Den)
	}
}
