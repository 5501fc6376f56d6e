package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/netlist"
)

// TestSnapWritesFile rounds bridge_snap.nodal to E12: Rf = 1/(2π·1.6 kHz·
// 10 nF) = 9947 Ω → 10k; Cf = 9.6 nF → 10 nF across the decade (log
// midpoint of 8.2 and 10 is 9.055); Rs = 560 Ω is an E12 value; Rl is
// fixed. Series values from IEC 60063; rounding to the nearest value on a
// log scale and fc = 1/(2πRC) are common practice.
func TestSnapWritesFile(t *testing.T) {
	dst := filepath.Join(t.TempDir(), "snapped.nodal")
	code, out, errOut := runCaptured(t, "", "snap", "testdata/bridge_snap.nodal", "--series", "E12", "-o", dst)
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, out, errOut)
	}
	src, err := os.ReadFile(dst)
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.Load(dst, src, nil)
	if err != nil {
		t.Fatalf("snapped file does not load: %v\n%s", err, src)
	}
	for name, want := range map[string]float64{"Rf": 10e3, "Rs": 560, "Cf": 10e-9, "Rl": 1e6} {
		p, _ := c.Part(name)
		if math.Abs(p.Value-want) > 1e-12*want {
			t.Errorf("%s = %v, want %v", name, p.Value, want)
		}
	}
	for _, line := range []string{
		"# Strain-gauge bridge filter before rounding to stock values.\n",
		"Rf: resistor (in, mid) 10k ±1%   # 9.947 kΩ\n",
		"Cf: capacitor (out, gnd) 10nF      # rounds across the decade in E12\n",
		"Rs: resistor (mid, out) 560        # stock already\n",
		"Rl: resistor (out, gnd) 1M fixed    # amplifier input\n",
	} {
		if !strings.Contains(string(src), line) {
			t.Errorf("snapped file lacks %q:\n%s", line, src)
		}
	}
	for _, w := range []string{"+0.53 %", "+4.17 %", "unchanged", "left alone: Rl: marked fixed", "shared tolerance of C", "wrote " + dst, "f3db within 1.4kHz..1.7kHz"} {
		if !strings.Contains(out, w) {
			t.Errorf("report lacks %q:\n%s", w, out)
		}
	}
}

func TestSnapReportOnly(t *testing.T) {
	code, out, errOut := runCaptured(t, "", "snap", "testdata/bridge_snap.nodal", "--series", "R=E96,C=E6", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, out, errOut)
	}
	var rep snapReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Written != "" {
		t.Errorf("written %q without -o", rep.Written)
	}
	// E96: 9947 Ω → 10.0k (√(9.76·10.0) = 9.879k is the midpoint below);
	// 560 Ω → 562 (midpoint of 549 and 562 is 555.5); E6: 9.6 nF → 10 nF
	// (IEC 60063 series values).
	want := map[string]float64{"Rf": 10e3, "Rs": 562, "Cf": 10e-9}
	if len(rep.Parts) != len(want) {
		t.Fatalf("snapped parts %+v; want %d (Rf, Rs, Cf)", rep.Parts, len(want))
	}
	for _, p := range rep.Parts {
		if _, ok := want[p.Part]; !ok {
			t.Errorf("unexpected part %s snapped", p.Part)
		}
		if math.Abs(p.New-want[p.Part]) > 1e-12*want[p.Part] {
			t.Errorf("%s → %v, want %v", p.Part, p.New, want[p.Part])
		}
	}
	if len(rep.Requirements) != 1 || rep.Requirements[0].After == nil || !rep.Requirements[0].PassAfter {
		t.Errorf("requirements %+v", rep.Requirements)
	}
	code, out, _ = runCaptured(t, "", "snap", "testdata/bridge_snap.nodal", "--series", "E24")
	if code != 0 || !strings.Contains(out, "no file written") {
		t.Errorf("exit %d:\n%s", code, out)
	}
}

func TestSnapBadInput(t *testing.T) {
	in := filepath.Join(t.TempDir(), "in.nodal")
	src, _ := os.ReadFile("testdata/bridge_snap.nodal")
	if err := os.WriteFile(in, src, 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"snap", in, "--series", "E13"}, "unknown series \"E13\""},
		{[]string{"snap", in, "--series", "Q=E12"}, "kinds R, C, L"},
		{[]string{"snap", in, "--series", "R=E12,R=E24"}, "given twice"},
		{[]string{"snap", in, "--series", "E12", "-o", in}, "refusing to overwrite the input file"},
		{[]string{"snap", in, "--series", "E12", "-o", "-"}, "-o wants a file name"},
	}
	for _, tc := range tests {
		code, _, errOut := runCaptured(t, "", tc.args...)
		if code != exitInput || !strings.Contains(errOut, tc.want) {
			t.Errorf("%v: exit %d, stderr %q, want %q", tc.args, code, errOut, tc.want)
		}
	}
	if after, _ := os.ReadFile(in); string(after) != string(src) {
		t.Error("the input file was changed")
	}
}

// TestSnapFailsAfter: rounding that moves a metric out of its window
// returns exit status 1 and still writes the file.
func TestSnapFailsAfter(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "tight.nodal")
	// f3db before: 1/(2π·9.1k·9.6n) = 1821.8 Hz; after E12 (9.1k → 10k, above
	// the log midpoint 9.055k of 8.2k and 10k; 9.6n → 10n):
	// 1/(2π·10k·10n) = 1591.5 Hz (IEC 60063 E12 values; the RC corner is
	// common practice).
	src := "Vb: voltage source (in, gnd) 1\nRf: resistor (in, out) 9.1k\nCf: capacitor (out, gnd) 9.6nF\nrequire f3db within 1.8kHz..1.9kHz\n"
	if err := os.WriteFile(in, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	dst := filepath.Join(dir, "out.nodal")
	code, out, errOut := runCaptured(t, "", "snap", in, "--series", "E12", "-o", dst)
	if code != exitVerdict {
		t.Errorf("exit %d, want 1\n%s%s", code, out, errOut)
	}
	if !strings.Contains(out, "1.822 kHz") || !strings.Contains(out, "1.592 kHz") {
		t.Errorf("report:\n%s", out)
	}
	if _, err := os.Stat(dst); err != nil {
		t.Errorf("file not written: %v", err)
	}
}

// TestSnapBalancesBridge: rounding both arms of a slightly unbalanced
// bridge to the same E24 value (350 Ω and 350.7 Ω both become 360 Ω, above
// the log midpoint 344.7 Ω of 330 and 360) balances it: the output carries
// no signal (−inf dB) and the requirement fails after rounding (exit 1).
func TestSnapBalancesBridge(t *testing.T) {
	in := filepath.Join(t.TempDir(), "bridge.nodal")
	src := "Vex: voltage source (exc, gnd) 5\nRa: resistor (exc, p) 350\nRc: resistor (p, gnd) 350.7\nRd: resistor (exc, n) 350\nRe: resistor (n, gnd) 350\nAmp1: voltage source (out, gnd) 100*v(p, n)\nRl: resistor (out, gnd) 10k\nrequire dc above -30dB\n"
	if err := os.WriteFile(in, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := runCaptured(t, "", "snap", in, "--series", "E24")
	if code != exitVerdict || !strings.Contains(out, "-26.03 dB") || !strings.Contains(out, "-inf dB") {
		t.Errorf("exit %d\n%s%s", code, out, errOut)
	}
}

// TestSnapBalancesInstrumentationBridge: the instrumentation-amplifier
// example balances the same way: its output is then exactly zero at every
// frequency (−inf dB) and the requirement fails after rounding.
func TestSnapBalancesInstrumentationBridge(t *testing.T) {
	code, out, errOut := runCaptured(t, "", "snap", "../../testdata/examples/bridge_inamp.nodal", "--series", "R=E24")
	if code != exitVerdict || !strings.Contains(out, "-inf dB") || !strings.Contains(out, "FAIL") {
		t.Errorf("exit %d\n%s%s", code, out, errOut)
	}
}
