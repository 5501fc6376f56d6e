package symbolic

import (
	"math/big"
	"math/cmplx"
	"strings"
	"testing"
)

// Algebraic identities (common practice) checked as polynomials.
func TestPolyArithmetic(t *testing.T) {
	a, b, c := Var("a"), Var("b"), Var("c")
	two := Int(2)
	for _, tc := range []struct {
		name      string
		got, want Poly
	}{
		{"(a+b)^2", a.Add(b).Mul(a.Add(b)), sum(a.Mul(a), two.Mul(a).Mul(b), b.Mul(b))},
		{"(a−b)(a+b)", a.Sub(b).Mul(a.Add(b)), a.Mul(a).Sub(b.Mul(b))},
		{"commutative", a.Mul(b).Mul(c), c.Mul(a).Mul(b)},
		{"a − a", a.Sub(a), Poly{}},
		{"neg", a.Add(b).Neg(), Int(0).Sub(a).Sub(b)},
		{"scale", a.Add(b).Scale(big.NewRat(3, 2)), a.Mul(Const(big.NewRat(3, 2))).Add(b.Mul(Const(big.NewRat(3, 2))))},
		{"distinct variable sets", a.Add(Int(1)).Mul(c.Add(Int(1))), sum(a.Mul(c), a, c, Int(1))},
	} {
		if !tc.got.Equal(tc.want) {
			t.Errorf("%s: got %v, want %v", tc.name, tc.got, tc.want)
		}
	}
}

func TestPolyDiv(t *testing.T) {
	x, y := Var("x"), Var("y")
	for _, tc := range []struct {
		name   string
		p, d   Poly
		q      Poly
		exists bool
	}{
		{"(x²−y²)/(x−y)", x.Mul(x).Sub(y.Mul(y)), x.Sub(y), x.Add(y), true},
		{"(x³−y³)/(x−y)", x.Mul(x).Mul(x).Sub(y.Mul(y).Mul(y)), x.Sub(y), sum(x.Mul(x), x.Mul(y), y.Mul(y)), true},
		{"(x²+y²)/(x+y) not exact", x.Mul(x).Add(y.Mul(y)), x.Add(y), Poly{}, false},
		{"monomial divisor", prod(6, "x", "x", "y"), prod(3, "x"), prod(2, "x", "y"), true},
		{"monomial not dividing", prod(6, "x"), m("y"), Poly{}, false},
		{"by rational constant", x.Add(y), Const(big.NewRat(1, 3)), prod(3, "x").Add(prod(3, "y")), true},
		{"zero dividend", Poly{}, x, Poly{}, true},
		{"zero divisor", x, Poly{}, Poly{}, false},
	} {
		q, ok := tc.p.Div(tc.d)
		if ok != tc.exists || (ok && !q.Equal(tc.q)) {
			t.Errorf("%s: got %v, %v; want %v, %v", tc.name, q, ok, tc.q, tc.exists)
		}
		if ok && !q.Mul(tc.d).Equal(tc.p) {
			t.Errorf("%s: q·d ≠ p", tc.name)
		}
	}
}

func TestContentAndMonomial(t *testing.T) {
	p := sum(Const(big.NewRat(2, 3)).Mul(m("x", "x", "y")), Const(big.NewRat(4, 9)).Mul(m("x", "y", "y")))
	if c := Content(p); c.Cmp(big.NewRat(2, 9)) != 0 {
		t.Errorf("content %v, want 2/9 (gcd of numerators 2, 4 over lcm of 3, 9)", c)
	}
	if g := CommonMonomial(p); !g.Equal(m("x", "y")) {
		t.Errorf("common monomial %v, want x*y", g)
	}
	if c := Content(); c.Cmp(big.NewRat(1, 1)) != 0 {
		t.Errorf("content of nothing %v", c)
	}
}

func TestFormat(t *testing.T) {
	for _, tc := range []struct {
		p     Poly
		first []string
		want  string
	}{
		{Poly{}, nil, "0"},
		{Int(-3), nil, "-3"},
		{sum(m("R2", "C1"), m("R1", "C1"), m("R2", "C2")), []string{"R1", "R2", "C1", "C2"}, "R1*C1 + R2*C1 + R2*C2"},
		{sum(m("R10"), m("R2")), nil, "R2 + R10"},
		{sum(prod(-1, "a", "b"), Const(big.NewRat(1, 4)), Const(big.NewRat(1, 3)).Mul(m("a", "a"))), nil, "0.25 + 1/3*a*a - a*b"},
		{prod(-2, "LP1.R3", "U1.a0"), []string{"LP1.R3"}, "-2*LP1.R3*U1.a0"},
	} {
		if got := tc.p.Format(tc.first); got != tc.want {
			t.Errorf("Format = %q, want %q", got, tc.want)
		}
	}
	for _, tc := range []struct {
		r    *big.Rat
		want string
	}{
		{big.NewRat(7, 1), "7"}, {big.NewRat(1, 1000), "0.001"}, {big.NewRat(-5, 8), "-0.625"}, {big.NewRat(2, 7), "2/7"},
	} {
		if got := FormatRat(tc.r); got != tc.want {
			t.Errorf("FormatRat(%v) = %q, want %q", tc.r, got, tc.want)
		}
	}
}

func TestNaturalOrder(t *testing.T) {
	names := []string{"R10", "R2", "C1", "R1", "Stage9.R3", "R01"}
	want := "C1 R01 R1 R2 R10 Stage9.R3" // numeric tie broken by bytes; letters by bytes
	for i := range names {
		for j := i + 1; j < len(names); j++ {
			if varLess(names[j], names[i]) {
				names[i], names[j] = names[j], names[i]
			}
		}
	}
	if got := strings.Join(names, " "); got != want {
		t.Errorf("order %q, want %q", got, want)
	}
}

func TestSubstCoeffsEval(t *testing.T) {
	// p = 1 + s·R·C + s²·L·C
	p := sum(Int(1), m("s", "R", "C"), m("s", "s", "L", "C"))
	cs := p.CoeffsIn("s")
	want := []Poly{Int(1), m("R", "C"), m("L", "C")}
	if !polysEqual(cs, want) {
		t.Errorf("CoeffsIn = %v, want %v", strs(cs), strs(want))
	}
	if !FromPowers("s", cs).Equal(p) {
		t.Error("FromPowers(CoeffsIn(p)) ≠ p")
	}
	q := p.Subst(map[string]*big.Rat{"R": big.NewRat(2, 1), "C": big.NewRat(1, 2)})
	if !q.Equal(sum(Int(1), m("s"), prod(1, "s", "s", "L").Scale(big.NewRat(1, 2)))) {
		t.Errorf("Subst = %v", q)
	}
	v, err := p.Eval(map[string]complex128{"s": 1i, "R": 2, "C": 0.5, "L": 4})
	if err != nil || cmplx.Abs(v-complex(1-2, 1)) > 1e-15 {
		t.Errorf("Eval = %v, %v; want -1+1i", v, err)
	}
	if _, err := p.Eval(map[string]complex128{"s": 1}); err == nil || !strings.Contains(err.Error(), `"C"`) {
		t.Errorf("missing value: %v", err)
	}
	if got, err := FromTerms(p.Terms()); err != nil || !got.Equal(p) {
		t.Errorf("FromTerms(Terms(p)) = %v", got)
	}
}

func TestEquivalent(t *testing.T) {
	// Unity-gain Sallen-Key (Sedra & Smith) in two scalings: equivalent.
	d := []Poly{Int(1), sum(m("R1", "C2"), m("R2", "C2")), m("R1", "R2", "C1", "C2")}
	d2 := []Poly{Int(2), prod(2, "R1", "C2").Add(prod(2, "R2", "C2")), prod(2, "R1", "R2", "C1", "C2")}
	if ok, diff := Equivalent([]Poly{Int(1)}, d, []Poly{Int(2)}, d2); !ok {
		t.Errorf("scaled forms not equivalent: %v", diff)
	}
	// A hand derivation with R1·C2 written as R1·C1: wrong by one term.
	hand := []Poly{Int(1), sum(m("R1", "C1"), m("R2", "C2")), m("R1", "R2", "C1", "C2")}
	ok, diff := Equivalent([]Poly{Int(1)}, hand, []Poly{Int(2)}, d2)
	if ok {
		t.Fatal("wrong form reported equivalent")
	}
	if len(diff.Powers) != 1 || !diff.Powers[0].InDen || diff.Powers[0].Power != 1 ||
		!diff.Powers[0].Extra.Equal(m("R1", "C1")) || !diff.Powers[0].Missing.Equal(m("R1", "C2")) {
		t.Errorf("diff = %v, want den s^1: missing C2*R1; extra C1*R1", diff)
	}
	if !strings.Contains(diff.String(), "den s^1: missing") {
		t.Errorf("diff text %q", diff)
	}
}
