package main

import (
	"context"
	"io"
	"math"
	"strings"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
)

func rangeOfText(t *testing.T, src, out string) (*transfer.TransferFunction, float64, float64) {
	t.Helper()
	e := &env{ctx: context.Background(), stdout: io.Discard, stderr: io.Discard}
	l, err := elaborate(e, "test.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	sys, err := mna.Build(l.circuit, mna.Input{}, outputFor(out, ""))
	if err != nil {
		t.Fatal(err)
	}
	tf := systemTF(sys)
	lo, hi := rangeOf(l, tf)
	return tf, lo, hi
}

func TestAutoRange(t *testing.T) {
	demo := string(demoCircuit)
	tests := []struct {
		name, src, out string
		lo, hi         float64
	}{
		// RC low-pass, fc = 1/(2πRC) = 1 kHz (common practice): a decade
		// either side.
		{"first order", "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 10k\nC1: capacitor (out, gnd) 15.9155nF\n", "out", 100, 10e3},
		// The demo: the 2 kHz Butterworth pair and the first op-amp pole
		// near 500 kHz (−90 dB) shape the response; the second op-amp pole
		// near 1 MHz sits 112 dB below the 6 dB passband and is left out
		// (it was swept to 1 GHz, 350 dB down, before).
		{"demo", demo, "out", 100, 10e6},
		// A divider has no pole or zero: the fixed range.
		{"flat", "Vs: voltage source (in, gnd) 1\nC1: capacitor (in, gnd) 1u\nR1: resistor (in, out) 10k\nR2: resistor (out, gnd) 3.3k\n", "out", flatRangeHz[0], flatRangeHz[1]},
	}
	for _, tc := range tests {
		_, lo, hi := rangeOfText(t, tc.src, tc.out)
		if math.Abs(lo/tc.lo-1) > 1e-12 || math.Abs(hi/tc.hi-1) > 1e-12 {
			t.Errorf("%s: range %g..%g Hz, want %g..%g", tc.name, lo, hi, tc.lo, tc.hi)
		}
	}
}

func TestAutoRangeKeepsNotch(t *testing.T) {
	// A series LC to ground behind a resistor nulls the output at
	// 1/(2π√(LC)) = 5.033 kHz (common practice): the zero pair lies on the
	// jω axis where |H| = 0, far below any window, yet it shapes the
	// response and must be in the range.
	_, lo, hi := rangeOfText(t, "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nL1: inductor (out, m) 1m\nC1: capacitor (m, gnd) 1u\n", "out")
	if !(lo <= 5033/10 && hi >= 5033*10) {
		t.Errorf("range %g..%g Hz misses the 5.033 kHz notch by a decade", lo, hi)
	}
}

func TestFlatSweepGroupDelayZero(t *testing.T) {
	r := runNodal(t, "Vs: voltage source (in, gnd) 1\nC1: capacitor (in, gnd) 1u\nR1: resistor (in, out) 10k\nR2: resistor (out, gnd) 3.3k\n",
		"sweep", "-", "--out", "out", "--format", "csv")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	lines := strings.Split(strings.TrimSpace(r.stdout), "\n")
	if len(lines) < 3 {
		t.Fatalf("csv %q", r.stdout)
	}
	for _, line := range lines[1:] {
		if f := line[strings.LastIndex(line, ",")+1:]; f != "0" {
			t.Errorf("group delay %q in %q, want exactly 0", f, line)
		}
	}
}
