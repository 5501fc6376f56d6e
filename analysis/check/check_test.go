package check

import (
	"math"
	"math/cmplx"
	"nodal/analysis/transfer"
	"strings"
	"testing"

	"nodal/analysis/derivation"
)

// Part values of a tone-stage filter used throughout (SI units).
var checkValues = map[string]float64{
	"R1": 10e3, "R2": 22e3, "C1": 10e-9, "C2": 4.7e-9, "L1": 10e-3,
}

func checkLookup(name string) (float64, bool) { v, ok := checkValues[name]; return v, ok }

// tfFrom builds a circuit-side TransferFunction from known coefficients:
// Den normalised, poles and zeros from polyRoots, Gain the leading ratio.
func tfFrom(num, den []float64) *transfer.TransferFunction {
	n, d, err := normalise("test", num, den)
	if err != nil {
		panic(err)
	}
	return &transfer.TransferFunction{Num: n, Den: d, Zeros: polyRoots(n), Poles: polyRoots(d), Gain: n[len(n)-1] / d[len(d)-1]}
}

// yours parses and evaluates a hand derivation (an ODE when it holds "=").
func yours(t *testing.T, src string) (num, den []float64) {
	t.Helper()
	var r *derivation.Rational
	var err error
	if strings.Contains(src, "=") {
		var eq *derivation.Equation
		if eq, err = derivation.ParseODE("ode", src); err == nil {
			r, err = eq.Reduce(derivation.Signals{Known: func(n string) bool { _, ok := checkValues[n]; return ok }})
		}
	} else {
		var tf *derivation.TF
		if tf, err = derivation.ParseTF("tf", src); err == nil {
			r, err = tf.Reduce()
		}
	}
	if err == nil {
		num, den, err = r.Evaluate(checkLookup)
	}
	if err != nil {
		t.Fatalf("%q: %v", src, err)
	}
	return num, den
}

func TestPolyRoots(t *testing.T) {
	// s^2 + 2ζω0·s + ω0^2 has roots −ζω0 ± jω0·√(1−ζ²) (common practice),
	// here with ω0 = 1e5 rad/s and ζ = 0.3, times (s + 10) to spread the
	// coefficients over decades.
	w0, z := 1e5, 0.3
	quad := []float64{w0 * w0, 2 * z * w0, 1}
	c := []float64{10 * quad[0], 10*quad[1] + quad[0], 10*quad[2] + quad[1], quad[2]}
	want := []complex128{-10, complex(-z*w0, w0*math.Sqrt(1-z*z)), complex(-z*w0, -w0*math.Sqrt(1-z*z))}
	got := polyRoots(c)
	if len(got) != 3 {
		t.Fatalf("got %v", got)
	}
	for i := range want {
		if cmplx.Abs(got[i]-want[i]) > 1e-10*cmplx.Abs(want[i]) {
			t.Errorf("root %d = %v, want %v", i, got[i], want[i])
		}
	}
	if r := polyRoots([]float64{0, 0, 3}); len(r) != 2 || r[0] != 0 || r[1] != 0 {
		t.Errorf("roots of 3s^2 = %v, want two at 0", r)
	}
	if r := polyRoots([]float64{5}); len(r) != 0 {
		t.Errorf("roots of a constant = %v", r)
	}
}

func TestCompare(t *testing.T) {
	R1, R2, C1, C2, L1 := 10e3, 22e3, 10e-9, 4.7e-9, 10e-3
	// RC low-pass H = 1/(1 + sRC) (common practice).
	rc := tfFrom([]float64{1}, []float64{1, R1 * C1})
	// Series RLC, output across C: H = 1/(1 + sRC + s²LC) (Nilsson &
	// Riedel, Electric Circuits).
	rlc := tfFrom([]float64{1}, []float64{1, R1 * C1, L1 * C1})
	// Sallen-Key unity-gain low-pass, C1 the feedback capacitor and C2 to
	// ground: D(s) = 1 + s·C2(R1+R2) + s²R1R2C1C2 (Sedra & Smith,
	// Microelectronic Circuits; from memory).
	sk := tfFrom([]float64{1}, []float64{1, C2 * (R1 + R2), R1 * R2 * C1 * C2})
	// First-order high-pass section times a low-pass with a common factor.
	hp := tfFrom([]float64{0, R2 * C1}, []float64{1, R2 * C1})

	tests := []struct {
		name    string
		circuit *transfer.TransferFunction
		src     string
		agrees  bool
		status  map[[2]int]CoefStatus
	}{
		{"rc ode", rc, "R1*C1*y' + y = u", true, nil},
		{"rc ode times 3", rc, "3*R1*C1*dy/dt + 3*y = 3*u", true, nil},
		{"rc tf scaled", rc, "5/(5 + 5*s*R1*C1)", true, nil},
		{"rc factor 2", rc, "2*R1*C1*y' + y = u", false, map[[2]int]CoefStatus{{1, 1}: CoefDiffers}},
		{"rc wrong order", rc, "R1*C1*y'' + y = u", false, map[[2]int]CoefStatus{{1, 1}: CoefMissing, {1, 2}: CoefExtra}},
		{"rc gain", rc, "R1*C1*y' + y = 2*u", false, map[[2]int]CoefStatus{{0, 0}: CoefDiffers}},
		{"rc Hz for rad/s", rc, "1/(1 + 2*pi*s*R1*C1)", false, nil},
		{"rlc", rlc, "L1*C1*y'' + R1*C1*y' + y = u", true, nil},
		{"rlc missing term", rlc, "L1*C1*y'' + y = u", false, map[[2]int]CoefStatus{{1, 1}: CoefMissing}},
		{"rlc extra term", rlc, "L1*C1*y'' + R1*C1*y' + y = u + R1*C1*u'", false, map[[2]int]CoefStatus{{0, 1}: CoefExtra}},
		{"sallen-key", sk, "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)", true, nil},
		{"sallen-key swapped C", sk, "1/(1 + s*C1*(R1+R2) + s^2*R1*R2*C1*C2)", false, map[[2]int]CoefStatus{{1, 1}: CoefDiffers}},
		{"common factor", rc, "(1 + s*R2*C2)/((1 + s*R1*C1)*(1 + s*R2*C2))", true, nil},
		{"high-pass", hp, "R2*C1*y' + y = R2*C1*u'", true, nil},
		{"high-pass sign", hp, "R2*C1*y' + y = -R2*C1*u'", false, nil},
	}
	for _, tt := range tests {
		num, den := yours(t, tt.src)
		res, err := Compare(tt.circuit, num, den, CompareOptions{Values: checkValues})
		if err != nil {
			t.Errorf("%s: %v", tt.name, err)
			continue
		}
		if res.Agrees != tt.agrees {
			t.Errorf("%s: agrees = %v, want %v", tt.name, res.Agrees, tt.agrees)
		}
		for _, row := range res.Coefficients {
			side := 0
			if row.Side == "den" {
				side = 1
			}
			want, ok := tt.status[[2]int{side, row.Power}]
			if !ok {
				want = CoefAgrees
				if tt.status == nil && !tt.agrees {
					continue
				}
			}
			if row.Status != want {
				t.Errorf("%s: %s s^%d is %s, want %s", tt.name, row.Side, row.Power, row.Status, want)
			}
		}
	}
}

// TestCompareDerived checks the poles side by side and the response
// difference for a time constant off by 2: the pole moves from −1/RC to
// −1/(2RC) and above both corners |H_yours/H_circuit| → 1/2, −6.02 dB
// (20·log10 2 = 6.0206, common practice).
func TestCompareDerived(t *testing.T) {
	RC := 10e3 * 10e-9
	res, err := Compare(tfFrom([]float64{1}, []float64{1, RC}), []float64{1}, []float64{1, 2 * RC}, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Poles) != 1 || res.Poles[0].Circuit == nil || res.Poles[0].Yours == nil {
		t.Fatalf("poles %+v", res.Poles)
	}
	if p := res.Poles[0]; math.Abs(real(*p.Circuit)+1/RC) > 1e-9/RC || math.Abs(real(*p.Yours)+0.5/RC) > 1e-9/RC || math.Abs(p.RelDiff-0.5) > 1e-9 {
		t.Errorf("pole pair %+v %+v rel %g", *p.Circuit, *p.Yours, p.RelDiff)
	}
	fc := 1 / (2 * math.Pi * RC)
	if math.Abs(res.FromHz-fc/200) > 1e-9*fc || math.Abs(res.ToHz-fc*100) > 1e-6*fc {
		t.Errorf("range %g..%g Hz, want %g..%g", res.FromHz, res.ToHz, fc/200, fc*100)
	}
	if math.Abs(res.MaxMagDiffDB+6.0206) > 0.01 {
		t.Errorf("max magnitude difference %g dB, want about −6.02", res.MaxMagDiffDB)
	}
	// arg((1+jx)/(1+2jx)) peaks at −19.47° where x = 1/√2 (max of
	// atan(x) − atan(2x): setting its derivative 1/(1+x²) − 2/(1+4x²) to zero
	// gives x² = 1/2; elementary calculus, common practice).
	if math.Abs(res.MaxPhaseDiffDeg+19.47) > 0.05 {
		t.Errorf("max phase difference %g°, want about −19.47", res.MaxPhaseDiffDeg)
	}
	if res.Agrees {
		t.Error("agrees, want differs")
	}
}

func TestCompareErrors(t *testing.T) {
	rc := tfFrom([]float64{1}, []float64{1, 1e-4})
	for _, tt := range []struct {
		name     string
		c        *transfer.TransferFunction
		num, den []float64
	}{
		{"nil circuit", nil, []float64{1}, []float64{1}},
		{"zero den", rc, []float64{1}, []float64{0, 0}},
		{"empty den", rc, []float64{1}, nil},
		{"nan", rc, []float64{math.NaN()}, []float64{1}},
	} {
		if _, err := Compare(tt.c, tt.num, tt.den, CompareOptions{}); err == nil {
			t.Errorf("%s: no error", tt.name)
		}
	}
}

// TestCompareCircuitCancellation reports a cancellation the circuit side
// recorded.
func TestCompareCircuitCancellation(t *testing.T) {
	c := tfFrom([]float64{1}, []float64{1, 1e-4})
	c.Cancelled = []complex128{-5000}
	res, err := Compare(c, []float64{1}, []float64{1, 1e-4}, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Agrees || len(res.CircuitCancelled) != 1 || res.CircuitCancelled[0] != -5000 {
		t.Errorf("agrees %v, circuit cancelled %v", res.Agrees, res.CircuitCancelled)
	}
}
