package loop

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

func relClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), 1e-300)
}

// TestLoopGolden compares T(s) and its figures with the sympy reference
// of testdata/loop/gen_loop.py (hand-written node equations, polynomial
// root finding for the crossovers).
func TestLoopGolden(t *testing.T) {
	for _, tc := range []struct{ name, path string }{
		{"photodiode_frontend", "../../testdata/examples/photodiode_frontend.nodal"},
		{"line_driver", "testdata/line_driver.nodal"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var g struct {
				Num, Den                        []float64
				CrossoversHz                    []float64 `json:"crossovers_hz"`
				PhaseMarginsDeg                 []float64 `json:"phase_margins_deg"`
				PhaseCrossoversHz, GainMarginDB []float64
			}
			b, err := os.ReadFile(filepath.Join("testdata", "golden", tc.name+".json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := json.Unmarshal(b, &g); err != nil {
				t.Fatal(err)
			}
			lr, err := NewLoopGain(testcircuit.Load(t, tc.path, nil), "U1")
			if err != nil {
				t.Fatal(err)
			}
			if len(lr.T.Num) != len(g.Num) || len(lr.T.Den) != len(g.Den) {
				t.Fatalf("T = %v / %v, reference %v / %v", lr.T.Num, lr.T.Den, g.Num, g.Den)
			}
			for i := range g.Num {
				if !relClose(lr.T.Num[i], g.Num[i], 1e-9) {
					t.Errorf("num[%d] = %g, reference %g", i, lr.T.Num[i], g.Num[i])
				}
			}
			for i := range g.Den {
				if !relClose(lr.T.Den[i], g.Den[i], 1e-9) {
					t.Errorf("den[%d] = %g, reference %g", i, lr.T.Den[i], g.Den[i])
				}
			}
			if len(lr.Figures.Gain) != len(g.CrossoversHz) || len(lr.Figures.Phase) != len(g.PhaseCrossoversHz) {
				t.Fatalf("crossovers %+v, phase crossovers %+v; reference %v, %v", lr.Figures.Gain, lr.Figures.Phase, g.CrossoversHz, g.PhaseCrossoversHz)
			}
			for i, c := range lr.Figures.Gain {
				if !relClose(c.FreqHz, g.CrossoversHz[i], 1e-9) || math.Abs(c.PhaseMarginDeg-g.PhaseMarginsDeg[i]) > 1e-6 {
					t.Errorf("crossover %g Hz, PM %.9g°; reference %g Hz, %.9g°", c.FreqHz, c.PhaseMarginDeg, g.CrossoversHz[i], g.PhaseMarginsDeg[i])
				}
			}
		})
	}
}

// TestLoopNonInverting: a single-pole op-amp a(s) = A0/(1 + s·A0/ωt) in a
// non-inverting stage of divider ratio β has T = a·β, so |T| = 1 at
// ωc = (ωt/A0)·√((A0β)² − 1) ≈ β·ωt and PM = 180° − atan(ωc·A0/ωt) ≈ 90°
// (closed form; common practice).
func TestLoopNonInverting(t *testing.T) {
	beta, wt := 0.1, 2*math.Pi*1e6
	for _, a0 := range []float64{1e5, 1e3, 30} {
		c := testcircuit.Load(t, "testdata/noninverting.nodal", netlist.Overrides{"A0": a0})
		lr, err := NewLoopGain(c, "U1")
		if err != nil {
			t.Fatal(err)
		}
		wc := wt / a0 * math.Sqrt(a0*a0*beta*beta-1)
		pm := 180 - math.Atan(wc*a0/wt)*180/math.Pi
		if len(lr.Figures.Gain) != 1 {
			t.Fatalf("A0=%g: crossovers %+v", a0, lr.Figures.Gain)
		}
		if got := lr.Figures.Gain[0].FreqHz * 2 * math.Pi; !relClose(got, wc, 1e-9) {
			t.Errorf("A0=%g: crossover %.10g rad/s, want %.10g (β·ωt = %g)", a0, got, wc, beta*wt)
		}
		if got := lr.Figures.Gain[0].PhaseMarginDeg; math.Abs(got-pm) > 1e-7 {
			t.Errorf("A0=%g: phase margin %.10g°, want %.10g°", a0, got, pm)
		}
		if a0 == 1e5 && (math.Abs(lr.Figures.Gain[0].PhaseMarginDeg-90) > 0.01 || !relClose(lr.Figures.Gain[0].FreqHz*2*math.Pi, beta*wt, 1e-6)) {
			t.Errorf("A0=1e5: crossover %g Hz, PM %g°; want ≈ β·ft = 100 kHz, ≈ 90°", lr.Figures.Gain[0].FreqHz, lr.Figures.Gain[0].PhaseMarginDeg)
		}
	}
}

// TestLoopPhaseShift: the three-section R-C ladder gives −180° at
// ω = √6/(RC) with attenuation 1/29 (the classic phase-shift oscillator
// result), so the gain margin around an amplifier of gain K is
// 20·log10(29/K); at K = 29 the closed loop is marginal.
func TestLoopPhaseShift(t *testing.T) {
	rc := 10e3 * 10e-9
	for _, k := range []float64{20, 29, 40} {
		c := testcircuit.Load(t, "testdata/phase_shift.nodal", netlist.Overrides{"K": k})
		lr, err := NewLoopGain(c, "E1")
		if err != nil {
			t.Fatal(err)
		}
		if len(lr.Figures.Phase) != 1 {
			t.Fatalf("K=%g: phase crossovers %+v", k, lr.Figures.Phase)
		}
		if got, want := lr.Figures.Phase[0].FreqHz*2*math.Pi, math.Sqrt(6)/rc; !relClose(got, want, 1e-9) {
			t.Errorf("K=%g: phase crossover %.10g rad/s, want √6/(RC) = %.10g", k, got, want)
		}
		if got, want := lr.Figures.Phase[0].GainMarginDB, 20*math.Log10(29/k); math.Abs(got-want) > 1e-8 {
			t.Errorf("K=%g: gain margin %.10g dB, want %.10g", k, got, want)
		}
	}
}

// TestLoopAsymptoticGain checks T against the closed-loop transfer
// function independently: H = H∞·T/(1 + T) + H0/(1 + T), with H∞ the
// circuit with the element's gain infinite (an ideal op-amp) and H0 with
// it zero (its output a 0 V source), each extracted on its own (the
// asymptotic-gain model; common practice).
func TestLoopAsymptoticGain(t *testing.T) {
	for _, tc := range []struct {
		path, out string
	}{
		{"testdata/noninverting.nodal", "out"},
		{"../../testdata/examples/photodiode_frontend.nodal", "out"},
		{"testdata/noninverting.nodal", "fb"},
	} {
		c := testcircuit.Load(t, tc.path, nil)
		lr, err := NewLoopGain(c, "U1")
		if err != nil {
			t.Fatal(err)
		}
		h := closedLoop(t, c, tc.out)
		inf := c.Clone()
		zero := c.Clone()
		for i := range inf.Parts {
			if inf.Parts[i].Name == "U1" {
				inf.Parts[i].A0, inf.Parts[i].GBWHz = 0, 0
				p := &zero.Parts[i]
				*p = netlist.Part{Name: p.Name, Kind: netlist.VCVS, Nodes: []string{p.Nodes[2], netlist.Ground}, Value: 0,
					Sense: [2]string{p.Nodes[0], p.Nodes[1]}, Pos: p.Pos}
			}
		}
		hInf, h0 := closedLoop(t, inf, tc.out), closedLoop(t, zero, tc.out)
		for _, f := range []float64{1, 300, 1e4, 2e5, 3e6} {
			s := complex(0, 2*math.Pi*f)
			tv := lr.T.EvalFactored(s)
			want := (hInf.EvalFactored(s)*tv + h0.EvalFactored(s)) / (1 + tv)
			got := h.EvalFactored(s)
			if d := cmplxRel(got, want); d > 1e-8 {
				t.Errorf("%s %s at %g Hz: H = %v, H∞·T/(1+T) + H0/(1+T) = %v", tc.path, tc.out, f, got, want)
			}
		}
	}
}

func closedLoop(t *testing.T, c *netlist.Circuit, out string) *transfer.TransferFunction {
	t.Helper()
	sys, err := mna.Build(c, mna.Input{}, mna.Output{Node: out})
	if err != nil {
		t.Fatal(err)
	}
	h, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

func cmplxRel(a, b complex128) float64 {
	d := a - b
	return math.Hypot(real(d), imag(d)) / math.Max(math.Hypot(real(b), imag(b)), 1e-30)
}

// TestLoopSwappedInputs: the inverting amplifier with its op-amp inputs
// swapped has T(s) = −A0·β/(1 + s·A0/ωt), β = R1/(R1 + R2) = 1/11 (closed
// form of the single-pole op-amp): a negative DC loop gain, so the
// unwrapped phase starts at −180° and is −180° − atan(ω·A0/ωt); at the
// crossover ωc = (ωt/A0)·√((A0β)² − 1) the phase margin is
// −atan(√((A0β)² − 1)) ≈ −90°, never 270°.
func TestLoopSwappedInputs(t *testing.T) {
	a0, wt, beta := 1e5, 2*math.Pi*1e6, 1.0/11
	c := testcircuit.Load(t, "../stability/testdata/circuits/swapped_inverting.nodal", nil)
	lr, err := NewLoopGain(c, "U1")
	if err != nil {
		t.Fatal(err)
	}
	lo, _ := Span(lr.T)
	want0 := -180 - math.Atan(lo*a0/wt)*180/math.Pi
	if got := lr.Figures.PhaseDeg(lr.T, lo); math.Abs(got-want0) > 1e-7 {
		t.Errorf("phase at %g rad/s %.10g°, want %.10g°", lo, got, want0)
	}
	if len(lr.Figures.Gain) != 1 {
		t.Fatalf("crossovers %+v, want one", lr.Figures.Gain)
	}
	wc := wt / a0 * math.Sqrt(a0*a0*beta*beta-1)
	if got := lr.Figures.Gain[0].FreqHz * 2 * math.Pi; !relClose(got, wc, 1e-9) {
		t.Errorf("crossover %.10g rad/s, want %.10g", got, wc)
	}
	pm := -math.Atan(math.Sqrt(a0*a0*beta*beta-1)) * 180 / math.Pi
	if got := lr.Figures.Gain[0].PhaseMarginDeg; math.Abs(got-pm) > 1e-7 {
		t.Errorf("phase margin %.10g°, want %.10g°", got, pm)
	}
}
