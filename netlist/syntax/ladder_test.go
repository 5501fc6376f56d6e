package syntax

import (
	"fmt"
	"testing"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"
)

// testPrimary is a number or a parenthesised group, enough to see the
// shape the ladder gives.
type testPrimary struct {
	Number string            `parser:"  @Number"`
	Group  *Sum[testPrimary] `parser:"| \"(\" @@ \")\""`
}

var testLadder = participle.MustBuild[Sum[testPrimary]](
	participle.Lexer(lexer.MustSimple([]lexer.SimpleRule{
		{Name: "Number", Pattern: NumberPattern},
		{Name: "Op", Pattern: `[-+*/^()]`},
		{Name: "Space", Pattern: `\s+`},
	})),
	participle.Elide("Space"),
)

// show writes a parsed expression fully parenthesised.
func show(x *Sum[testPrimary]) string {
	s := showProduct(x.Left)
	for _, r := range x.Rest {
		s = fmt.Sprintf("(%s %s %s)", s, r.Op, showProduct(r.Term))
	}
	return s
}

func showProduct(p *Product[testPrimary]) string {
	s := showUnary(p.Left)
	for _, r := range p.Rest {
		s = fmt.Sprintf("(%s %s %s)", s, r.Op, showUnary(r.Unary))
	}
	return s
}

func showUnary(u *Unary[testPrimary]) string {
	switch {
	case u.Neg != nil:
		return "(-" + showUnary(u.Neg) + ")"
	case u.Plus != nil:
		return "(+" + showUnary(u.Plus) + ")"
	}
	base := u.Power.Base.Number
	if u.Power.Base.Group != nil {
		base = show(u.Power.Base.Group)
	}
	if u.Power.Exp == nil {
		return base
	}
	return "(" + base + " ^ " + showUnary(u.Power.Exp) + ")"
}

// TestLadder: the shared precedence ladder groups as common mathematical
// practice does: * and / before + and -, both left-associative; ^ binds
// tighter than a sign and is right-associative (-2^2 = -(2^2), 2^3^2 =
// 2^(3^2)); a sign may follow ^.
func TestLadder(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"1 - 2 - 3", "((1 - 2) - 3)"},
		{"1 + 2 * 3", "(1 + (2 * 3))"},
		{"12 / 2 / 3", "((12 / 2) / 3)"},
		{"-2^2", "(-(2 ^ 2))"},
		{"2^3^2", "(2 ^ (3 ^ 2))"},
		{"2^-1", "(2 ^ (-1))"},
		{"+-1k5", "(+(-1k5))"},
		{"(1 + 2) * 3", "((1 + 2) * 3)"},
		{"4k7 * 2 ^ 2", "(4k7 * (2 ^ 2))"},
	} {
		x, err := testLadder.ParseString("t", tc.in)
		if err != nil {
			t.Errorf("%q: %v", tc.in, err)
			continue
		}
		if got := show(x); got != tc.want {
			t.Errorf("%q groups as %s; want %s", tc.in, got, tc.want)
		}
	}
}
