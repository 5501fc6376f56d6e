package main

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// result is what one run of the command gave.
type result struct {
	code           int
	stdout, stderr string
}

// runNodal runs the command in-process with the given standard input.
func runNodal(t *testing.T, stdin string, args ...string) result {
	t.Helper()
	var out, errb bytes.Buffer
	e := &env{ctx: context.Background(), stdin: strings.NewReader(stdin), stdout: &out, stderr: &errb}
	code := run(e, args)
	return result{code, out.String(), errb.String()}
}

// rcFile is the first-order RC low-pass of the command tests: R = 10 kΩ,
// C = 15.9155 nF, fc = 1/(2πRC) = 1000.0 Hz (common practice).
const rcFile = "testdata/rc_lowpass.nodal"

// rcCornerHz is 1/(2πRC) for rcFile.
var rcCornerHz = 1 / (2 * math.Pi * 10e3 * 15.9155e-9)

func TestVersionAndHelp(t *testing.T) {
	r := runNodal(t, "", "--version")
	if r.code != 0 || !strings.Contains(r.stdout, "nodal "+version) {
		t.Errorf("--version: code %d, stdout %q", r.code, r.stdout)
	}
	// Every command's --help is run, with its examples, by
	// TestHelpExamplesRun. Bare nodal prints the usage and exits 2.
	r = runNodal(t, "")
	if r.code != exitInput || !strings.Contains(r.stdout+r.stderr, "Usage: nodal <command>") || !strings.Contains(r.stdout+r.stderr, "transfer") {
		t.Errorf("bare nodal: code %d, stdout %q, stderr %q; want the usage and exit 2", r.code, r.stdout, r.stderr)
	}
}

func TestUsageErrorsExitTwo(t *testing.T) {
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"unknown command", []string{"frobnicate"}, `unknown command "frobnicate"`},
		{"old tf", []string{"tf", rcFile, "--out", "out"}, `unknown command "tf"; the nearest is "transfer"`},
		{"old step", []string{"step", rcFile, "--out", "out"}, `unknown command "step"; it is a value of "time --input": nodal time FILE --input step (commands: parts, equations, sweep, transfer, impedance, loop, check, drive, time,`},
		{"old impulse", []string{"impulse", rcFile, "--out", "out"}, `unknown command "impulse"; it is a value of "time --input": nodal time FILE --input impulse`},
		{"unknown command near one", []string{"sweeep", rcFile}, `unknown command "sweeep"; the nearest is "sweep"`},
		{"a value of many commands", []string{"json", rcFile}, `unknown command "json"; the nearest is`},
		{"old zin", []string{"transfer", rcFile, "--zin", "Vs"}, "unknown flag --zin"},
		{"old zout", []string{"transfer", rcFile, "--zout", "out"}, "unknown flag --zout"},
		{"misspelt voltage source", []string{"parts", "-"}, `unknown element kind or block "voltsource" (the nearest is "voltage source"`},
		{"missing file", []string{"parts", "testdata/no-such.nodal"}, "no-such.nodal"},
		{"unknown node lists nodes", []string{"sweep", rcFile, "--out", "nowhere"}, `(nodes: "gnd", "in", "out")`},
		{"unknown source lists sources", []string{"sweep", rcFile, "--out", "out", "--in", "V9"}, "Vs"},
		{"bad frequency", []string{"sweep", rcFile, "--out", "out", "--from", "ten"}, "--from"},
		{"bad signal", []string{"drive", rcFile, "--out", "out", "--signal", "sin(2*pi*t +)"}, "--signal"},
	}
	for _, tc := range cases {
		r := runNodal(t, "Vs: voltsource (in, gnd) 1\nR1: resistor (in, gnd) 1k\n", tc.args...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%s: code %d, stderr %q; want exit 2 mentioning %q", tc.name, r.code, r.stderr, tc.want)
		}
		if strings.Contains(r.stderr, "goroutine") || strings.Contains(r.stderr, "panic") {
			t.Errorf("%s: stack trace in %q", tc.name, r.stderr)
		}
	}
}

func TestParseErrorNamesFileLineColumn(t *testing.T) {
	src := "Vs: voltage source (in, gnd) 1\nR1: resistr (in, out) 1k\n"
	r := runNodal(t, src, "parts", "-")
	if r.code != exitInput || !strings.Contains(r.stderr, "<stdin>:2:5") || !strings.Contains(r.stderr, "resistor") {
		t.Errorf("code %d, stderr %q; want <stdin>:2:5 and a did-you-mean", r.code, r.stderr)
	}
}

func TestPartsJSON(t *testing.T) {
	r := runNodal(t, "", "parts", rcFile, "--format", "json")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Title string `json:"title"`
		Parts []struct {
			Name  string   `json:"name"`
			Kind  string   `json:"kind"`
			Nodes []string `json:"nodes"`
			Value float64  `json:"value"`
			Tol   float64  `json:"tol"`
			Dist  string   `json:"dist"`
		} `json:"parts"`
		Nodes []string `json:"nodes"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Title != "bridge RC filter" || len(doc.Parts) != 3 || doc.Parts[1].Name != "R1" || doc.Parts[1].Value != 10e3 ||
		doc.Parts[1].Tol != 0.01 || doc.Parts[1].Dist != "uniform" || strings.Join(doc.Nodes, ",") != "gnd,in,out" {
		t.Errorf("unexpected parts document: %+v", doc)
	}
}

// The RC low-pass at its corner: −3.0103 dB and −45°, and one decade above:
// |H| = 1/√101 and −84.29° (common practice).
func TestSweepRCJSON(t *testing.T) {
	at := strings.Join([]string{ftoa(rcCornerHz), ftoa(10 * rcCornerHz)}, ",")
	r := runNodal(t, "", "sweep", rcFile, "--out", "out", "--at", at, "--format", "json")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc sweepJSON
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Input != "Vs" || doc.Output != "out" || len(doc.Points) != 2 {
		t.Fatalf("document %+v", doc)
	}
	p0, p1 := doc.Points[0], doc.Points[1]
	if math.Abs(*p0.MagDB+3.0103) > 1e-4 || math.Abs(p0.PhaseDeg+45) > 1e-6 {
		t.Errorf("at fc: %g dB %g°, want −3.0103 dB −45°", *p0.MagDB, p0.PhaseDeg)
	}
	if math.Abs(p1.Mag-1/math.Sqrt(101)) > 1e-9 || math.Abs(p1.PhaseDeg+84.2894) > 1e-3 {
		t.Errorf("at 10 fc: %g %g°, want 0.0995 −84.29°", p1.Mag, p1.PhaseDeg)
	}
	// Group delay of a first-order low-pass: RC/(1 + (ωRC)²) (closed form:
	// −d/dω of the phase −atan ωRC; common practice).
	rc := 10e3 * 15.9155e-9
	if want := rc / 2; math.Abs(*p0.GroupDelayS-want) > 1e-9*want {
		t.Errorf("group delay at fc %g, want RC/2 = %g", *p0.GroupDelayS, want)
	}
}

// ftoa writes v exactly, in a form the value parser reads.
func ftoa(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

func TestSweepCSVAndAtomicFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "rc.csv")
	r := runNodal(t, "", "sweep", rcFile, "--out", "out", "--from", "10Hz", "--to", "100kHz", "--per-decade", "5", "--format", "csv", "-o", path)
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if lines[0] != "freq_hz,mag,mag_db,phase_deg,group_delay_s" || len(lines) != 1+21 {
		t.Errorf("CSV header %q, %d lines", lines[0], len(lines))
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("temporary files left behind: %v", entries)
	}
	// Never over the input file.
	in := filepath.Join(dir, "in.nodal")
	src, _ := os.ReadFile(rcFile)
	os.WriteFile(in, src, 0o644)
	r = runNodal(t, "", "sweep", in, "--out", "out", "-o", in)
	if r.code != exitInput || !strings.Contains(r.stderr, "refusing") {
		t.Errorf("overwriting the input: code %d, %q", r.code, r.stderr)
	}
	if after, _ := os.ReadFile(in); !bytes.Equal(after, src) {
		t.Error("the input file was changed")
	}
}

// H(s) = 1/(1 + sRC): one pole at −1/RC, D normalised to 1 + RC·s
// (common practice).
func TestTransferJSON(t *testing.T) {
	r := runNodal(t, "", "transfer", rcFile, "--out", "out", "--format", "json")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Num    []float64 `json:"num"`
		Den    []float64 `json:"den"`
		Poles  []complexJSON
		GainDC float64   `json:"gain_dc"`
		F3dB   []float64 `json:"f3db_hz"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	rc := 10e3 * 15.9155e-9
	if len(doc.Den) != 2 || doc.Den[0] != 1 || math.Abs(doc.Den[1]-rc) > 1e-12*rc || len(doc.Num) != 1 || math.Abs(doc.Num[0]-1) > 1e-12 {
		t.Errorf("num %v den %v, want [1] and [1 %g]", doc.Num, doc.Den, rc)
	}
	if len(doc.Poles) != 1 || math.Abs(doc.Poles[0].Re+1/rc) > 1e-9/rc || doc.Poles[0].Im != 0 {
		t.Errorf("poles %v, want −1/RC = %g", doc.Poles, -1/rc)
	}
	if math.Abs(doc.GainDC-1) > 1e-12 || len(doc.F3dB) != 1 || math.Abs(doc.F3dB[0]-rcCornerHz) > 1e-6*rcCornerHz {
		t.Errorf("gain_dc %g, f3db %v; want 1 and %g", doc.GainDC, doc.F3dB, rcCornerHz)
	}
}

func TestCheckVerdictExitStatus(t *testing.T) {
	cases := []struct {
		name string
		args []string
		code int
	}{
		{"right ODE", []string{"--ode", "R1*C1*y' + y = u"}, 0},
		{"scaled ODE", []string{"--ode", "3*R1*C1*dy/dt + 3*y = 3*u"}, 0},
		{"right TF", []string{"--tf", "1/(1 + s*R1*C1)"}, 0},
		{"missing factor 2", []string{"--ode", "2*R1*C1*y' + y = u"}, exitVerdict},
		{"wrong order", []string{"--ode", "R1*C1*y'' + y = u"}, exitVerdict},
	}
	for _, tc := range cases {
		r := runNodal(t, "", append([]string{"check", rcFile, "--out", "out"}, tc.args...)...)
		if r.code != tc.code {
			t.Errorf("%s: code %d, want %d\n%s%s", tc.name, r.code, tc.code, r.stdout, r.stderr)
		}
		want := "verdict: agrees"
		if tc.code != 0 {
			want = "verdict: differs"
		}
		if !strings.Contains(r.stdout, want) {
			t.Errorf("%s: no %q in output", tc.name, want)
		}
	}
}

// A first-order low-pass driven one decade above its corner: 0.0995 and
// −84.29° (common practice); the constant passes with H(0) = 1.
func TestDriveJSON(t *testing.T) {
	r := runNodal(t, "", "drive", rcFile, "--out", "out", "--signal", "0.8*sin(2*pi*"+ftoa(10*rcCornerHz)+"*t) + 2", "--format", "json")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Terms []struct {
			Gain         float64 `json:"gain"`
			ShiftDeg     float64 `json:"shift_deg"`
			OutAmplitude float64 `json:"out_amplitude"`
		} `json:"terms"`
		DCIn  float64 `json:"dc_in"`
		DCOut float64 `json:"dc_out"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Terms) != 1 || math.Abs(doc.Terms[0].Gain-1/math.Sqrt(101)) > 1e-6 || math.Abs(doc.Terms[0].ShiftDeg+84.2894) > 1e-3 ||
		math.Abs(doc.Terms[0].OutAmplitude-0.8/math.Sqrt(101)) > 1e-6 || doc.DCIn != 2 || math.Abs(doc.DCOut-2) > 1e-12 {
		t.Errorf("drive document %+v", doc)
	}
}

// Step of a first-order low-pass: final value 1, 10–90 % rise 2.197·RC
// (common practice).
func TestTimeStepJSON(t *testing.T) {
	r := runNodal(t, "", "time", rcFile, "--out", "out", "--format", "json", "--points", "50")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	var doc struct {
		ClosedForm string `json:"closed_form"`
		Metrics    struct {
			Final     float64 `json:"final"`
			RiseTimeS float64 `json:"rise_time_s"`
		} `json:"metrics"`
		Points []struct {
			TS float64 `json:"t_s"`
			Y  float64 `json:"y"`
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	rc := 10e3 * 15.9155e-9
	if math.Abs(doc.Metrics.Final-1) > 1e-9 || math.Abs(doc.Metrics.RiseTimeS-math.Log(9)*rc) > 1e-6*rc || len(doc.Points) != 50 || doc.ClosedForm == "" {
		t.Errorf("step document: final %g rise %g (want %g), %d points", doc.Metrics.Final, doc.Metrics.RiseTimeS, math.Log(9)*rc, len(doc.Points))
	}
}

func TestReportDemoWritesDefaultFile(t *testing.T) {
	t.Chdir(t.TempDir())
	r := runNodal(t, "", "report")
	if r.code != 0 {
		t.Fatalf("code %d: %s", r.code, r.stderr)
	}
	if !strings.Contains(r.stderr, "built-in demo") {
		t.Errorf("stderr does not say the demo is used: %q", r.stderr)
	}
	b, err := os.ReadFile("nodal-report.html")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Vibration logger input stage", "<svg", "H(s) =", reportSafety} {
		if !bytes.Contains(b, []byte(want)) {
			t.Errorf("report lacks %q", want)
		}
	}
}

const reportSafety = "does not check voltage, power or isolation ratings"

func TestPartsInheritedTolerances(t *testing.T) {
	// logger_antialias: C1 = 2*Q*C0 and C2 = C0/(2*Q) follow the
	// toleranced let C0 = 10nF ±5%; R = 1/(2*pi*fc*C0) is a design let
	// (nominal in every draw), so R1 and R2 keep their own ±1 % only.
	const file = "../../testdata/examples/logger_antialias.nodal"
	r := runNodal(t, "", "parts", file)
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	if strings.Count(r.stdout, "│ ±5 % via C0 │") != 2 || strings.Count(r.stdout, "via") != 2 {
		t.Errorf("want C1 and C2 alone ±5 %% via C0:\n%s", r.stdout)
	}
	r = runNodal(t, "", "parts", file, "--format", "json")
	var doc partsDoc
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	via := map[string]string{}
	for _, p := range doc.Parts {
		for _, h := range p.Inherited {
			via[p.Name] += h.Param
		}
	}
	if len(via) != 2 || via["C1"] != "C0" || via["C2"] != "C0" {
		t.Errorf("inherited %v; want C1 and C2 via C0", via)
	}
	if len(doc.Params) != 1 || doc.Params[0].Name != "C0" || doc.Params[0].Tol != 0.05 || doc.Params[0].Nominal != 10e-9 {
		t.Errorf("toleranced params %+v", doc.Params)
	}
	if len(doc.Requirements) != 4 || doc.Requirements[2].Metric != "gain@20kHz" || doc.Requirements[2].Unit != "dB" {
		t.Errorf("requirements %+v", doc.Requirements)
	}
}
