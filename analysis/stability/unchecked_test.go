package stability

import (
	"testing"

	"nodal/mna/testcircuit"
)

// TestPastMaxUnknownsIsUnchecked: a circuit past MaxUnknowns is not
// judged (its natural frequencies are a dense O(n³) problem), and says so:
// the class is Unchecked, never Stable, with no frequencies.
func TestPastMaxUnknownsIsUnchecked(t *testing.T) {
	big := testcircuit.RCLadder(MaxUnknowns, 1, 1e-12) // MaxUnknowns+2 unknowns
	res, err := Analyze(big, Options{Explain: true})
	if err != nil {
		t.Fatal(err)
	}
	if res.Class != Unchecked || res.Class.String() != "not checked" || len(res.Natural) != 0 || len(res.Offending) != 0 {
		t.Fatalf("class %v (%q), %d natural, %d offending; want Unchecked and none", res.Class, res.Class, len(res.Natural), len(res.Offending))
	}
	small := testcircuit.RCLadder(10, 1, 1e-12)
	if res, err := Analyze(small, Options{}); err != nil || res.Class != Stable {
		t.Fatalf("a 10-section ladder: %v, %v; want stable (RC ladders are passive, common practice)", res, err)
	}
}
