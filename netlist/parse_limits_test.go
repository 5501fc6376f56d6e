package netlist

import (
	"errors"
	"fmt"
	"strings"
	"testing"

	"nodal/netlist/syntax"
)

// TestParseBoundedWork: inputs whose cost used to grow without bound are
// cut short with a positioned message, so the work done is bounded by a
// count, not a clock.
func TestParseBoundedWork(t *testing.T) {
	longValue := "V1: voltage source (a, gnd) " + strings.Repeat("1+", 1_000_000) + "1\nR1: resistor (a, gnd) 1k\n"
	var bad strings.Builder
	for range 100_000 {
		bad.WriteString("R1 resistor ((( x\n")
	}
	for _, tc := range []struct {
		name     string
		src      string
		diags    int    // diagnostics in the list
		contains string // in the message
	}{
		// 1+1+… of a million terms: refused at the token past MaxLineTokens.
		// "V1: voltage source (a, gnd) " is 9 tokens and the value starts at
		// column 29 with one-character tokens, so the 10,001st token is at
		// column 29 + (10001 − 9) − 1 = 10020.
		{"long expression", longValue, 1, fmt.Sprintf("long.nodal:1:%d: line 1 has more than %d tokens (split it with let)", 29+(MaxLineTokens+1-9)-1, MaxLineTokens)},
		{"many bad lines", bad.String(), syntax.MaxReported + 1, "long.nodal:21:1: stopped after 20 errors; lines 21 to 100000 were not checked (fix these and run again)"},
		{"twenty bad lines, nothing after", strings.Repeat("R1 resistor ((( x\n", syntax.MaxReported) + "\n\n", syntax.MaxReported, "long.nodal:20:4: syntax error"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("long.nodal", []byte(tc.src))
			var l ErrorList
			if !errors.As(err, &l) {
				t.Fatalf("want an ErrorList, got %v", err)
			}
			msg := err.Error()
			if len(l) != tc.diags || !strings.Contains(msg, tc.contains) {
				t.Errorf("got %d diagnostics, want %d containing %q:\n%.600s", len(l), tc.diags, tc.contains, msg)
			}
			if strings.Contains(msg, "stopped after") != (tc.diags > syntax.MaxReported) {
				t.Errorf("the note must appear exactly when lines were left unchecked:\n%.300s", msg)
			}
		})
	}
}
