package main

import (
	"strings"
	"testing"
)

// The same wrong probe gives the same message, with the closest name as a
// hint, from the numeric engine and from --symbolic: both resolve probes
// through mna.Resolve.
func TestWrongProbeSameMessageNumericAndSymbolic(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--out", "otu"}, `no node "otu"; did you mean "out"?`},
		{[]string{"--out", "out", "--ref", "inn"}, `no node "inn"; did you mean "in"?`},
		{[]string{"--out", "i(R9)"}, `no part "R9"; did you mean "R1"?`},
		{[]string{"--in", "Vz", "--out", "out"}, `no source "Vz"; did you mean "Vs"?`},
		{[]string{"impedance", "--port", "Vz"}, `no source "Vz"; did you mean "Vs"?`},
		{[]string{"impedance", "--node", "oot"}, `cannot inject a test current into node "oot"; did you mean "out"?`},
		{[]string{"--out", "zzzz"}, `no node "zzzz" (nodes: "gnd", "in", "out")`},
	}
	for _, tc := range cases {
		args := append([]string{"transfer", rcFile}, tc.args...)
		if tc.args[0] == "impedance" {
			args = append([]string{"impedance", rcFile}, tc.args[1:]...)
		}
		num := runNodal(t, "", args...)
		sym := runNodal(t, "", append(args, "--symbolic")...)
		name := strings.Join(tc.args, " ")
		if num.code != 2 || sym.code != 2 {
			t.Errorf("%s: exit %d numerically, %d with --symbolic, want 2", name, num.code, sym.code)
		}
		if num.stderr != sym.stderr {
			t.Errorf("%s: numeric stderr %q, symbolic %q", name, num.stderr, sym.stderr)
		}
		if got := strings.TrimSpace(num.stderr); got != "nodal: "+tc.want {
			t.Errorf("%s: stderr %q, want %q", name, got, "nodal: "+tc.want)
		}
	}
}
