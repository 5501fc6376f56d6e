package derivation

import (
	"strings"
	"testing"

	"nodal/netlist/syntax"
)

// TestInputLimits: oversized and deeply nested text fails with a
// positioned error instead of exhausting time or stack (before the limit,
// 40000 nested "sqrt(" overflowed the stack), and a denominator that
// evaluates to zero is a positioned error like every other.
func TestInputLimits(t *testing.T) {
	n := MaxSourceBytes / 2
	for _, c := range []struct {
		name, src, want string
		line, col       int
	}{
		{"too long", strings.Repeat("1+", n) + "1", "at most", 1, 1},
		{"parens", strings.Repeat("(", 8000) + "1" + strings.Repeat(")", 8000), "nested too deeply", 1, syntax.MaxNesting + 1},
		{"sqrt", strings.Repeat("sqrt(", 4000) + "s" + strings.Repeat(")", 4000), "nested too deeply", 1, 5*syntax.MaxNesting + 5},
		{"signs", "1/(\n" + strings.Repeat("-", 8000) + "s)", "nested too deeply", 2, syntax.MaxNesting},
		{"powers", "s" + strings.Repeat("^2", 8000), "nested too deeply", 1, 2*syntax.MaxNesting + 2},
	} {
		_, err := ParseTF("tf", c.src)
		l, ok := err.(syntax.ErrorList)
		if !ok || len(l) == 0 {
			t.Errorf("%s: error %v", c.name, err)
			continue
		}
		if d := l[0]; d.Pos.Line != c.line || d.Pos.Col != c.col || d.Pos.File != "tf" || !strings.Contains(d.Msg, c.want) {
			t.Errorf("%s: got %s: %s, want tf:%d:%d: ...%s", c.name, d.Pos, d.Msg, c.line, c.col, c.want)
		}
	}
	deep := strings.Repeat("(", syntax.MaxNesting) + "1+s" + strings.Repeat(")", syntax.MaxNesting)
	if _, err := ParseTF("tf", deep); err != nil {
		t.Errorf("%d levels: %v", syntax.MaxNesting, err)
	}
	tf, err := ParseTF("tf", "1/(R1-R1)")
	if err != nil {
		t.Fatal(err)
	}
	r, err := tf.Reduce()
	if err != nil {
		t.Fatal(err)
	}
	_, _, err = r.Evaluate(fuzzLookup)
	checkErr(t, "tf", "1/(R1-R1)", err)
}
