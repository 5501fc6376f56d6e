package stdvalue

import (
	"math"
	"strings"
	"testing"

	"nodal/netlist"
)

// snapSource is a vibration-logger anti-alias stage of our own: equal-R
// Sallen-Key low-pass with the resistor value computed from fc.
const snapSource = `title "logger anti-alias"
let fc = 2kHz
let C0 = 10nF ±5%              # one capacitor batch
let R  = 1/(2*pi*fc*C0)        # 7.958 kΩ
Vin: voltage source (in, gnd) 1
R1:  resistor (in, a) R ±1%
R2:  resistor (a, b) R ±1%
C1:  capacitor (a, out) 2*C0/sqrt(2)
C2:  capacitor (b, gnd) 6.8nF
U1:  opamp (b, out, out)
RL:  resistor (out, gnd) 9.1k fixed   # ADC input load
R9:  resistor (out, gnd) 100k
require f3db within 1.9kHz..2.1kHz
`

func TestSnap(t *testing.T) {
	e24, _ := SeriesByName("E24")
	e12, _ := SeriesByName("E12")
	res, err := Snap("logger.nodal", []byte(snapSource), nil, map[netlist.Kind]Series{netlist.Resistor: e24, netlist.Capacitor: e12})
	if err != nil {
		t.Fatal(err)
	}
	// R = 1/(2π·2 kHz·10 nF) = 7957.7 Ω → E24 8.2k (log midpoint of 7.5
	// and 8.2 is 7.842k); C1 = 14.14 nF → E12 15n (midpoint of 12 and 15
	// is 13.42n); C2 and R9 are standard values already. Series values
	// from IEC 60063 (preferred number series for resistors and capacitors);
	// nearest in log distance is common practice.
	want := map[string]float64{"R1": 8.2e3, "R2": 8.2e3, "C1": 15e-9, "C2": 6.8e-9, "R9": 100e3}
	if len(res.Changes) != len(want) {
		t.Fatalf("changes %+v", res.Changes)
	}
	for _, ch := range res.Changes {
		if math.Abs(ch.New-want[ch.Part]) > 1e-12*want[ch.Part] { // 6.8nF parses as 6.8·1e-9, one ulp off 6.8e-9
			t.Errorf("%s → %v, want %v", ch.Part, ch.New, want[ch.Part])
		}
		if math.Abs(ch.RelChange-(ch.New-ch.Old)/ch.Old) > 1e-15 {
			t.Errorf("%s: relative change %v", ch.Part, ch.RelChange)
		}
		p, _ := res.After.Part(ch.Part)
		if math.Abs(p.Value-ch.New) > 1e-12*ch.New { // "15nF" elaborates as 15·1e-9
			t.Errorf("%s: after %v, want %v", ch.Part, p.Value, ch.New)
		}
	}
	if len(res.Skipped) != 1 || res.Skipped[0].Part != "RL" || res.Skipped[0].Reason != "marked fixed" {
		t.Errorf("skipped %+v", res.Skipped)
	}
	text := string(res.Source)
	for _, line := range []string{
		"let R  = 8.2k        # 7.958 kΩ",
		"C1:  capacitor (a, out) 1.5*C0\n",
		"C2:  capacitor (b, gnd) 6.8nF\n",
		"RL:  resistor (out, gnd) 9.1k fixed   # ADC input load",
		"require f3db within 1.9kHz..2.1kHz",
	} {
		if !strings.Contains(text, line) {
			t.Errorf("new source lacks %q:\n%s", line, text)
		}
	}
	if strings.Count(text, "\n") != strings.Count(snapSource, "\n") {
		t.Errorf("line count changed:\n%s", text)
	}
	notes := strings.Join(res.Notes, "\n") + "\n"
	for _, want := range []string{
		"let R rewritten to 8.2k for R1, R2\n",
		"C1: value 2*C0/sqrt(2) replaced by 1.5*C0 (= 15nF), still one draw with C0",
	} {
		if !strings.Contains(notes, want) {
			t.Errorf("notes lack %q:\n%s", want, notes)
		}
	}
	// R1 and R2 keep their own ±1 %; C0's let stays (now unused).
	if len(res.After.Variations) != 3 {
		t.Errorf("variations after: %+v", res.After.Variations)
	}
}

func TestSnapErrors(t *testing.T) {
	e24, _ := SeriesByName("E24")
	if _, err := Snap("bad.nodal", []byte("R1: resistor (a, gnd)\n"), nil, map[netlist.Kind]Series{netlist.Resistor: e24}); err == nil {
		t.Error("bad file accepted")
	}
}
