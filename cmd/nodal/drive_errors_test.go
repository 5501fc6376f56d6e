package main

import (
	"strings"
	"testing"
)

// A bad --signal is shown with a caret under the column the parser names.
func TestDriveSignalErrorCaret(t *testing.T) {
	r := runNodal(t, "", "drive", rcFile, "--out", "out", "--signal", "0.8*sin(2*pi*400*t)^2")
	if r.code != exitInput {
		t.Fatalf("code %d", r.code)
	}
	lines := strings.Split(strings.TrimRight(r.stderr, "\n"), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[0], "nodal: --signal:1:20: unexpected character '^'") {
		t.Fatalf("stderr %q", r.stderr)
	}
	if caret := strings.Index(lines[2], "^"); caret != strings.Index(lines[1], ")^")+1 {
		t.Errorf("caret at %d under %q", caret, lines[1])
	}
}
