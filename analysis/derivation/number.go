package derivation

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"

	"nodal/netlist/syntax"
)

// parseNumber decodes a Number token with the number token every nodal
// grammar shares (syntax.ParseNumber: SI prefixes, IEC 60062 codes such
// as 4k7, attached units such as 2kHz), so a value reads the same here as
// in a circuit file. The unit only documents the value; the coefficient is
// its SI value. In a transfer function a number may not carry the unit s:
// "2s" or "2ms" beside the Laplace variable s is almost always a missing
// "*".
//
// exact is the literal's exact value (Mantissa × 10^Exp10), nil on error.
func parseNumber(tok string, inS bool) (v float64, exact *big.Rat, tol float64, err error) {
	n, err := syntax.ParseNumber(tok)
	if err != nil {
		return 0, nil, 0, fmt.Errorf("number %v (write * between a number and a name)", err)
	}
	if inS && n.Unit == syntax.UnitSecond {
		return 0, nil, 0, fmt.Errorf("number %q carries the unit s, but s is the Laplace variable here: write %s*s", tok, tok[:len(tok)-1])
	}
	return n.Value, n.Rat(), writtenTol(n), nil
}

// writtenTol is half a unit in the last written digit of the literal tok
// with value n, in SI: 0 for a whole number with no exponent, prefix or
// unit, which is taken as exact.
func writtenTol(n syntax.Number) float64 {
	m := n.Mantissa
	e := 0
	if i := strings.IndexAny(m, "eE"); i >= 0 {
		e, _ = strconv.Atoi(m[i+1:])
		m = m[:i]
	} else if n.Exp10 == 0 && n.Unit == "" && !strings.Contains(m, ".") {
		return 0
	}
	if i := strings.IndexByte(m, '.'); i >= 0 {
		e -= len(m) - i - 1
	}
	return 0.5 * math.Pow(10, float64(e+n.Exp10))
}
