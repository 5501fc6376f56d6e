package netlist

import (
	"errors"
	"strings"
	"testing"
)

// TestSpacedUnits: a prefix or unit after a space, SI style (BIPM SI
// Brochure, 9th ed., 5.4.3: a space separates the number and the unit),
// reads as the attached form, as in a flag; an option or a call after a
// number is left alone.
func TestSpacedUnits(t *testing.T) {
	for _, tc := range []struct {
		spaced, attached string
	}{
		{"10 kΩ", "10kΩ"},
		{"10 k", "10k"},
		{"4.7 kohm", "4.7kohm"},
		{"100 nF", "100nF"},
		{"2.2\tµF", "2.2µF"},
		{"1 M", "1M"},
		{"10 kΩ ±5 %", "10kΩ ±5%"},
	} {
		part := "C1: capacitor (out, gnd) "
		if strings.Contains(tc.spaced, "Ω") || strings.Contains(tc.spaced, "ohm") || strings.HasSuffix(tc.spaced, "k") || strings.HasSuffix(tc.spaced, "M") {
			part = "R2: resistor (out, gnd) "
		}
		head := "V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\n"
		a, err := Load("a.nodal", []byte(head+part+tc.spaced+"\n"), nil)
		if err != nil {
			t.Errorf("%q: %v", tc.spaced, err)
			continue
		}
		b, err := Load("b.nodal", []byte(head+part+tc.attached+"\n"), nil)
		if err != nil {
			t.Fatalf("%q: %v", tc.attached, err)
		}
		pa, pb := a.Parts[2], b.Parts[2]
		if pa.Value != pb.Value || pa.Tol != pb.Tol {
			t.Errorf("%q = %v ±%v, %q = %v ±%v", tc.spaced, pa.Value, pa.Tol, tc.attached, pb.Value, pb.Tol)
		}
	}
	// An option after a number stays an option.
	c, err := Load("o.nodal", []byte("V1: voltage source (in, gnd) 1 phase=30deg\nR1: resistor (in, gnd) 1k\n"), nil)
	if err != nil || c.Parts[0].Value != 1 {
		t.Errorf("option after a number: %v %+v", err, c)
	}
}

// TestMegaIsM: 1Meg, 1MEG, 1meg and "1 Meg" are errors at the value's
// line and column saying mega is M.
func TestMegaIsM(t *testing.T) {
	for _, v := range []string{"1Meg", "1MEG", "1meg", "1 Meg", "2.2MegΩ"} {
		_, err := Load("m.nodal", []byte("V1: voltage source (in, gnd) 1\nR1: resistor (in, gnd) "+v+"\n"), nil)
		var l ErrorList
		if !errors.As(err, &l) || len(l) != 1 {
			t.Fatalf("%q: %v", v, err)
		}
		d := l[0]
		if d.Pos.Line != 2 || d.Pos.Col != 24 || !strings.Contains(d.Msg, "mega is M") {
			t.Errorf("%q: %d:%d %s", v, d.Pos.Line, d.Pos.Col, d.Msg)
		}
	}
}
