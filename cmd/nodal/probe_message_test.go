package main

import (
	"os"
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

// A response without "from" takes its source from --in; a wrong --in is
// reported against the flag (no empty file prefix), with the only source
// of the circuit offered as the hint.
func TestWrongInForResponseWithoutFrom(t *testing.T) {
	dir := t.TempDir()
	path := dir + "/rc.nodal"
	src := "Vin: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1u\nresponse out = v(out)\n"
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	res := runNodal(t, "", "transfer", path, "--in", "Vx")
	want := `nodal: --in: no source "Vx"; did you mean "Vin"?`
	if res.code != 2 || strings.TrimSpace(res.stderr) != want {
		t.Errorf("exit %d, stderr %q; want exit 2, %q", res.code, res.stderr, want)
	}
}
