package netlist

import (
	"math"
	"strings"
	"testing"
)

func TestReplaceValues(t *testing.T) {
	src := []byte("R1: resistor (a, b) 4k7 ±1%  # arm\nC1: capacitor (b, gnd) 10nF\n")
	r1 := strings.Index(string(src), "4k7")
	c1 := strings.Index(string(src), "10nF")
	tests := []struct {
		name  string
		edits []ValueEdit
		want  string
		err   string
	}{
		{"none", nil, string(src), ""},
		{"out of order, comments kept", []ValueEdit{
			{Span{Start: c1, End: c1 + 4}, "12nF"},
			{Span{Start: r1, End: r1 + 3}, "4.7k"},
		}, "R1: resistor (a, b) 4.7k ±1%  # arm\nC1: capacitor (b, gnd) 12nF\n", ""},
		{"overlap", []ValueEdit{{Span{Start: r1, End: r1 + 3}, "x"}, {Span{Start: r1 + 2, End: r1 + 5}, "y"}}, "", "overlap"},
		{"same start", []ValueEdit{{Span{Start: r1, End: r1}, "x"}, {Span{Start: r1, End: r1 + 3}, "y"}}, "", "overlap"},
		{"outside", []ValueEdit{{Span{Start: 5, End: len(src) + 1}, "x"}}, "", "outside"},
		{"reversed", []ValueEdit{{Span{Start: 5, End: 4}, "x"}}, "", "outside"},
	}
	for _, tc := range tests {
		got, err := ReplaceValues(src, tc.edits)
		switch {
		case tc.err != "" && (err == nil || !strings.Contains(err.Error(), tc.err)):
			t.Errorf("%s: error %v, want %q", tc.name, err, tc.err)
		case tc.err == "" && err != nil:
			t.Errorf("%s: %v", tc.name, err)
		case tc.err == "" && string(got) != tc.want:
			t.Errorf("%s: got %q, want %q", tc.name, got, tc.want)
		}
	}
}

func TestFormatLiteral(t *testing.T) {
	tests := []struct {
		v      float64
		unit   string
		digits int
		want   string
	}{
		{4.7e-9, "F", 2, "4.7nF"},
		{1e4, "", 3, "10k"},
		{999.96, "", 3, "1k"},
		{1.5e-6, "H", 2, "1.5uH"},
		{100, "", 3, "100"},
		{2.2e5, "", 2, "220k"},
		{0.47, "", 2, "470m"},
		{9.53e6, "", 3, "9.53M"},
		{1.02e-12, "F", 3, "1.02pF"},
		{4.7e-18, "F", 2, "4.7e-18F"},
	}
	for _, tc := range tests {
		got := FormatLiteral(tc.v, tc.unit, tc.digits)
		if got != tc.want {
			t.Errorf("FormatLiteral(%v, %q, %d) = %q, want %q", tc.v, tc.unit, tc.digits, got, tc.want)
			continue
		}
		back, err := ParseValue(got, tc.unit)
		if err != nil || math.Abs(back-tc.v) > 1e-3*tc.v {
			t.Errorf("%q parses back as %v (%v)", got, back, err)
		}
	}
}

// planSource is a sensor-bridge filter of our own exercising every rule of
// PlanValues.
const planSource = `title "bridge filter"
let Rb = 10k          # bridge arm value
let Rc = 22k          # shared, but also used in an expression
let Cs = 10nF ±5%     # one batch
Vb: voltage source (in, gnd) 1
R1: resistor (in, a) 4.75k ±1%   # literal
R2: resistor (a, b) Rb
R3: resistor (b, c) Rb
R4: resistor (c, d) Rc
C1: capacitor (a, gnd) 2*Cs       # expression
C2: capacitor (d, gnd) Rc*1p
block stage (i, o) R=1k C=1nF
  Ra: resistor (i, o) R
  Ca: capacitor (o, gnd) C*2
end
LP1: stage (d, y) R=3.3k
LP2: stage (y, z)
RL: resistor (z, gnd) 100k
`

func TestPlanValues(t *testing.T) {
	f, err := Parse("bridge.nodal", []byte(planSource))
	if err != nil {
		t.Fatal(err)
	}
	c, err := Elaborate(f, nil)
	if err != nil {
		t.Fatal(err)
	}
	values := map[string]float64{
		"R1": 4.7e3, "R2": 10e3 * 1.0, "R3": 10e3, "R4": 22.1e3, "C1": 22e-9,
		"LP1.Ra": 3.32e3, "LP1.Ca": 2.2e-9, "LP2.Ra": 1.02e3,
	}
	values["R2"], values["R3"] = 10.2e3, 10.2e3
	plan := PlanValues(f, c, values, 3, nil)
	out, err := ReplaceValues(f.Source, plan.Edits)
	if err != nil {
		t.Fatal(err)
	}
	text := string(out)
	for _, want := range []string{
		"let Rb = 10.2k          # bridge arm value", // rule 2: the let, comment kept
		"let Rc = 22k ",                             // used in C2's expression: kept
		"R4: resistor (c, d) 22.1k\n",               // rule 2 fallback to a literal
		"R1: resistor (in, a) 4.7k ±1%   # literal", // rule 1, tolerance and comment kept
		"R2: resistor (a, b) Rb\n",
		"C1: capacitor (a, gnd) 2.2*Cs       # expression", // rule 3: still one draw with Cs
		"LP1: stage (d, y) R=3.32k\n",                      // rule 4
		"LP2: stage (y, z)\n",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("new source lacks %q:\n%s", want, text)
		}
	}
	for part, reason := range map[string]string{
		"LP1.Ca": "set inside block stage",
		"LP2.Ra": "default of parameter R of block stage; give R= on instance LP2",
	} {
		if !strings.Contains(plan.Skipped[part], reason) {
			t.Errorf("%s skipped for %q, want %q", part, plan.Skipped[part], reason)
		}
	}
	if len(plan.Skipped) != 2 {
		t.Errorf("skipped %v", plan.Skipped)
	}
	notes := strings.Join(plan.Notes, "\n")
	for _, want := range []string{"let Rb rewritten to 10.2k for R2, R3", "let Rc kept: let Rc is also used elsewhere", "C1: value 2*Cs replaced by 2.2*Cs (= 22nF), still one draw with Cs"} {
		if !strings.Contains(notes, want) {
			t.Errorf("notes lack %q:\n%s", want, notes)
		}
	}
	// The new file elaborates with the new values.
	d, err := Load("new.nodal", out, nil)
	if err != nil {
		t.Fatalf("new source: %v\n%s", err, out)
	}
	for name, want := range values {
		if _, skipped := plan.Skipped[name]; skipped {
			continue
		}
		p, _ := d.Part(name)
		if math.Abs(p.Value-want) > 1e-12*want {
			t.Errorf("%s = %v, want %v", name, p.Value, want)
		}
	}
}

func TestPlanValuesSharedDiffer(t *testing.T) {
	src := "let R = 10k\nV: voltage source (in, gnd)\nR1: resistor (in, a) R\nR2: resistor (a, gnd) R\nX: resistor (a, gnd) 1k\n"
	f, _ := Parse("x.nodal", []byte(src))
	c, err := Elaborate(f, nil)
	if err != nil {
		t.Fatal(err)
	}
	plan := PlanValues(f, c, map[string]float64{"R1": 10e3, "R2": 12e3}, 2, nil)
	out, err := ReplaceValues(f.Source, plan.Edits)
	if err != nil {
		t.Fatal(err)
	}
	want := "let R = 10k\nV: voltage source (in, gnd)\nR1: resistor (in, a) 10k\nR2: resistor (a, gnd) 12k\nX: resistor (a, gnd) 1k\n"
	if string(out) != want {
		t.Errorf("got\n%s\nwant\n%s", out, want)
	}
	// An overridden let is not rewritten.
	c, _ = Elaborate(f, Overrides{"R": 1e3})
	plan = PlanValues(f, c, map[string]float64{"R1": 1e3, "R2": 1e3}, 2, Overrides{"R": 1e3})
	out, _ = ReplaceValues(f.Source, plan.Edits)
	if !strings.Contains(string(out), "let R = 10k") || !strings.Contains(string(out), "R1: resistor (in, a) 1k") {
		t.Errorf("override: %s", out)
	}
}

// TestPlanValuesInstanceLet: an instance option that is a plain reference
// to a let (`Rfb=Rf`) rewrites the let when every use agrees, keeping its
// tolerance; when only one instance changes, the options get literals.
func TestPlanValuesInstanceLet(t *testing.T) {
	src := `let Rf = 24.9k ±1%   # feedback pair
block gain (i, fb, o) Rfb=10k
  U: opamp (i, fb, o)
  Rfb: resistor (o, fb) Rfb
end
V: voltage source (p, gnd)
Rn: resistor (n, gnd) 1k
A1: gain (p, g1, o1) Rfb=Rf
A2: gain (n, g2, o2) Rfb=Rf
RG: resistor (g1, g2) 1k
`
	f, err := Parse("inamp.nodal", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	c, err := Elaborate(f, nil)
	if err != nil {
		t.Fatal(err)
	}
	plan := PlanValues(f, c, map[string]float64{"A1.Rfb": 24e3, "A2.Rfb": 24e3}, 2, nil)
	out, err := ReplaceValues(f.Source, plan.Edits)
	if err != nil {
		t.Fatal(err)
	}
	if want := strings.Replace(src, "let Rf = 24.9k ±1%", "let Rf = 24k ±1%", 1); string(out) != want {
		t.Errorf("got\n%s\nwant\n%s", out, want)
	}
	if len(plan.Skipped) != 0 || !strings.Contains(strings.Join(plan.Notes, "\n"), "let Rf rewritten to 24k for A1.Rfb, A2.Rfb") {
		t.Errorf("skipped %v, notes %v", plan.Skipped, plan.Notes)
	}
	plan = PlanValues(f, c, map[string]float64{"A1.Rfb": 24e3}, 2, nil)
	out, _ = ReplaceValues(f.Source, plan.Edits)
	if !strings.Contains(string(out), "A1: gain (p, g1, o1) Rfb=24k\n") || !strings.Contains(string(out), "A2: gain (n, g2, o2) Rfb=Rf\n") {
		t.Errorf("one instance:\n%s", out)
	}
	if notes := strings.Join(plan.Notes, "\n"); !strings.Contains(notes, "option Rfb= of A1: value Rf replaced by 24k; it no longer follows the shared tolerance of Rf") {
		t.Errorf("notes %s", notes)
	}
}
