package main

import (
	"strings"
	"testing"
)

// TestOutForms: --out v(NODE) is --out NODE, v(NODE, REF) is --out NODE
// --ref REF (the forms nodal prints); i(NODE) with NODE a node says it is
// a node and names v(NODE).
func TestOutForms(t *testing.T) {
	same := [][2][]string{
		{{"--out", "v(out)"}, {"--out", "out"}},
		{{"--out", "v( out )"}, {"--out", "out"}},
		{{"--out", "v(out, in)"}, {"--out", "out", "--ref", "in"}},
	}
	for _, pair := range same {
		a := runNodal(t, "", append([]string{"transfer", rcFile, "--format", "json"}, pair[0]...)...)
		b := runNodal(t, "", append([]string{"transfer", rcFile, "--format", "json"}, pair[1]...)...)
		if a.code != 0 || b.code != 0 || a.stdout != b.stdout {
			t.Errorf("%v: exit %d %s\n%v: exit %d", pair[0], a.code, a.stderr, pair[1], b.code)
		}
	}
	r := runNodal(t, "", "transfer", rcFile, "--out", "i(out)")
	if r.code != 2 || !strings.Contains(r.stderr, `"out" is a node, not a part`) || !strings.Contains(r.stderr, "v(out)") {
		t.Errorf("i(out): exit %d %s", r.code, r.stderr)
	}
}

// TestDrivePhaseWarning: a bare phase of 90 in --signal is read as
// radians and the output warns, naming the column.
func TestDrivePhaseWarning(t *testing.T) {
	r := runNodal(t, "", "drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1k*t + 90)")
	if r.code != 0 || !strings.Contains(r.stderr, "--signal:1:17: warning: read 90 as radians; did you mean 90deg?") {
		t.Errorf("exit %d, stderr %q", r.code, r.stderr)
	}
	r = runNodal(t, "", "drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1k*t + 90deg)")
	if r.code != 0 || r.stderr != "" {
		t.Errorf("with deg: exit %d, stderr %q", r.code, r.stderr)
	}
}
