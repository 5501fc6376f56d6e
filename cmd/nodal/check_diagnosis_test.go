package main

import (
	"strings"
	"testing"

	"nodal/analysis/check"
	"nodal/analysis/transfer"
	"nodal/netlist"
)

// diagnosisParts holds the part values of a tone-stage filter; the
// derivations name them (R1 = 10 kΩ, R2 = 22 kΩ, C1 = 10 nF, C2 = 4.7 nF,
// L1 = 10 mH).
const diagnosisParts = `title "tone-stage parts"
Vs: voltage source (in, gnd) 1
R1: resistor (in, a) 10k
R2: resistor (a, b) 22k
C1: capacitor (b, gnd) 10n
C2: capacitor (a, gnd) 4.7n
L1: inductor (b, out) 10m
`

// derivationCoefs reads a hand derivation (an ODE when it holds "=") as
// nodal check does and evaluates it with the parts of c.
func derivationCoefs(t *testing.T, c *netlist.Circuit, src string) (num, den []float64) {
	t.Helper()
	ode, tf := "", src
	if strings.Contains(src, "=") {
		ode, tf = src, ""
	}
	r, err := reduceDerivation(c, ode, tf)
	if err == nil {
		num, den, err = r.Evaluate(symbolLookup(c))
	}
	if err != nil {
		t.Fatalf("%q: %v", src, err)
	}
	return num, den
}

// The diagnosis names the slip behind a mismatch: the circuits are the
// RC low-pass 1/(1 + sRC) (common practice), the series RLC
// 1/(1 + sRC + s²LC) (Nilsson & Riedel, Electric Circuits), the unity-gain
// Sallen-Key low-pass 1 + s·C2(R1+R2) + s²R1R2C1C2 (Sedra & Smith,
// Microelectronic Circuits; from memory) and a first-order high-pass.
func TestDiagnosis(t *testing.T) {
	parts, err := netlist.Load("parts.nodal", []byte(diagnosisParts), nil)
	if err != nil {
		t.Fatal(err)
	}
	values := circuitValues(parts)
	R1, R2, C1, C2, L1 := values["R1"], values["R2"], values["C1"], values["C2"], values["L1"]
	// Den is normalised already (lowest coefficient 1); Compare finds the roots.
	tf := func(num, den []float64) *transfer.TransferFunction {
		return &transfer.TransferFunction{Num: num, Den: den, Gain: num[len(num)-1] / den[len(den)-1]}
	}
	rc := tf([]float64{1}, []float64{1, R1 * C1})
	rlc := tf([]float64{1}, []float64{1, R1 * C1, L1 * C1})
	sk := tf([]float64{1}, []float64{1, C2 * (R1 + R2), R1 * R2 * C1 * C2})
	hp := tf([]float64{0, R2 * C1}, []float64{1, R2 * C1})
	for _, tt := range []struct {
		name     string
		circuit  *transfer.TransferFunction
		src      string
		diagnose string // substring of one diagnosis line
	}{
		{"rc ode", rc, "R1*C1*y' + y = u", "every coefficient agrees"},
		{"rc ode times 3", rc, "3*R1*C1*dy/dt + 3*y = 3*u", "every coefficient agrees"},
		{"rc tf scaled", rc, "5/(5 + 5*s*R1*C1)", "every coefficient agrees"},
		{"rc factor 2", rc, "2*R1*C1*y' + y = u", "den s^1: yours is 2.000× the circuit's — a missing or extra factor 2?"},
		{"rc wrong order", rc, "R1*C1*y'' + y = u", "den: yours has the circuit's s^1 coefficient at s^2 — a derivative of the wrong order (y'' where y' belongs)?"},
		{"rc gain", rc, "R1*C1*y' + y = 2*u", "num s^0: yours is 2.000× the circuit's — a missing or extra factor 2?"},
		{"rc Hz for rad/s", rc, "1/(1 + 2*pi*s*R1*C1)", "a factor 2π"},
		{"rlc", rlc, "L1*C1*y'' + R1*C1*y' + y = u", "every coefficient agrees"},
		{"rlc missing term", rlc, "L1*C1*y'' + y = u", "den s^1: the circuit has 0.0001, yours has none — a missing term?"},
		{"rlc extra term", rlc, "L1*C1*y'' + R1*C1*y' + y = u + R1*C1*u'", "num s^1: yours has 0.0001, the circuit has no such term — an extra term?"},
		{"sallen-key", sk, "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)", "every coefficient agrees"},
		{"sallen-key swapped C", sk, "1/(1 + s*C1*(R1+R2) + s^2*R1*R2*C1*C2)", "den s^1: yours is 2.128× the circuit's = C1/C2 — C1 written where C2 belongs?"},
		{"common factor", rc, "(1 + s*R2*C2)/((1 + s*R1*C1)*(1 + s*R2*C2))", "common factor"},
		{"high-pass", hp, "R2*C1*y' + y = R2*C1*u'", "every coefficient agrees"},
		{"high-pass sign", hp, "R2*C1*y' + y = -R2*C1*u'", "a sign slip?"},
	} {
		num, den := derivationCoefs(t, parts, tt.src)
		res, err := check.Compare(tt.circuit, num, den, check.CompareOptions{Values: values})
		if err != nil {
			t.Fatalf("%s: %v", tt.name, err)
		}
		if d := diagnosis(res); !strings.Contains(strings.Join(d, "\n"), tt.diagnose) {
			t.Errorf("%s: no diagnosis containing %q in %q", tt.name, tt.diagnose, d)
		}
	}
	c := tf([]float64{1}, []float64{1, 1e-4})
	c.Cancelled = []complex128{-5000}
	res, err := check.Compare(c, []float64{1}, []float64{1, 1e-4}, check.CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if d := strings.Join(diagnosis(res), "\n"); !strings.Contains(d, "pole/zero cancellation at s = -5000 rad/s") {
		t.Errorf("circuit cancellation: diagnosis %q", d)
	}
}
