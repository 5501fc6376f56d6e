package netlist

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"testing"
)

// checkDiags asserts that err is a non-empty ErrorList whose diagnostics
// all name file, sit at line >= 1 and column >= 1 and carry a message.
func checkDiags(t *testing.T, file string, err error) {
	t.Helper()
	var l ErrorList
	if !errors.As(err, &l) || len(l) == 0 {
		t.Fatalf("error %T %v is not a non-empty ErrorList", err, err)
	}
	for _, d := range l {
		if d.Pos.File != file || d.Pos.Line < 1 || d.Pos.Col < 1 || d.Msg == "" {
			t.Fatalf("diagnostic badly positioned or empty: %+v", d)
		}
		if !strings.HasPrefix(d.Error(), file+":") {
			t.Fatalf("diagnostic without file: %q", d.Error())
		}
	}
}

// maxFuzzInput bounds the inputs FuzzParse tries: the work of Load grows
// with the input size (and nesting, which the grammar caps), so a bounded
// input is bounded work; BenchmarkLoadPerByte measures its speed.
const maxFuzzInput = 1 << 16

// FuzzParse checks that parsing and elaborating any input of up to
// maxFuzzInput bytes never panics, fails only with positioned diagnostics, and that a
// circuit that loads keeps the invariants of Part (finite values, > 0 for
// R, L and C) and varies at nominal to the same values.
func FuzzParse(f *testing.F) {
	f.Add([]byte(allForms))
	f.Add([]byte(blockSrc))
	f.Add([]byte(base + "R2: resistor (a b) 10k\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		if len(src) > maxFuzzInput {
			t.Skip("larger than maxFuzzInput")
		}
		c, err := Load("fuzz", src, nil)
		if err != nil {
			checkDiags(t, "fuzz", err)
			return
		}
		if len(c.Nodes) == 0 || c.Nodes[0] != Ground {
			t.Fatalf("Nodes[0] = %v", c.Nodes)
		}
		for _, r := range c.Responses {
			if r.Name == "" || strings.Contains(r.Name, ".") || (r.Kind == ResponseVoltage) == (r.Node == "") || (r.Kind == ResponseCurrent) == (r.Part == "") {
				t.Fatalf("response %+v", r)
			}
		}
		for _, q := range c.Requirements {
			if _, ok := c.Response(q.Response); q.Response != "" && !ok {
				t.Fatalf("requirement %q names the undeclared response %q", q.Text, q.Response)
			}
		}
		for _, p := range c.Parts {
			if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) {
				t.Fatalf("part %s has value %v", p.Name, p.Value)
			}
			if (p.Kind == Resistor || p.Kind == Capacitor || p.Kind == Inductor) && !(p.Value > 0) {
				t.Fatalf("part %s (%v) has value %v", p.Name, p.Kind, p.Value)
			}
		}
		v, err := c.Vary(ones(len(c.Variations)))
		if err != nil {
			t.Fatalf("Vary at nominal: %v", err)
		}
		for i := range c.Parts {
			if a, b := c.Parts[i].Value, v.Parts[i].Value; a != b && math.Abs(a-b) > 1e-12*math.Abs(a) {
				t.Fatalf("Vary at nominal changed %s from %v to %v", c.Parts[i].Name, a, b)
			}
		}
	})
}

// FuzzExpr checks that evaluating any expression never panics, and fails
// only with positioned diagnostics in the pseudo-file "expression".
func FuzzExpr(f *testing.F) {
	for _, s := range []string{"2*pi*1kHz", "-2^2^-1", "max(1, sqrt(4k7))", "(1, 2)", "1/0", "R47*2R2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		_, _, err := EvalExpr(s)
		if err != nil {
			checkDiags(t, "expression", err)
		}
	})
}

// FuzzParseValue checks ParseValue and ParseMetric: no panic, a value
// that parses is finite, and a metric that parses names a known metric
// with a positive finite frequency exactly when it is taken at one.
func FuzzParseValue(f *testing.F) {
	for _, s := range []string{"10Hz", "-3dB", "4k7", "2R2", "R47", "5%", "1e308*10", "1e400", "µ", "10 kΩ", "gain@1kHz", "phase@-1", "f3db", "q@1", "gain@1e-400Hz", "gain@\x00"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if v, err := ParseValue(s, ""); err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
			t.Fatalf("ParseValue(%q) = %v", s, v)
		}
		m, p, err := ParseMetric(s)
		name, fHz := m.Name, p.FreqHz
		if err != nil {
			return
		}
		_, ok := MetricUnit(name)
		atFreq := strings.Contains(s, "@")
		if !ok || atFreq != (fHz > 0) || math.IsInf(fHz, 0) || math.IsNaN(fHz) || fHz < 0 {
			t.Fatalf("ParseMetric(%q) = %q, %v", s, name, fHz)
		}
	})
}

// BenchmarkLoadPerByte loads a file of every statement form repeated to
// about maxFuzzInput bytes, with parts renamed so it elaborates; the
// custom metric ns/byte is the speed the bounded fuzz inputs rely on.
func BenchmarkLoadPerByte(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("Vs: voltage source (in, gnd) 1\n")
	for i := 0; sb.Len() < maxFuzzInput; i++ {
		fmt.Fprintf(&sb, "R%d: resistor (in, n%d) 1k ±1%%\nC%d: capacitor (n%d, gnd) (1n + 2n*%d)/3\n", i, i, i, i, i%7)
	}
	src := []byte(sb.String())
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	for b.Loop() {
		if _, err := Load("bench", src, nil); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(src)), "ns/byte")
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/float64(len(src)), "B/byte")
}
