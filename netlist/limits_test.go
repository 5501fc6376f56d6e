package netlist

import (
	"strings"
	"testing"

	"nodal/netlist/syntax"
)

// TestInputLimits: oversized files and deeply nested expressions fail with
// a positioned error (and quickly: the parsers recurse once per level, so
// without the limit 20000 "(" take seconds or overflow the stack).
func TestInputLimits(t *testing.T) {
	deep := strings.Repeat("(", 20000) + "1" + strings.Repeat(")", 20000)
	for _, c := range []struct {
		name, src, want string
		line, col       int
	}{
		{"64 MiB+", strings.Repeat("# filler line\n", MaxSourceBytes/14+1), "limited to", 1, 1},
		{"parens", base + "R2: resistor (in, out) " + deep + "\n", "nested too deeply", 4, 24 + syntax.MaxNesting},
		{"unclosed", base + "let x = " + strings.Repeat("(", 20000) + "\n", "nested too deeply", 4, 9 + syntax.MaxNesting},
		{"signs", base + "let x = " + strings.Repeat("-", 20000) + "1\n", "nested too deeply", 4, 9 + syntax.MaxNesting},
		{"powers", base + "let x = 2" + strings.Repeat("^2", 20000) + "\n", "nested too deeply", 4, 10 + 2*syntax.MaxNesting},
		{"many bad lines", strings.Repeat("R1: resistor (a 0) 1k\n", 2000), "syntax error", 1, 17},
	} {
		_, err := Load("in.nod", []byte(c.src), nil)
		l, ok := err.(ErrorList)
		if !ok || len(l) == 0 {
			t.Errorf("%s: error %v", c.name, err)
			continue
		}
		if d := l[0]; d.Pos.Line != c.line || d.Pos.Col != c.col || d.Pos.File != "in.nod" || !strings.Contains(d.Msg, c.want) {
			t.Errorf("%s: got %s, want in.nod:%d:%d: ...%s", c.name, d.Pos, c.line, c.col, c.want)
		}
	}
	// Nesting just inside the limit still parses.
	ok := base + "let x = " + strings.Repeat("(", syntax.MaxNesting) + "1" + strings.Repeat(")", syntax.MaxNesting) + "\n"
	if _, err := Load("in.nod", []byte(ok), nil); err != nil {
		t.Errorf("%d levels: %v", syntax.MaxNesting, err)
	}
	if _, _, err := EvalExpr(strings.Repeat("(", 4000)); err == nil || !strings.Contains(err.Error(), "nested too deeply") {
		t.Errorf("EvalExpr of 4000 '(': %v", err)
	}
}
