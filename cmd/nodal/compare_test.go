package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const measuredFile = "../../testdata/compare/woofer_measured.csv"

// The deviation testdata/compare/gen_measured.py adds to the exact woofer
// response H(s) = 1/(1 + s/ωc)² (closed form of two buffered RC sections):
// compare must recover it point by point.
func measuredDevDB(f float64) float64 {
	return 0.5 + 1.5*math.Exp(-math.Pow(math.Log10(f/3000), 2)/0.02)
}

func measuredDevDeg(f float64) float64 {
	return 4 * math.Exp(-math.Pow(math.Log10(f/1000), 2)/0.05)
}

func TestCompareMeasuredRecoversDeviation(t *testing.T) {
	r := runNodal(t, "", "compare", crossoverFile, "--measured", measuredFile, "--out", "woofer", "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var d compareJSON
	if err := json.Unmarshal([]byte(r.stdout), &d); err != nil {
		t.Fatal(err)
	}
	if len(d.Points) != 41 {
		t.Fatalf("%d points, want the 41 measured frequencies", len(d.Points))
	}
	maxDB, atDB, sum := 0.0, 0.0, 0.0
	for _, p := range d.Points {
		wdb, wph := measuredDevDB(p.FreqHz), measuredDevDeg(p.FreqHz)
		if p.DiffDB == nil || math.Abs(*p.DiffDB-wdb) > 1e-6 {
			t.Errorf("%g Hz: diff %v dB, want %g", p.FreqHz, p.DiffDB, wdb)
		}
		if p.DiffPhaseDeg == nil || math.Abs(*p.DiffPhaseDeg-wph) > 1e-6 {
			t.Errorf("%g Hz: diff %v°, want %g", p.FreqHz, p.DiffPhaseDeg, wph)
		}
		if wdb > maxDB {
			maxDB, atDB = wdb, p.FreqHz
		}
		sum += wdb * wdb
	}
	rms := math.Sqrt(sum / float64(len(d.Points)))
	if d.MaxDiffDB == nil || math.Abs(*d.MaxDiffDB-maxDB) > 1e-6 || *d.MaxDiffDBFreqHz != atDB {
		t.Errorf("largest difference %v at %v, want %g at %g", d.MaxDiffDB, d.MaxDiffDBFreqHz, maxDB, atDB)
	}
	if d.RMSDiffDB == nil || math.Abs(*d.RMSDiffDB-rms) > 1e-6 {
		t.Errorf("RMS %v, want %g", d.RMSDiffDB, rms)
	}
}

// Two circuits: the crossover against itself with R 10 % higher moves the
// woofer corner down by 1/1.1, so B − A at f is
// 40·log10|1 + jf/fc| − 40·log10|1 + j·1.1·f/fc| (closed form).
func TestCompareTwoCircuits(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(crossoverFile)
	if err != nil {
		t.Fatal(err)
	}
	b := writeTemp(t, dir, "b.nodal", strings.Replace(string(src), "let R = 10k ±1%", "let R = 11k ±1%", 1))
	r := runNodal(t, "", "compare", crossoverFile, b, "--out", "woofer", "--at", "500,2.5k,8k", "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var d compareJSON
	if err := json.Unmarshal([]byte(r.stdout), &d); err != nil {
		t.Fatal(err)
	}
	// C = 1/(2π·fc·R) is computed from the let, so it scales with R too:
	// R·C, and the corner, stay the same in B. The difference is zero.
	for _, p := range d.Points {
		if p.DiffDB == nil || math.Abs(*p.DiffDB) > 1e-9 {
			t.Errorf("%g Hz: diff %v, want 0 (R·C unchanged)", p.FreqHz, p.DiffDB)
		}
	}
	b = writeTemp(t, dir, "b2.nodal", strings.Replace(string(src), "let C = 1/(2*pi*fc*R)", "let C = 1.1/(2*pi*fc*R)", 1))
	r = runNodal(t, "", "compare", crossoverFile, b, "--out", "woofer", "--at", "500,2.5k,8k", "--format", "json")
	if err := json.Unmarshal([]byte(r.stdout), &d); err != nil {
		t.Fatalf("%v: %s", err, r.stderr)
	}
	for _, p := range d.Points {
		x := p.FreqHz / 2500
		want := 20*math.Log10(1+x*x) - 20*math.Log10(1+1.21*x*x)
		if p.DiffDB == nil || math.Abs(*p.DiffDB-want) > 1e-9 {
			t.Errorf("%g Hz: diff %v dB, want %g", p.FreqHz, p.DiffDB, want)
		}
	}
}

// --plot draws both responses with the difference below; a usage mistake
// is exit 2.
func TestComparePlotAndUsage(t *testing.T) {
	svg := filepath.Join(t.TempDir(), "cmp.svg")
	r := runNodal(t, "", "compare", crossoverFile, "--measured", measuredFile, "--out", "woofer", "--plot", svg)
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	b, err := os.ReadFile(svg)
	if err != nil || !strings.Contains(string(b), "difference (dB)") || !strings.Contains(string(b), "B − A") {
		t.Errorf("plot lacks the difference panel: %v", err)
	}
	for _, args := range [][]string{
		{"compare", crossoverFile},
		{"compare", crossoverFile, crossoverFile, "--measured", measuredFile},
	} {
		if r := runNodal(t, "", args...); r.code != 2 {
			t.Errorf("%v: exit %d", args, r.code)
		}
	}
}

func TestReadMeasuredErrors(t *testing.T) {
	tests := []struct{ name, src, want string }{
		{"header", "f,mag\n1,2\n", `x.csv:1:1: the header lacks freq_hz and mag_db (columns found: "f", "mag")`},
		{"text", "freq_hz,mag_db\n100,0\n200,abc\n", `x.csv:3:5: mag_db "abc" is not a number`},
		{"nan", "freq_hz,mag_db\n100,NaN\n200,0\n", "x.csv:2:5: mag_db is NaN"},
		{"order", "freq_hz,mag_db\n100,0\n100,0\n", "x.csv:3:1: frequency 100 Hz does not increase"},
		{"zero", "freq_hz,mag_db\n0,0\n100,0\n", "x.csv:2:1: frequency 0 Hz is not positive"},
		{"short", "freq_hz,mag_db\n100\n", "x.csv:2:1: the row has 1 cells and no mag_db"},
		{"quote", "freq_hz,mag_db\n100,\"0\n", `x.csv:3:1: extraneous or missing "`},
		{"one", "freq_hz,mag_db\n100,0\n", "1 data row(s)"},
		{"empty", "", "empty file"},
	}
	for _, tc := range tests {
		_, err := readMeasured("x.csv", []byte(tc.src))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want %q", tc.name, err, tc.want)
		}
	}
	m, err := readMeasured("x.csv", []byte("\uFEFFFREQ_HZ, Mag_dB\n1k,-3\n2k, -6dB\n"))
	if err != nil || len(m.FreqHz) != 2 || m.FreqHz[1] != 2000 || m.MagDB[1] != -6 || m.PhaseDeg != nil {
		t.Errorf("case-insensitive header: %+v, %v", m, err)
	}
	r := runNodal(t, "", "compare", crossoverFile, "--measured", filepath.Join(t.TempDir(), "none.csv"))
	if r.code != 2 {
		t.Errorf("missing file: exit %d", r.code)
	}
}

// FuzzReadMeasured checks that any input is read or refused with a
// positioned message, never a panic, and that what is read keeps the
// invariants: increasing positive frequencies, finite values.
func FuzzReadMeasured(f *testing.F) {
	f.Add([]byte("freq_hz,mag_db,phase_deg\n100,0,-1\n1k,-3,-45\n"))
	f.Add([]byte("freq_hz,mag_db\n100,x\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		m, err := readMeasured("fuzz.csv", src)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.csv") {
				t.Fatalf("error not named by the file: %v", err)
			}
			return
		}
		for i, fr := range m.FreqHz {
			if !(fr > 0) || math.IsInf(fr, 0) || i > 0 && fr <= m.FreqHz[i-1] || math.IsNaN(m.MagDB[i]) || math.IsInf(m.MagDB[i], 0) {
				t.Fatalf("point %d: %g Hz, %g dB", i, fr, m.MagDB[i])
			}
		}
	})
}

// TestCompareDefaultResponseNamed: with no --out the file's first response
// is compared, and the header names it (it was blank).
func TestCompareDefaultResponseNamed(t *testing.T) {
	dir := t.TempDir()
	f := writeTemp(t, dir, "rc.nodal", "Vin: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1u\nresponse vout = v(out)\n")
	m := writeTemp(t, dir, "m.csv", "freq_hz,mag_db\n10,0\n100,-0.1\n1000,-3\n")
	res := runNodal(t, "", "compare", f, "--measured", m)
	if res.code != 0 {
		t.Fatalf("exit %d: %s", res.code, res.stderr)
	}
	first, _, _ := strings.Cut(res.stdout, "\n")
	if !strings.HasSuffix(first, ": vout / Vin, differences B − A") {
		t.Errorf("header %q does not name the response vout", first)
	}
}
