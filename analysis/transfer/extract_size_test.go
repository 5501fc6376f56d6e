package transfer

import (
	"fmt"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// TestExtractRefusesPastSize: one unknown past MaxExtractUnknowns is
// refused with a message pointing to a sweep, before any dense copy; at
// the size itself the refusal does not apply (a ladder of k sections has
// k+2 unknowns: k+1 nodes and the source branch).
func TestExtractRefusesPastSize(t *testing.T) {
	k := MaxExtractUnknowns - 1
	sys, err := mna.Build(testcircuit.RCLadder(k, 1e3, 1e-8), mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprint("n", k)})
	if err != nil {
		t.Fatal(err)
	}
	if sys.Size() != MaxExtractUnknowns+1 {
		t.Fatalf("%d unknowns", sys.Size())
	}
	_, err = Extract(sys)
	if err == nil || !strings.Contains(err.Error(), "more than the 2000") || !strings.Contains(err.Error(), "--from") {
		t.Errorf("error %v", err)
	}
}
