package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// scaleCase is a circuit of extreme but valid values or of a huge gain,
// with the closed form of its response (rad/s in, the output per volt).
type scaleCase struct {
	name, src, out string
	h              func(s complex128) complex128
	from           string // the source of h
}

// cascadeText is a chain of n sections (kinds cycled: 'h' high-pass,
// series C then shunt R; 'l' low-pass, series R then shunt C) of r and c,
// each buffered by gain g: an ideal op-amp as a non-inverting amplifier
// (1 kΩ to ground, (g − 1)·1 kΩ in feedback) or a voltage-controlled
// source g·v(m). It returns the text and the closed form, the product of
// g·sRC/(1 + sRC) or g/(1 + sRC) over the stages (common practice:
// buffered stages do not load one another).
func cascadeText(n int, kinds string, r, c, g float64, opamp bool) (string, func(complex128) complex128) {
	var b strings.Builder
	fmt.Fprintf(&b, "title \"cascade\"\nV1: voltage source (n0, gnd) 1\n")
	for k := 0; k < n; k++ {
		if kinds[k%len(kinds)] == 'h' {
			fmt.Fprintf(&b, "C%d: capacitor (n%d, m%d) %g\nR%d: resistor (m%d, gnd) %g\n", k, k, k, c, k, k, r)
		} else {
			fmt.Fprintf(&b, "R%d: resistor (n%d, m%d) %g\nC%d: capacitor (m%d, gnd) %g\n", k, k, k, r, k, k, c)
		}
		if opamp {
			fmt.Fprintf(&b, "Ra%d: resistor (f%d, gnd) 1k\nRb%d: resistor (f%d, n%d) %g\nU%d: opamp (m%d, f%d, n%d)\n", k, k, k, k, k+1, 1e3*(g-1), k, k, k, k+1)
		} else {
			fmt.Fprintf(&b, "E%d: voltage source (n%d, gnd) %g*v(m%d)\n", k, k+1, g, k)
		}
	}
	fmt.Fprintf(&b, "RL: resistor (n%d, gnd) 1k\n", n)
	h := func(s complex128) complex128 {
		v := complex(1, 0)
		for k := 0; k < n; k++ {
			st := complex(g, 0) / (1 + s*complex(r*c, 0))
			if kinds[k%len(kinds)] == 'h' {
				st *= s * complex(r*c, 0)
			}
			v *= st
		}
		return v
	}
	return b.String(), h
}

func scaleCases() []scaleCase {
	rc := func(r, c float64) func(complex128) complex128 {
		return func(s complex128) complex128 { return 1 / (1 + s*complex(r*c, 0)) }
	}
	cs := []scaleCase{
		{name: "1e-15 Ω with 1e12 F", out: "x", h: rc(1e-15, 1e12), from: "1/(1 + sRC), common practice",
			src: "title \"rc\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, x) 1e-15\nC1: capacitor (x, gnd) 1e12\n"},
		{name: "10 TΩ with 1 fF", out: "x", h: rc(1e13, 1e-15), from: "1/(1 + sRC), common practice",
			src: "title \"rc\"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, x) 1e13\nC1: capacitor (x, gnd) 1e-15\n"},
	}
	for _, c := range []struct {
		n     int
		kinds string
		g     float64
		opamp bool
	}{
		{10, "h", 100, true}, // 8.8e19 at 10 kHz: once "mag inf"
		{20, "hl", 100, true},
		{20, "l", 100, true},
		{30, "hl", 10, false},
	} {
		src, h := cascadeText(c.n, c.kinds, 10e3, 10e-9, c.g, c.opamp)
		cs = append(cs, scaleCase{name: fmt.Sprintf("cascade %d×%s gain %g op-amp %v", c.n, c.kinds, c.g, c.opamp),
			src: src, out: fmt.Sprint("n", c.n), h: h, from: "product of the buffered stages' responses, common practice"})
	}
	return cs
}

// TestSweepDriveTransferAgreeAtScale: on extreme values and on cascades
// of total gain up to 10⁴⁰, sweep (mag and phase), drive (gain and
// shift) and transfer (its factored form) give the closed form to 1e-9
// relative at 10 Hz … 100 kHz, with exit 0, no point at a pole, and the
// circuit stable.
func TestSweepDriveTransferAgreeAtScale(t *testing.T) {
	freqs := []float64{10, 159.15494309189535, 1e3, 1e4, 1e5}
	for _, sc := range scaleCases() {
		t.Run(sc.name, func(t *testing.T) {
			at := make([]string, len(freqs))
			for i, f := range freqs {
				at[i] = fmt.Sprint(f)
			}
			r := runNodal(t, sc.src, "sweep", "-", "--out", sc.out, "--at", strings.Join(at, ","), "--format", "json")
			if r.code != 0 {
				t.Fatalf("sweep: exit %d, %s", r.code, r.stderr)
			}
			var sw struct {
				Points []struct {
					FreqHz   float64  `json:"freq_hz"`
					Mag      *float64 `json:"mag"`
					PhaseDeg *float64 `json:"phase_deg"`
				} `json:"points"`
				Stability string `json:"stability"`
			}
			if err := json.Unmarshal([]byte(r.stdout), &sw); err != nil {
				t.Fatal(err)
			}
			if sw.Stability != "stable" || len(sw.Points) != len(freqs) {
				t.Fatalf("sweep: stability %q, %d points; want stable, %d", sw.Stability, len(sw.Points), len(freqs))
			}
			for _, p := range sw.Points {
				want := sc.h(complex(0, 2*math.Pi*p.FreqHz))
				if p.Mag == nil || p.PhaseDeg == nil {
					t.Fatalf("sweep at %g Hz: no value, want %v (%s)", p.FreqHz, want, sc.from)
				}
				if got := cmplx.Rect(*p.Mag, *p.PhaseDeg*math.Pi/180); cmplx.Abs(got-want) > 1e-9*cmplx.Abs(want) {
					t.Errorf("sweep at %g Hz: %v, want %v (%s)", p.FreqHz, got, want, sc.from)
				}
			}

			r = runNodal(t, sc.src, "drive", "-", "--out", sc.out, "--signal", "sin(2*pi*10k*t)", "--format", "json")
			if r.code != 0 {
				t.Fatalf("drive: exit %d, %s", r.code, r.stderr)
			}
			var dr struct {
				Terms []struct {
					Gain     *float64 `json:"gain"`
					ShiftDeg *float64 `json:"shift_deg"`
				} `json:"terms"`
			}
			if err := json.Unmarshal([]byte(r.stdout), &dr); err != nil {
				t.Fatal(err)
			}
			want := sc.h(complex(0, 2*math.Pi*1e4))
			if len(dr.Terms) != 1 || dr.Terms[0].Gain == nil || dr.Terms[0].ShiftDeg == nil {
				t.Fatalf("drive: %s; want gain %g", r.stdout, cmplx.Abs(want))
			}
			if got := cmplx.Rect(*dr.Terms[0].Gain, *dr.Terms[0].ShiftDeg*math.Pi/180); cmplx.Abs(got-want) > 1e-9*cmplx.Abs(want) {
				t.Errorf("drive at 10 kHz: %v, want %v (%s)", got, want, sc.from)
			}

			r = runNodal(t, sc.src, "transfer", "-", "--out", sc.out, "--format", "json")
			if r.code != 0 {
				t.Fatalf("transfer: exit %d, %s", r.code, r.stderr)
			}
			var tf struct {
				Gain         float64 `json:"gain"`
				Poles, Zeros []struct {
					Re, Im       float64
					Multiplicity int
				}
				Stability string `json:"stability"`
			}
			if err := json.Unmarshal([]byte(r.stdout), &tf); err != nil {
				t.Fatal(err)
			}
			if tf.Stability != "stable" {
				t.Errorf("transfer: stability %q, want stable", tf.Stability)
			}
			for _, f := range freqs {
				s := complex(0, 2*math.Pi*f)
				got := complex(tf.Gain, 0)
				for _, z := range tf.Zeros {
					for k := 0; k < z.Multiplicity; k++ {
						got *= s - complex(z.Re, z.Im)
					}
				}
				for _, p := range tf.Poles {
					for k := 0; k < p.Multiplicity; k++ {
						got /= s - complex(p.Re, p.Im)
					}
				}
				if want := sc.h(s); cmplx.Abs(got-want) > 1e-9*cmplx.Abs(want) {
					t.Errorf("transfer at %g Hz: %v, want %v (%s)", f, got, want, sc.from)
				}
			}
		})
	}
}

// TestElectrometerNotMarginal: 2 TΩ into 1 pF (one natural frequency,
// s = −1/RC = −0.5 rad/s, common practice) is stable: no warning that it
// is marginally stable, whatever the output.
func TestElectrometerNotMarginal(t *testing.T) {
	src := "title \"electrometer\"\nV1: voltage source (in, gnd) 1\nRt: resistor (in, x) 2T\nC1: capacitor (x, gnd) 1p\n"
	for _, out := range []string{"i(Rt)", "x"} {
		r := runNodal(t, src, "transfer", "-", "--out", out)
		if r.code != 0 || strings.Contains(r.stderr, "marginal") || strings.Contains(r.stderr, "warning") {
			t.Errorf("--out %s: exit %d, stderr %q; want exit 0 and no stability warning", out, r.code, r.stderr)
		}
	}
}
