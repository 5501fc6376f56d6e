package derivation

import (
	"fmt"

	"nodal/netlist/syntax"
)

// parseNumber decodes a Number token with the number token every nodal
// grammar shares (syntax.ParseNumber: SI prefixes, IEC 60062 codes such
// as 4k7, attached units such as 2kHz), so a value reads the same here as
// in a circuit file. The unit only documents the value; the coefficient is
// its SI value. In a transfer function a number may not carry the unit s:
// "2s" or "2ms" beside the Laplace variable s is almost always a missing
// "*".
func parseNumber(tok string, inS bool) (float64, error) {
	n, err := syntax.ParseNumber(tok)
	if err != nil {
		return 0, fmt.Errorf("number %v (write * between a number and a name)", err)
	}
	if inS && n.Unit == syntax.UnitSecond {
		return 0, fmt.Errorf("number %q carries the unit s, but s is the Laplace variable here: write %s*s", tok, tok[:len(tok)-1])
	}
	return n.Value, nil
}
