package timeresp

import (
	"encoding/json"
	"nodal/analysis/check"
	"nodal/analysis/transfer"
	"strings"
	"testing"
)

// TestComplexJSONNames pins the JSON field names of poles in a time
// response and in a check result to "re" and "im" (the names `nodal step`
// and `nodal check` have always written), since both now share Complex.
func TestComplexJSONNames(t *testing.T) {
	for name, v := range map[string]any{
		"time response": TimeResponse{UnstablePoles: []transfer.Complex{{Re: 1000, Im: -2}}, AxisPoles: []transfer.Complex{{Im: 3}}},
		"root match":    check.RootMatch{Circuit: &transfer.Complex{Re: 1000, Im: -2}},
	} {
		b, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), `{"re":1000,"im":-2}`) {
			t.Errorf("%s: %s lacks {\"re\":1000,\"im\":-2}", name, b)
		}
	}
}
