package syntax

import (
	"strings"
	"testing"

	"github.com/alecthomas/participle/v2/lexer"
)

var testLex = lexer.MustSimple([]lexer.SimpleRule{
	{Name: "Number", Pattern: NumberPattern},
	{Name: "Op", Pattern: `[-+*/^(),]`},
	{Name: "Space", Pattern: `\s+`},
})

// TestAdmit: a command-line expression is refused before parsing when it
// is not UTF-8, too long, or nests deeper than MaxNesting (at the token
// that goes too deep); MaxNesting levels are allowed.
func TestAdmit(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want string // "" when admitted
		col  int
	}{
		{"1 + (2*3)", "", 0},
		{strings.Repeat("(", MaxNesting) + "1" + strings.Repeat(")", MaxNesting), "", 0},
		{strings.Repeat("(", MaxNesting+1) + "1" + strings.Repeat(")", MaxNesting+1), "nested too deeply", MaxNesting + 1},
		// each "^-" adds two levels: the 33rd "^" is the 65th level
		{"1" + strings.Repeat("^-1", 40), "nested too deeply", 1 + 3*(MaxNesting/2) + 1},
		{"1\xff", "signal is not valid UTF-8", 1},
		{strings.Repeat("1+", 500) + "1", "signal is 1001 bytes; at most 1000 are accepted", 1},
	} {
		d := NewText("--signal", []byte(tc.src)).Admit("signal", 1000, testLex, "Space")
		switch {
		case tc.want == "" && d != nil:
			t.Errorf("%.20q: refused: %v", tc.src, d)
		case tc.want != "" && (d == nil || !strings.Contains(d.Msg, tc.want) || d.Pos.Col != tc.col):
			t.Errorf("%.20q: %v; want %q at column %d", tc.src, d, tc.want, tc.col)
		}
	}
}
