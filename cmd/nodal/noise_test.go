package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"nodal/analysis/noise"
)

const tiaFile = "../../testdata/examples/photodiode_tia.nodal"

func TestParseTemperature(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"300K", 300, true}, {"300", 0, false}, {"85", 0, false}, {" 77 K", 77, true}, {"85degC", 358.15, true},
		{"-40°C", 233.15, true}, {"0K", 0, false}, {"-300degC", 0, false}, {"hot", 0, false}, {"300F", 0, false},
	} {
		got, err := parseTemperature(tc.in)
		if tc.in == "85" && (err == nil || !strings.Contains(err.Error(), "85K") || !strings.Contains(err.Error(), "85degC")) {
			t.Errorf("parseTemperature(85): %v; want an error offering 85K and 85degC", err)
		}
		if (err == nil) != tc.ok || (tc.ok && math.Abs(got-tc.want) > 1e-9) {
			t.Errorf("parseTemperature(%q) = %v, %v; want %v ok=%v", tc.in, got, err, tc.want, tc.ok)
		}
	}
}

// TestNoiseRCCommand: the RC low-pass of the command tests, integrated far
// beyond its corner, gives √(kT/C) (Johnson 1928, Nyquist 1928) in the
// JSON, with the temperature and the units in the keys.
func TestNoiseRCCommand(t *testing.T) {
	const cF = 15.9155e-9
	r := runNodal(t, "", "noise", rcFile, "--out", "out", "--from", "10mHz", "--to", "10MHz", "--per-decade", "1",
		"--temp", "400K", "--signal-rms", "1V", "--format", "json")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		TempK  float64          `json:"temperature_k"`
		Points []map[string]any `json:"points"`
		Band   struct {
			OutRMS  float64          `json:"out_rms_v"`
			InRMS   float64          `json:"in_rms_v"`
			ENBW    float64          `json:"enbw_hz"`
			SNR     float64          `json:"snr_db"`
			Contrib []map[string]any `json:"contributions"`
		} `json:"band"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(noise.BoltzmannJPerK * 400 / cF)
	if doc.TempK != 400 || math.Abs(doc.Band.OutRMS-want)/want > 1e-4 {
		t.Errorf("temperature %v, out_rms_v %.6g; want 400, √(kT/C) = %.6g", doc.TempK, doc.Band.OutRMS, want)
	}
	if math.Abs(doc.Band.ENBW-math.Pi/2*rcCornerHz)/doc.Band.ENBW > 1e-3 {
		t.Errorf("enbw_hz %v; want (π/2)·fc = %v", doc.Band.ENBW, math.Pi/2*rcCornerHz)
	}
	if snr := -20 * math.Log10(want); math.Abs(doc.Band.SNR-snr) > 1e-3 {
		t.Errorf("snr_db %v; want %v", doc.Band.SNR, snr)
	}
	if len(doc.Points) != 10 || doc.Points[0]["out_v_per_rthz"] == nil || doc.Points[0]["in_v_per_rthz"] == nil {
		t.Errorf("points %v", doc.Points)
	}
	if len(doc.Band.Contrib) != 1 || doc.Band.Contrib[0]["source"] != "R1" || doc.Band.Contrib[0]["rms_v"] == nil {
		t.Errorf("contributions %v", doc.Band.Contrib)
	}
}

// TestNoiseCommandTable: the TIA example, the current output labelled in
// A/√Hz, the opamp rows (no U1.in+: that input is on gnd), the plot
// written, help with the example.
func TestNoiseCommandTable(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "n.svg")
	r := runNodal(t, "", "noise", tiaFile, "--out", "out", "--per-decade", "2", "--band", "100Hz..100kHz", "--plot", svg)
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	for _, s := range []string{"temperature 300 K", "in_a_per_rthz", "out_rms_v", "in_rms_a", "U1.en", "U1.in-", "enbw_hz", "top_source"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("table lacks %q:\n%s", s, r.stdout)
		}
	}
	b, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	validSVG(t, b)
	r = runNodal(t, "", "noise", tiaFile, "--out", "i(Ro)", "--at", "1k,10k", "--format", "json")
	if r.code != 0 || !strings.Contains(r.stdout, `"out_a_per_rthz"`) || !strings.Contains(r.stdout, `"output_unit": "A"`) ||
		!strings.Contains(r.stdout, `"rms_a"`) || strings.Contains(r.stdout, "_v_per") {
		t.Errorf("current output not labelled in A: code %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	r = runNodal(t, "", "noise", "--help")
	if !strings.Contains(r.stdout, "photodiode_tia.nodal") || !strings.Contains(r.stdout, "adaptive Simpson") {
		t.Errorf("help lacks the worked example or the method:\n%s", r.stdout)
	}
}

func TestNoiseCommandErrors(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--temp=-5K"}, "absolute zero"},
		{[]string{"--band", "20k..20"}, "0 < F1 < F2"},
		{[]string{"--band", "20Hz"}, "F1..F2"},
		{[]string{"--at", "1k", "--signal-rms", "1V"}, "needs a band"},
		{[]string{"--signal-rms", "1A"}, "unit A where V"},
		{[]string{"--linear", "--from", "0", "--to", "1k"}, "above 0 Hz"},
		{[]string{"--in", "V9"}, "V9"},
	} {
		r := runNodal(t, "", append([]string{"noise", rcFile, "--out", "out"}, tc.args...)...)
		if r.code != 2 || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%v: code %d, stderr %q; want 2 and %q", tc.args, r.code, r.stderr, tc.want)
		}
	}
}

// TestNoiseRequirementCommands: a noise requirement is judged by verify
// (passing and failing limits) and gives the report its noise section.
func TestNoiseRequirementCommands(t *testing.T) {
	src, err := os.ReadFile(tiaFile)
	if err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "verify", tiaFile, "--out", "out", "--runs", "50")
	if r.code != 0 || !strings.Contains(r.stdout, "noise_rms@100Hz..100kHz below 8uV") || !strings.Contains(r.stdout, "6.2") {
		t.Errorf("verify: code %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	failing := filepath.Join(t.TempDir(), "tia.nodal")
	if err := os.WriteFile(failing, []byte(strings.Replace(string(src), "below 8uV", "below 5uV", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	if r := runNodal(t, "", "verify", failing, "--out", "out", "--runs", "50"); r.code != 1 {
		t.Errorf("verify with a 5 µV limit: code %d; want 1\n%s%s", r.code, r.stdout, r.stderr)
	}
	r = runNodal(t, "", "report", tiaFile, "--format", "text", "--runs", "50")
	if r.code != 0 || !strings.Contains(r.stdout, "Noise\n-----") || !strings.Contains(r.stdout, "equivalent noise bandwidth") {
		t.Errorf("report: code %d, no noise section\n%s", r.code, r.stderr)
	}
	r = runNodal(t, "", "report", rcFile, "--format", "text", "--runs", "50")
	if r.code != 0 || strings.Contains(r.stdout, "Noise\n-----") {
		t.Errorf("report without a noise requirement: code %d, noise section present", r.code)
	}
}

// FuzzNoiseFlags: --temp gives a finite temperature above 0 K or an
// error, --band a finite band 0 < F1 < F2 or an error; never a panic.
func FuzzNoiseFlags(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		if k, err := parseTemperature(s); err == nil && !(k > 0 && !math.IsInf(k, 0)) {
			t.Fatalf("--temp %q: %v K", s, k)
		}
		if lo, hi, err := parseBand(s); err == nil && !(lo > 0 && hi > lo && !math.IsInf(hi, 0)) {
			t.Fatalf("--band %q: %v..%v", s, lo, hi)
		}
	})
}

// TestPartsShowNoise: nodal parts shows the noise model it read.
func TestPartsShowNoise(t *testing.T) {
	r := runNodal(t, "", "parts", "../../testdata/reference/noise/photodiode_tia_noise.nodal")
	for _, s := range []string{"en=9 nV/√Hz", "in=20 fA/√Hz", "fen=300 Hz", "fin=2 kHz", "1 MΩ noiseless"} {
		if r.code != 0 || !strings.Contains(r.stdout, s) {
			t.Errorf("parts lacks %q (code %d):\n%s", s, r.code, r.stdout)
		}
	}
	r = runNodal(t, "", "parts", "../../testdata/reference/noise/photodiode_tia_noise.nodal", "--format", "json")
	if !strings.Contains(r.stdout, `"en_v_per_rthz"`) || !strings.Contains(r.stdout, `"noiseless": true`) {
		t.Errorf("parts JSON lacks the noise model:\n%s", r.stdout)
	}
}

// dividerNoiseFile is a 10k/10k divider with `require noise@1kHz below
// 9.5nV`; its tap density is √(4kT·R1R2/(R1+R2)) (Thévenin; common
// practice), which scales as √T (Johnson 1928, Nyquist 1928, Physical
// Review 32): 9.10 nV/√Hz at 300 K passes, 9.94 nV/√Hz at 85 °C fails.
const dividerNoiseFile = "testdata/noise_divider.nodal"

// TestNoiseMetricsTemperature: verify, tolerance and report take the
// noise metrics at --temp and say so.
func TestNoiseMetricsTemperature(t *testing.T) {
	const boltzmann = 1.380649e-23 // J/K, exact since the 2019 SI
	for _, tc := range []struct {
		temp  string
		k     float64
		code  int
		shown string
	}{
		{"300K", 300, 0, "noise metrics at 300 K (26.85 °C)"},
		{"85degC", 358.15, 1, "noise metrics at 358.15 K (85 °C)"},
	} {
		r := runNodal(t, "", "verify", dividerNoiseFile, "--runs", "20", "--temp", tc.temp, "--format", "json")
		if r.code != tc.code {
			t.Errorf("verify --temp %s: code %d, want %d\n%s%s", tc.temp, r.code, tc.code, r.stdout, r.stderr)
		}
		var doc struct {
			Requirements []struct {
				Requirement string
				Nominal     *float64
			}
			Notes []string
		}
		if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
			t.Fatalf("verify --temp %s: %v\n%s", tc.temp, err, r.stdout)
		}
		if len(doc.Requirements) != 2 || doc.Requirements[1].Nominal == nil {
			t.Fatalf("verify --temp %s: requirements %+v", tc.temp, doc.Requirements)
		}
		want := math.Sqrt(4 * boltzmann * tc.k * 10e3 * 10e3 / 20e3)
		if got := *doc.Requirements[1].Nominal; math.Abs(got-want) > 1e-6*want {
			t.Errorf("verify --temp %s: noise@1kHz %.6g V/√Hz, want %.6g", tc.temp, got, want)
		}
		if !slices.Contains(doc.Notes, tc.shown) {
			t.Errorf("verify --temp %s: notes %q lack %q", tc.temp, doc.Notes, tc.shown)
		}
		r = runNodal(t, "", "tolerance", dividerNoiseFile, "--metric", "noise@1kHz", "--runs", "20", "--temp", tc.temp)
		if r.code != 0 || !strings.Contains(r.stdout, tc.shown) {
			t.Errorf("tolerance --temp %s: code %d, no %q\n%s%s", tc.temp, r.code, tc.shown, r.stdout, r.stderr)
		}
		r = runNodal(t, "", "report", dividerNoiseFile, "--format", "text", "--runs", "20", "--temp", tc.temp)
		if r.code != 0 || !strings.Contains(r.stdout, "Noise\n-----") || !strings.Contains(r.stdout, strconv.FormatFloat(tc.k, 'g', -1, 64)+" K") {
			t.Errorf("report --temp %s: code %d, no noise section at %g K\n%s%s", tc.temp, r.code, tc.k, r.stdout, r.stderr)
		}
	}
	if r := runNodal(t, "", "verify", dividerNoiseFile, "--temp=-5K"); r.code != exitInput || !strings.Contains(r.stderr, "--temp") {
		t.Errorf("verify --temp=-5K: code %d, stderr %q; want exit 2 naming --temp", r.code, r.stderr)
	}
}
