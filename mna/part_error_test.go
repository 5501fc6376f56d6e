package mna_test

import (
	"errors"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// A sense naming a missing part or node is a *PartError for the sensing
// part that wraps the *LookupError, so errors.As finds both; the message
// keeps the lookup's text and the list of names that exist.
func TestPartErrorWrapsLookup(t *testing.T) {
	const gnd = "gnd"
	cases := []struct {
		name, part, what, missing, msg string
		sense                          func() netlist.Part
	}{
		{"current gain names no part", "Mirror1", "part", "Rx", `i(Rx) names no part with a current`,
			func() netlist.Part { return testcircuit.CCCS("Mirror1", "out", gnd, 2, "Rx") }},
		// Build registers every named control node, so only an empty name
		// (a Circuit not made by Elaborate) misses.
		{"voltage gain names no node", "Gain1", "node", "", `the node "" of its control v( ) does not exist`,
			func() netlist.Part { return testcircuit.VCVS("Gain1", "o2", gnd, 2, "", gnd) }},
	}
	for _, tc := range cases {
		c := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", "out", 1e3),
			testcircuit.R("R2", "out", gnd, 1e3), testcircuit.R("R3", "o2", gnd, 1e3), tc.sense())
		_, err := mna.Build(c, mna.Input{}, mna.Output{Node: "out"})
		var pe *mna.PartError
		var le *mna.LookupError
		if !errors.As(err, &pe) || pe.Part != tc.part {
			t.Errorf("%s: %v, want a *PartError for %s", tc.name, err, tc.part)
			continue
		}
		if !errors.As(err, &le) || le.What != tc.what || le.Name != tc.missing || len(le.Known) == 0 {
			t.Errorf("%s: errors.As found lookup %+v in %v", tc.name, le, err)
			continue
		}
		head := `part "` + tc.part + `": ` + tc.msg
		if pe.Msg != le.Error() || !(strings.HasPrefix(err.Error(), head+" (") || strings.HasPrefix(err.Error(), head+"; did you mean ")) {
			t.Errorf("%s: message %q (lookup %q)", tc.name, err, le.Error())
		}
	}
}
