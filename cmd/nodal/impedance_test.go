package main

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/cmd/nodal/notation"
)

// impedanceDoc is the part of nodal impedance's JSON the tests read.
type impedanceDoc struct {
	Unit   string `json:"unit"`
	Points []struct {
		FreqHz   float64  `json:"freq_hz"`
		MagOhm   *float64 `json:"mag_ohm"`
		PhaseDeg *float64 `json:"phase_deg"`
	} `json:"points"`
	Min, Max *struct {
		FreqHz float64 `json:"freq_hz"`
		MagOhm float64 `json:"mag_ohm"`
	}
}

// The vibration logger's test oscillator drives a series R-L-C (R = 10 Ω,
// L = 1 mH, C = 1 µF): at the port of the source Z = R + sL + 1/(sC), at
// node c (across C, the source shorted) Z = (R + sL) ∥ 1/(sC). Series and
// parallel resonances: the series one at f0 = 1/(2π√(LC)) ≈ 5.0329 kHz
// with |Z| = R, the parallel one where the phase of (R + sL) ∥ 1/(sC) is 0,
// ω² = 1/(LC) − (R/L)², with |Z| = L/(RC) = 100 Ω (common practice: the
// series and parallel resonant circuits). The extremes of |Z| are refined
// between the rows of a coarse --at table: the series minimum is R at f0,
// but the parallel maximum lies off the phase zero, 104.891766 Ω at
// 5021.4459 Hz (scipy's bounded Brent maximiser of |(R + sL) ∥ 1/(sC)|,
// xatol 1e-9 Hz); it was once reported as the resonance's 100 Ω.
func TestImpedanceResonances(t *testing.T) {
	const r, l, c = 10.0, 1e-3, 1e-6
	circuit := "title \"test oscillator tank\"\nVs: voltage source (in, gnd) 1\nR1: resistor (in, m) 10\nL1: inductor (m, c) 1mH\nC1: capacitor (c, gnd) 1uF\n"
	dir := t.TempDir()
	file := filepath.Join(dir, "tank.nodal")
	if err := os.WriteFile(file, []byte(circuit), 0o644); err != nil {
		t.Fatal(err)
	}
	f0 := 1 / (2 * math.Pi * math.Sqrt(l*c))
	wp := math.Sqrt(1/(l*c) - (r/l)*(r/l))
	zPar := func(w float64) complex128 {
		s := complex(0, w)
		return 1 / (1/(complex(r, 0)+s*complex(l, 0)) + s*complex(c, 0))
	}
	for _, tc := range []struct {
		name   string
		args   []string
		row    string
		fHz    float64
		magOhm float64
		extHz  float64 // where the extreme of |Z| is, and its value
		extOhm float64
	}{
		{"series at the port", []string{"--port", "Vs"}, "series resonance", f0, r, f0, r},
		{"parallel at a node", []string{"--node", "c"}, "parallel resonance", wp / (2 * math.Pi), cmplx.Abs(zPar(wp)), 5021.44593959919, 104.89176631689749},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res := runNodal(t, "", append([]string{"impedance", file}, tc.args...)...)
			if res.code != 0 {
				t.Fatalf("code %d: %s", res.code, res.stderr)
			}
			var line string
			for _, ln := range strings.Split(res.stdout, "\n") {
				if strings.Contains(ln, tc.row) {
					line = ln
				}
			}
			want := notation.Eng(tc.fHz, "Hz") + ", |Z| " + notation.Eng(tc.magOhm, "Ω")
			if line == "" || !strings.Contains(line, want) {
				t.Errorf("no %q row %q in:\n%s", tc.row, want, res.stdout)
			}
			js := runNodal(t, "", append([]string{"impedance", file, "--format", "json", "--at", "1k,2k,10k,20k"}, tc.args...)...)
			var doc impedanceDoc
			if err := json.Unmarshal([]byte(js.stdout), &doc); err != nil || js.code != 0 {
				t.Fatalf("json: code %d %v\n%s", js.code, err, js.stderr)
			}
			if doc.Unit != "Ω" || len(doc.Points) != 4 || doc.Min == nil || doc.Max == nil {
				t.Fatalf("doc %+v", doc)
			}
			ext := doc.Min
			if tc.row == "parallel resonance" {
				ext = doc.Max
			}
			if math.Abs(ext.MagOhm-tc.extOhm) > 1e-9*tc.extOhm || math.Abs(ext.FreqHz-tc.extHz) > 1e-6*tc.extHz {
				t.Errorf("extreme %+v; want %.9g Ω at %.9g Hz", *ext, tc.extOhm, tc.extHz)
			}
		})
	}
}

// Refusals of nodal impedance: exit 2 with a message that says what to do.
func TestImpedanceErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"no probe", []string{"impedance", rcFile}, "give --port SOURCE or --node NODE"},
		{"both", []string{"impedance", rcFile, "--port", "Vs", "--node", "out"}, "give one of --port or --node"},
		{"ref with port", []string{"impedance", rcFile, "--port", "Vs", "--ref", "in"}, "--ref goes with --node"},
		{"keep without symbolic", []string{"impedance", rcFile, "--node", "out", "--keep", "R1"}, "--symbolic"},
		{"plot with symbolic", []string{"impedance", rcFile, "--node", "out", "--symbolic", "--plot", "z.svg"}, "--plot"},
		{"unknown input", []string{"time", rcFile, "--out", "out", "--input", "ramp"}, "--input"},
	} {
		r := runNodal(t, "", tc.args...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%s: code %d stderr %q; want exit 2 mentioning %q", tc.name, r.code, r.stderr, tc.want)
		}
	}
}
