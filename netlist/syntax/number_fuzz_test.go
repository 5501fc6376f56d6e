package syntax

import (
	"math"
	"math/big"
	"regexp"
	"testing"
)

// numberToken is NumberPattern anchored: the whole text is one token.
var numberToken = regexp.MustCompile(`^(?:` + NumberPattern + `)$`)

// FuzzParseNumber checks the shared number token on any text: no panic; an
// accepted number is finite, its unit is a normalised symbol, its exact
// form Mantissa × 10^Exp10 agrees with Value to float64 rounding, and
// ParseValue reads the same text to the same value (the command line and
// the grammars read numbers alike). Text the lexer pattern would not take
// as one token is only checked for not panicking.
func FuzzParseNumber(f *testing.F) {
	for _, s := range []string{"1k5", "4n7", "2kHz", "10kΩ", "4.7u", "1e3", "1.5e-3", "4K7", "2R2", "100R", "5%", "30°", "3kdB", "1e999", "2R2F", "1.5e-3k", "0.0", ".5", "9e-400", "1Meg", "2.2MEGΩ"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		n, err := ParseNumber(s)
		if err != nil {
			return
		}
		if math.IsNaN(n.Value) || math.IsInf(n.Value, 0) {
			t.Fatalf("%q = %v", s, n.Value)
		}
		if n.Unit != "" {
			if u, ok := UnitSymbol(n.Unit); !ok || u != n.Unit {
				t.Fatalf("%q: unit %q is not a normalised symbol", s, n.Unit)
			}
		}
		m, ok := new(big.Rat).SetString(n.Mantissa)
		if !ok {
			t.Fatalf("%q: mantissa %q is not a decimal", s, n.Mantissa)
		}
		scale := new(big.Rat).SetFrac(big.NewInt(1), big.NewInt(1))
		ten := big.NewRat(10, 1)
		for k := 0; k < abs(n.Exp10); k++ {
			scale.Mul(scale, ten)
		}
		if n.Exp10 < 0 {
			scale.Inv(scale)
		}
		exact, _ := m.Mul(m, scale).Float64()
		if r := n.Rat(); r == nil || (n.Value != 0 && r.Cmp(m) != 0) {
			t.Fatalf("%q: Rat %v, want Mantissa × 10^Exp10 = %v", s, r, m)
		}
		if d := math.Abs(exact - n.Value); d > 4e-16*math.Abs(exact) && d > 1e-300 {
			t.Fatalf("%q: Value %v but Mantissa %s × 10^%d = %v", s, n.Value, n.Mantissa, n.Exp10, exact)
		}
		if numberToken.MatchString(s) {
			v, err := ParseValue(s, "")
			if err != nil || v != n.Value {
				t.Fatalf("%q: ParseValue = %v, %v; ParseNumber = %v", s, v, err, n.Value)
			}
		}
	})
}

func abs(k int) int {
	if k < 0 {
		return -k
	}
	return k
}
