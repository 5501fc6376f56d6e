package main

import (
	"math"
	"strings"
	"testing"

	"nodal/netlist"
)

// --series accepts the kind letters the option's help names (R, C, L) and
// the kind keywords of the circuit language (resistor, capacitor,
// inductor); series names per IEC 60063.
func TestParseSeriesFlagKinds(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want map[netlist.Kind]string
		ok   bool
	}{
		{"E24", map[netlist.Kind]string{netlist.Resistor: "E24", netlist.Capacitor: "E24"}, true},
		{"R=E96,C=E12", map[netlist.Kind]string{netlist.Resistor: "E96", netlist.Capacitor: "E12"}, true},
		{"resistor=E96, capacitor=E12,inductor=E6", map[netlist.Kind]string{netlist.Resistor: "E96", netlist.Capacitor: "E12", netlist.Inductor: "E6"}, true},
		{"l=E6", map[netlist.Kind]string{netlist.Inductor: "E6"}, true},
		{"R=E96,resistor=E24", nil, false},
		{"opamp=E12", nil, false},
		{"X=E12", nil, false},
		{"R=E7", nil, false},
		{"R", nil, false},
	} {
		got, err := parseSeriesFlag(tc.in)
		if (err == nil) != tc.ok {
			t.Errorf("%q: error %v, want ok %v", tc.in, err, tc.ok)
			continue
		}
		if len(got) != len(tc.want) {
			t.Errorf("%q: %v, want %v", tc.in, got, tc.want)
		}
		for k, name := range tc.want {
			if got[k].Name != name {
				t.Errorf("%q: %s gets %q, want %q", tc.in, k, got[k].Name, name)
			}
		}
	}
}

// FuzzParseSeriesFlag: any text gives an error or a map of known kinds to
// non-empty series, never a panic.
func FuzzParseSeriesFlag(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		got, err := parseSeriesFlag(s)
		if err != nil {
			return
		}
		if len(got) == 0 {
			t.Fatalf("%q: no kinds and no error", s)
		}
		for k, ser := range got {
			if k != netlist.Resistor && k != netlist.Capacitor && k != netlist.Inductor || len(ser.Values) == 0 {
				t.Fatalf("%q: %s → %+v", s, k, ser)
			}
		}
	})
}

// FuzzParseOverrides: a --set NAME=VALUE gives an error or one override
// with a non-empty trimmed name and a finite value, never a panic.
func FuzzParseOverrides(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		ov, err := parseOverrides([]string{s})
		if err != nil {
			return
		}
		if len(ov) != 1 {
			t.Fatalf("%q: %v", s, ov)
		}
		for name, v := range ov {
			if name == "" || name != strings.TrimSpace(name) || math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("%q: %q = %v", s, name, v)
			}
		}
	})
}
