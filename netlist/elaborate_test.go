package netlist

import (
	"math"
	"reflect"
	"strings"
	"sync"
	"testing"
)

const allForms = `# every statement form
title "Logger input filter"
let fc = 2kHz
let C  = 10nF ±5%
let R  = 1/(2*pi*fc*C)
let k  = 3 ±2% normal
Vin: voltage source (in, gnd) 1 phase=30deg
I1:  current source (0, n1) 2mA
R1:  resistor (in, a) R ±1% fixed
R2:  resistor (a, b) R ±1% normal
C1:  capacitor (a, out) 2*C
C2:  capacitor (b, gnd) C
U1:  opamp (b, out, out) a0=200k gbw=1MHz rout=50
U2:  opamp (b, n1, n1)
Gain1: voltage source (e, gnd) (-2^2)*v(a, b)
Gm1: current source (n1, 0) 1mS*v(in, 0)
Tz1: voltage source (e, n1) 1kΩ*i(R1)
Mirror1: current source (e, gnd) k*i(Vin)
L1:  inductor (e, gnd) 1mH
L2:  inductor (n1, gnd) 4m7 +-10%
Link1: coupling (L1, L2) -0.98
R3:  resistor (e, n1) 2R2
R4:  resistor (e, n1) max(1k, sqrt(4e6)) + abs(-1) - 1
require gain@1kHz within -0.5dB..0.5dB
require gain@20kHz below -40dB
require f3db within 1.9kHz..2.1kHz
require q above 0.6
`

func TestStatementForms(t *testing.T) {
	c, err := Load("forms.nodal", []byte(allForms), nil)
	if err != nil {
		t.Fatal(err)
	}
	if c.Title != "Logger input filter" || c.File != "forms.nodal" {
		t.Errorf("title %q file %q", c.Title, c.File)
	}
	R := 1 / (2 * math.Pi * 2000 * 10e-9) // the file's own formula
	part := func(name string) Part {
		p, ok := c.Part(name)
		if !ok {
			t.Fatalf("no part %s", name)
		}
		return *p
	}
	for _, tc := range []struct {
		name  string
		kind  Kind
		nodes []string
		value float64
	}{
		{"Vin", VoltageSource, []string{"in", "gnd"}, 1}, {"I1", CurrentSource, []string{"gnd", "n1"}, 2e-3},
		{"R1", Resistor, []string{"in", "a"}, R}, {"R2", Resistor, []string{"a", "b"}, R},
		{"C1", Capacitor, []string{"a", "out"}, 20e-9}, {"C2", Capacitor, []string{"b", "gnd"}, 10e-9},
		{"U1", OpAmp, []string{"b", "out", "out"}, 0}, {"Gain1", VCVS, []string{"e", "gnd"}, -4},
		{"Gm1", VCCS, []string{"n1", "gnd"}, 1e-3}, {"Tz1", CCVS, []string{"e", "n1"}, 1000},
		{"Mirror1", CCCS, []string{"e", "gnd"}, 3}, {"L1", Inductor, []string{"e", "gnd"}, 1e-3},
		{"L2", Inductor, []string{"n1", "gnd"}, 4.7e-3}, {"Link1", Coupling, nil, -0.98},
		{"R3", Resistor, []string{"e", "n1"}, 2.2}, {"R4", Resistor, []string{"e", "n1"}, 2000},
	} {
		p := part(tc.name)
		if p.Kind != tc.kind || !reflect.DeepEqual(p.Nodes, tc.nodes) || !near(p.Value, tc.value) {
			t.Errorf("%s = %v %v %v; want %v %v %v", tc.name, p.Kind, p.Nodes, p.Value, tc.kind, tc.nodes, tc.value)
		}
	}
	if p := part("Vin"); !near(p.PhaseRad, math.Pi/6) || p.ValueSpan.End-p.ValueSpan.Start != 1 {
		t.Errorf("Vin phase %v span %+v", p.PhaseRad, p.ValueSpan)
	}
	if p := part("U1"); p.A0 != 2e5 || p.GBWHz != 1e6 || p.Rout != 50 {
		t.Errorf("U1 model %v %v %v", p.A0, p.GBWHz, p.Rout)
	}
	if p := part("U2"); p.A0 != 0 || p.GBWHz != 0 || p.Rout != 0 {
		t.Errorf("U2 not ideal: %+v", p)
	}
	if p := part("Gain1"); p.Sense != [2]string{"a", "b"} {
		t.Errorf("Gain1 sense %v", p.Sense)
	}
	if part("Tz1").Control != "R1" || part("Mirror1").Control != "Vin" || part("Link1").Coupled != [2]string{"L1", "L2"} {
		t.Errorf("controls %q %q %v", part("Tz1").Control, part("Mirror1").Control, part("Link1").Coupled)
	}
	if p := part("R1"); !p.Fixed || p.Tol != (Tolerance{0.01, Uniform}) || string(c.sourceOf(p.ValueSpan)) != "R" {
		t.Errorf("R1 %+v", p)
	}
	if p := part("R2"); p.Fixed || p.Tol != (Tolerance{0.01, Normal}) {
		t.Errorf("R2 %+v", p)
	}
	if p := part("C1"); string(c.sourceOf(p.ValueSpan)) != "2*C" || strings.Count(string(c.sourceOf(Span{End: p.ValueSpan.Start})), "\n") != 10 || p.Pos.Line != 11 || p.Pos.Col != 1 {
		t.Errorf("C1 span %+v pos %v", p.ValueSpan, p.Pos)
	}
	if p := part("L2"); p.Tol.Rel != 0.1 {
		t.Errorf("L2 tol %v", p.Tol)
	}
	wantNodes := []string{"gnd", "in", "n1", "a", "b", "out", "e"}
	if !reflect.DeepEqual(c.Nodes, wantNodes) {
		t.Errorf("nodes %v; want %v", c.Nodes, wantNodes)
	}
	if len(c.Params) != 4 || c.Params[1].Name != "C" || c.Params[1].Unit != "F" || c.Params[1].Tol.Rel != 0.05 ||
		string(c.sourceOf(c.Params[2].Span)) != "1/(2*pi*fc*C)" || !near(c.Params[2].Value, R) {
		t.Errorf("params %+v", c.Params)
	}
	var vnames []string
	for _, v := range c.Variations {
		vnames = append(vnames, v.Name)
	}
	if !reflect.DeepEqual(vnames, []string{"C", "k", "R1", "R2", "L2"}) || !c.Variations[0].IsParam || c.Variations[2].IsParam {
		t.Errorf("variations %+v", c.Variations)
	}
	wantReq := []Requirement{
		{Metric: "gain@1kHz", Op: Within, Lo: -0.5, Hi: 0.5, Text: "require gain@1kHz within -0.5dB..0.5dB"},
		{Metric: "gain@20kHz", Op: Below, Hi: -40, Text: "require gain@20kHz below -40dB"},
		{Metric: "f3db", Op: Within, Lo: 1900, Hi: 2100, Text: "require f3db within 1.9kHz..2.1kHz"},
		{Metric: "q", Op: Above, Lo: 0.6, Text: "require q above 0.6"},
	}
	for i := range c.Requirements {
		c.Requirements[i].Pos = Pos{}
	}
	if !reflect.DeepEqual(c.Requirements, wantReq) {
		t.Errorf("requirements\n%+v\nwant\n%+v", c.Requirements, wantReq)
	}
}

// sourceOf returns the source text of a span (test helper).
func (c *Circuit) sourceOf(s Span) []byte { return testSource[c.File][s.Start:s.End] }

var testSource = map[string][]byte{"forms.nodal": []byte(allForms), "blocks.nodal": []byte(blockSrc)}

const blockSrc = `let Cs = 10n ±5%
block lowpass2 (inp, outp) R=10k C=Cs
  let R2 = 2*R
  R1: resistor (inp, a) R ±1%
  R2: resistor (a, b) R2
  C1: capacitor (a, outp) 2*C
  C2: capacitor (b, gnd) C
  U1: opamp (b, outp, outp)
end
block twice (i, o) Rt=1k
  A: lowpass2 (i, m) R=Rt
  B: lowpass2 (m, o) R=2*Rt C=1n
end
V1: voltage source (in, 0) 1
LP1: lowpass2 (in, out) R=4.7k
Pair1: twice (out, out2) Rt=2k fixed
`

func TestBlocks(t *testing.T) {
	c, err := Load("blocks.nodal", []byte(blockSrc), nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		nodes []string
		value float64
		fixed bool
	}{
		{"LP1.R1", []string{"in", "LP1.a"}, 4700, false},
		{"LP1.R2", []string{"LP1.a", "LP1.b"}, 9400, false},
		{"LP1.C1", []string{"LP1.a", "out"}, 20e-9, false},
		{"LP1.C2", []string{"LP1.b", "gnd"}, 10e-9, false},
		{"Pair1.A.R1", []string{"out", "Pair1.A.a"}, 2000, true},
		{"Pair1.B.R1", []string{"Pair1.m", "Pair1.B.a"}, 4000, true},
		{"Pair1.B.C2", []string{"Pair1.B.b", "gnd"}, 1e-9, true},
		{"Pair1.B.U1", []string{"Pair1.B.b", "out2", "out2"}, 0, true},
	} {
		p, ok := c.Part(tc.name)
		if !ok {
			t.Errorf("no part %s", tc.name)
			continue
		}
		if !reflect.DeepEqual(p.Nodes, tc.nodes) || !near(p.Value, tc.value) || p.Fixed != tc.fixed {
			t.Errorf("%s = %v %v fixed=%v; want %v %v %v", tc.name, p.Nodes, p.Value, p.Fixed, tc.nodes, tc.value, tc.fixed)
		}
	}
	var vnames []string
	for _, v := range c.Variations {
		vnames = append(vnames, v.Name)
	}
	if want := []string{"Cs", "LP1.R1", "Pair1.A.R1", "Pair1.B.R1"}; !reflect.DeepEqual(vnames, want) {
		t.Errorf("variations %v; want %v", vnames, want)
	}
}

func ones(n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = 1
	}
	return f
}

// TestVarySharedDraw checks "one shared draw for every use": varying the
// toleranced let C moves every part value built from it, while the design
// equation let R = 1/(2π·fc·C) keeps its nominal value (the resistor bought
// does not follow the capacitor reel) and part tolerances scale only their
// part.
func TestVarySharedDraw(t *testing.T) {
	c, err := Load("forms.nodal", []byte(allForms), nil)
	if err != nil {
		t.Fatal(err)
	}
	f := ones(len(c.Variations))
	f[0] = 1.05 // C
	f[2] = 0.99 // R1
	d, err := c.Vary(f)
	if err != nil {
		t.Fatal(err)
	}
	C := 10e-9 * 1.05
	R := 1 / (2 * math.Pi * 2000 * 10e-9) // nominal: a design equation
	for _, tc := range []struct {
		name string
		want float64
	}{{"C1", 2 * C}, {"C2", C}, {"R1", R * 0.99}, {"R2", R}, {"Gain1", -4}, {"L1", 1e-3}} {
		p, _ := d.Part(tc.name)
		if !near(p.Value, tc.want) {
			t.Errorf("%s = %v; want %v", tc.name, p.Value, tc.want)
		}
	}
	if !near(d.Params[1].Value, C) || !near(d.Params[2].Value, R) {
		t.Errorf("params not updated: %+v", d.Params)
	}
	// The original is untouched.
	if p, _ := c.Part("C2"); p.Value != 10e-9 {
		t.Errorf("Vary changed the nominal circuit: C2 = %v", p.Value)
	}
	// The derived gain Mirror1 = k follows k's draw.
	f = ones(len(c.Variations))
	f[1] = 1.02
	d, _ = c.Vary(f)
	if p, _ := d.Part("Mirror1"); !near(p.Value, 3*1.02) {
		t.Errorf("Mirror1 = %v; want %v", p.Value, 3*1.02)
	}
	if _, err := c.Vary(f[:2]); err == nil {
		t.Error("Vary accepted too few factors")
	}
	f = ones(len(c.Variations))
	f[4] = -1 // L2 negative
	if _, err := c.Vary(f); err == nil {
		t.Error("Vary accepted a negative inductance")
	}
}

func TestVaryBlocks(t *testing.T) {
	c, err := Load("blocks.nodal", []byte(blockSrc), nil)
	if err != nil {
		t.Fatal(err)
	}
	f := []float64{1.1, 0.9, 1.01, 1} // Cs, LP1.R1, Pair1.A.R1, Pair1.B.R1
	d, err := c.Vary(f)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		want float64
	}{
		{"LP1.C2", 11e-9}, {"LP1.C1", 22e-9}, {"LP1.R1", 4700 * 0.9}, {"LP1.R2", 9400},
		{"Pair1.A.C2", 11e-9}, {"Pair1.A.R1", 2020}, {"Pair1.B.C2", 1e-9}, {"Pair1.B.R1", 4000},
	} {
		p, _ := d.Part(tc.name)
		if !near(p.Value, tc.want) {
			t.Errorf("%s = %v; want %v", tc.name, p.Value, tc.want)
		}
	}
}

func TestVaryConcurrent(t *testing.T) {
	c, err := Load("forms.nodal", []byte(allForms), nil)
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			for i := 0; i < 200; i++ {
				f := ones(len(c.Variations))
				f[0] = 1 + float64(g)/100
				d, err := c.Vary(f)
				if err != nil {
					t.Error(err)
					return
				}
				if p, _ := d.Part("C2"); !near(p.Value, 10e-9*f[0]) {
					t.Errorf("C2 = %v; want %v", p.Value, 10e-9*f[0])
					return
				}
			}
		}(g)
	}
	wg.Wait()
}

// TestVaryIntoMatchesVary checks that one copy filled again and again by
// VaryInto holds exactly what Vary returns for every set of factors, in
// any order (a value a draw rewrites is rewritten by every later draw),
// through blocks and shared lets, and that a failed draw leaves the next
// one correct; a target that is not a copy of the circuit is refused.
func TestVaryIntoMatchesVary(t *testing.T) {
	for _, src := range []string{allForms, blockSrc} {
		c, err := Load("vary.nodal", []byte(src), nil)
		if err != nil {
			t.Fatal(err)
		}
		dst := c.Clone()
		for k := 0; k < 40; k++ {
			f := ones(len(c.Variations))
			for i := range f {
				f[i] = 1 + 0.01*float64((k*7+i*3)%11-5)
			}
			if k == 5 && len(f) > 4 && src == allForms {
				f[4] = -1 // L2 negative: an error, then the next draw
				if err := c.VaryInto(dst, f); err == nil {
					t.Fatal("VaryInto accepted a negative inductance")
				}
				continue
			}
			want, err := c.Vary(f)
			if err != nil {
				t.Fatal(err)
			}
			if err := c.VaryInto(dst, f); err != nil {
				t.Fatal(err)
			}
			got := *dst
			got.varySlots = nil
			if !reflect.DeepEqual(&got, want) {
				t.Fatalf("draw %d: VaryInto differs from Vary", k)
			}
		}
		if err := c.VaryInto(c, ones(len(c.Variations))); err == nil {
			t.Error("VaryInto into the circuit itself accepted")
		}
	}
	other, err := Load("blocks.nodal", []byte(blockSrc), nil)
	if err != nil {
		t.Fatal(err)
	}
	c, _ := Load("forms.nodal", []byte(allForms), nil)
	if err := c.VaryInto(other, ones(len(c.Variations))); err == nil {
		t.Error("VaryInto into another circuit accepted")
	}
}

func TestOverrides(t *testing.T) {
	c, err := Load("forms.nodal", []byte(allForms), Overrides{"fc": 1000})
	if err != nil {
		t.Fatal(err)
	}
	if p, _ := c.Part("R2"); !near(p.Value, 1/(2*math.Pi*1000*10e-9)) {
		t.Errorf("R2 = %v with fc overridden", p.Value)
	}
	// A part value (--set R2=4.7k) replaces the part's expression; its
	// tolerance still applies, and nothing else moves.
	c2, err := Load("forms.nodal", []byte(allForms), Overrides{"R2": 4700})
	if err != nil {
		t.Fatal(err)
	}
	if p, _ := c2.Part("R2"); p.Value != 4700 {
		t.Errorf("R2 = %v with R2 overridden to 4.7k", p.Value)
	}
	if orig, _ := Load("forms.nodal", []byte(allForms), nil); orig != nil {
		for i, p := range c2.Parts {
			if p.Name != "R2" && p.Value != orig.Parts[i].Value {
				t.Errorf("%s moved from %v to %v with R2 overridden", p.Name, orig.Parts[i].Value, p.Value)
			}
		}
	}
	_, err = Load("forms.nodal", []byte(allForms), Overrides{"fx": 1000})
	if err == nil || err.Error() != `forms.nodal: no top-level parameter or part value "fx" to override (did you mean "fc"?)` {
		t.Errorf("error %v", err)
	}
}

func TestMetrics(t *testing.T) {
	if got := MetricNames(); !reflect.DeepEqual(got, []string{"gain@F", "phase@F", "f3db", "peak", "peaking", "fpeak", "f0", "q", "dc",
		"phase_margin@PART", "gain_margin@PART", "crossover@PART", "stable", "noise@F", "noise_rms@F1..F2"}) {
		t.Errorf("MetricNames = %v", got)
	}
	for _, tc := range []struct {
		in   string
		name string
		f    float64
		ok   bool
	}{{"gain@1kHz", "gain", 1000, true}, {"phase@20k", "phase", 20000, true}, {"q", "q", 0, true},
		{"gain", "", 0, false}, {"q@1k", "", 0, false}, {"gain@1nF", "", 0, false}, {"gainx", "", 0, false},
		{"phase_margin@U1", "phase_margin", 0, true}, {"phase_margin", "", 0, false}, {"stable", "stable", 0, true}, {"stable@U1", "", 0, false}} {
		m, p, err := ParseMetric(tc.in)
		if name, f := m.Name, p.FreqHz; (err == nil) != tc.ok || name != tc.name || f != tc.f {
			t.Errorf("ParseMetric(%q) = %q %v %v", tc.in, m.Name, p.FreqHz, err)
		}
	}
}

// TestRequireLoopAndStable: `require stable` takes no limit (Holds), a
// loop metric names its gain element after @, and a missing limit or a
// limit on stable is an error at the statement.
func TestRequireLoopAndStable(t *testing.T) {
	src := "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nU1: opamp (gnd, in, out) a0=1M\n" +
		"require stable\nrequire phase_margin@U1 above 45deg\nrequire crossover@U1 within 1kHz..2MHz\n"
	c, err := Load("loop.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []Requirement{
		{Metric: "stable", Op: Holds, Text: "require stable"},
		{Metric: "phase_margin@U1", Op: Above, Lo: 45, Text: "require phase_margin@U1 above 45deg"},
		{Metric: "crossover@U1", Op: Within, Lo: 1e3, Hi: 2e6, Text: "require crossover@U1 within 1kHz..2MHz"},
	}
	for i := range want {
		got := c.Requirements[i]
		got.Pos = Pos{}
		if got != want[i] {
			t.Errorf("requirement %d = %+v, want %+v", i, got, want[i])
		}
	}
	if m, p, err := ParseMetric("phase_margin@U1"); err != nil || p.Part != "U1" || !m.Circuit {
		t.Errorf("phase_margin@U1: %+v %v", p, err)
	}
	if _, p, _ := ParseMetric("gain@1k"); p.Part != "" {
		t.Errorf("gain@1k: part %q", p.Part)
	}
	if m, ok := LookupMetric("stable"); !ok || !m.Bare {
		t.Error("stable is not a bare metric")
	}
	if !(Requirement{Op: Holds}).Pass(1) || (Requirement{Op: Holds}).Pass(0) {
		t.Error("Holds")
	}
	for _, bad := range []struct{ src, want string }{
		{"require stable above 1\n", "stable takes no limit"},
		{"require phase_margin@U1\n", "needs a limit"},
		{"require phase_margin above 45\n", "needs a part name"},
	} {
		_, err := Load("bad.nodal", []byte("Vs: voltage source (in, gnd) 1\nR1: resistor (in, gnd) 1k\n"+bad.src), nil)
		if err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("%q: error %v, want %q", bad.src, err, bad.want)
		}
	}
}

func TestEvalExpr(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
		unit string
	}{
		{"2^3^2", 512, ""}, {"-2^2", -4, ""}, {"2*pi*1kHz", 2 * math.Pi * 1000, "Hz"}, {"(1+2)*3", 9, ""},
		{"sqrt(2)/2", math.Sqrt2 / 2, ""}, {"ln(exp(2))", 2, ""}, {"log10(1k)", 3, ""}, {"atan(1)*4", math.Pi, ""},
		{"min(3, 1, 2)", 1, ""}, {"max(1nF, 2nF)", 2e-9, "F"}, {"cos(0)+sin(0)+tan(0)", 1, ""}, {"4k7/2", 2350, ""},
		{"10 - 2 - 3", 5, ""}, {"12/2/3", 2, ""}, {"2^-1", 0.5, ""},
		{"+1k", 1000, ""}, {"-+2", -2, ""}, {"+2^2", 4, ""}, {"2^+1", 2, ""}, {"3 - +1", 2, ""},
	} {
		v, u, err := EvalExpr(tc.in)
		if err != nil || !near(v, tc.want) || u != tc.unit {
			t.Errorf("EvalExpr(%q) = %v %q %v; want %v %q", tc.in, v, u, err, tc.want, tc.unit)
		}
	}
	for _, bad := range []string{"", "1 +", "(1", "x", "foo(1)", "1 2", "(1, 2)"} {
		if _, _, err := EvalExpr(bad); err == nil {
			t.Errorf("EvalExpr(%q) accepted", bad)
		}
	}
}

// BenchmarkVary measures one Monte Carlo re-evaluation of a circuit with
// toleranced parameters, derived lets and block instances.
func BenchmarkVary(b *testing.B) {
	c, err := Load("blocks.nodal", []byte(blockSrc), nil)
	if err != nil {
		b.Fatal(err)
	}
	f := ones(len(c.Variations))
	f[0] = 1.01
	b.ReportAllocs()
	for b.Loop() {
		if _, err := c.Vary(f); err != nil {
			b.Fatal(err)
		}
	}
}
