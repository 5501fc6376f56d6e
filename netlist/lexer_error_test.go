package netlist

import (
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/alecthomas/participle/v2/lexer"
)

// A lexer failure is reported at the lexer's position as FILE:LINE:COL
// with the source line and a caret (the go/scanner convention the project
// follows; common practice), also when the error arrives wrapped. The
// lexer's catch-all rule means no input makes it fail today, so the
// errors are made directly. An error without a position points at 1:1.
func TestLexerErrorPosition(t *testing.T) {
	src := "R1: resistor (in, out) 10k\nC1: capacitor (out, gnd) 1n\n"
	f, err := Parse("tone.nodal", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	off := strings.Index(src, "capacitor")
	at := &lexer.Error{Msg: "invalid input text", Pos: lexer.Position{Filename: "tone.nodal", Offset: off, Line: 2, Column: 5}}
	for _, tc := range []struct {
		name string
		err  error
		want string
	}{
		{"lexer error", at, "tone.nodal:2:5: invalid input text\n    C1: capacitor (out, gnd) 1n\n        ^"},
		{"wrapped", fmt.Errorf("lexing: %w", at), "tone.nodal:2:5: invalid input text\n"},
		{"no position", errors.New("lexer broke"), "tone.nodal:1:1: lexer broke\n    R1: resistor (in, out) 10k\n    ^"},
	} {
		got := f.lexDiag(tc.err).Error()
		if !strings.HasPrefix(got, tc.want) {
			t.Errorf("%s: %q; want prefix %q", tc.name, got, tc.want)
		}
	}
}
