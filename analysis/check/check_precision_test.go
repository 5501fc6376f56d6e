package check

import (
	"math"
	"testing"
)

// TestComparePrecision: a coefficient written to 4 significant digits
// agrees when it is the circuit's rounded to them, and differs when it is
// one unit off in its last digit beyond half a unit; the response
// allowance follows (first-order error propagation, common practice).
func TestComparePrecision(t *testing.T) {
	// Circuit: 1/(1 + 2.44549e-3·s + 59.9734e-9·s²).
	circuit := tfFrom([]float64{1}, []float64{1, 2.44549e-3, 59.9734e-9})
	tests := []struct {
		name   string
		den    []float64
		tol    []float64
		agrees bool
	}{
		{"rounded to 4 digits, precision given", []float64{1, 2.445e-3, 59.97e-9}, []float64{0, 0.0005e-3, 0.005e-9}, true},
		{"rounded to 4 digits, taken as exact", []float64{1, 2.445e-3, 59.97e-9}, nil, false},
		{"off by two units in the last digit", []float64{1, 2.447e-3, 59.97e-9}, []float64{0, 0.0005e-3, 0.005e-9}, false},
	}
	for _, tt := range tests {
		res, err := Compare(circuit, []float64{1}, tt.den, CompareOptions{YoursDenTol: tt.tol})
		if err != nil {
			t.Fatal(err)
		}
		if res.Agrees != tt.agrees {
			t.Errorf("%s: agrees %v, want %v (rows %+v, %.4g dB allowed %.4g)", tt.name, res.Agrees, tt.agrees, res.Coefficients, res.MaxMagDiffDB, res.MagAllowanceDB)
		}
		if len(res.Coefficients) != 4 {
			t.Fatalf("%s: %d rows", tt.name, len(res.Coefficients))
		}
		if got := res.Coefficients[2].Precision; tt.tol != nil && math.Abs(got-tt.tol[1]) > 1e-18 {
			t.Errorf("%s: den s^1 precision %g, want %g", tt.name, got, tt.tol[1])
		}
	}
}

// TestCompareSmallTermBothSides: a term both sides have, equal, agrees
// however small it is beside the others once s is scaled by the
// circuit's characteristic frequency (never "missing" or "extra").
func TestCompareSmallTermBothSides(t *testing.T) {
	// Poles at 1e3 and 1e15 rad/s: the s² term, scaled, is 1e-12 of the
	// s term and below zeroTol of the largest term.
	den := []float64{1, 1e-3 + 1e-15, 1e-18}
	res, err := Compare(tfFrom([]float64{1}, den), []float64{1}, den, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range res.Coefficients {
		if r.Status != CoefAgrees {
			t.Errorf("%s s^%d: %s", r.Side, r.Power, r.Status)
		}
	}
}

// TestCompareMissingRoot: a pole of the circuit with no counterpart in
// yours is reported missing, its RelDiff infinite (never 0).
func TestCompareMissingRoot(t *testing.T) {
	circuit := tfFrom([]float64{1}, []float64{1, 1.1e-3, 1e-7}) // poles at 1e3 and 1e4 rad/s
	res, err := Compare(circuit, []float64{1}, []float64{1, 1e-3}, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Poles) != 2 {
		t.Fatalf("poles %+v", res.Poles)
	}
	missing := 0
	for _, m := range res.Poles {
		if m.Yours == nil {
			missing++
			if !math.IsInf(m.RelDiff, 1) {
				t.Errorf("missing pole with RelDiff %g", m.RelDiff)
			}
		}
	}
	if missing != 1 || res.Agrees {
		t.Errorf("missing %d, agrees %v", missing, res.Agrees)
	}
}

// TestCompareBand: an ideal-op-amp derivation 1/(1 + s·RC) against the
// same stage with a second pole at 2π·10 MHz (an op-amp's) agrees in the
// band 20 Hz..10 kHz (phase 0.057° at 10 kHz, 0.115° at 20 kHz: atan(f/10 MHz)) and differs over the full range; the band also
// needs both ends.
func TestCompareBand(t *testing.T) {
	rc := 1 / (2 * math.Pi * 1e3)
	tau := 1 / (2 * math.Pi * 10e6)
	circuit := tfFrom([]float64{1}, []float64{1, rc + tau, rc * tau})
	full, err := Compare(circuit, []float64{1}, []float64{1, rc}, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	band, err := Compare(circuit, []float64{1}, []float64{1, rc}, CompareOptions{FromHz: 20, ToHz: 10e3, BandOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	if full.Agrees || !band.Agrees {
		t.Errorf("full agrees %v (want false), band agrees %v (want true): band %.3g dB %.3g°", full.Agrees, band.Agrees, band.MaxMagDiffDB, band.MaxPhaseDiffDeg)
	}
	if band.FromHz != 20 || band.ToHz != 10e3 {
		t.Errorf("band swept %g..%g Hz", band.FromHz, band.ToHz)
	}
	if _, err := Compare(circuit, []float64{1}, []float64{1, rc}, CompareOptions{ToHz: 20e3, BandOnly: true}); err == nil {
		t.Error("a band without its lower end was accepted")
	}
}
