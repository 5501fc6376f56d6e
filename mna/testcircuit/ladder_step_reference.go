package testcircuit

import (
	"encoding/json"
	"fmt"
	"os"
)

// LadderStep is one ladder of the golden file of
// testdata/reference/ladder_step/gen_ladder_step.py: a uniform RC ladder
// (Sections sections of ROhm and CFarad) read at Output, with its step and
// impulse responses at the times TS (s), from a modal solution of the
// hand-written ladder equations checked there against scipy's expm.
type LadderStep struct {
	Sections int       `json:"sections"`
	ROhm     float64   `json:"r_ohm"`
	CFarad   float64   `json:"c_farad"`
	UntilS   float64   `json:"until_s"`
	Output   string    `json:"output"`
	TS       []float64 `json:"t_s"`
	Step     []float64 `json:"step"`
	Impulse  []float64 `json:"impulse"`
}

// LadderStepReference reads that golden file at path (relative to the
// calling test's package).
func LadderStepReference(path string) ([]LadderStep, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var g struct {
		Ladders []LadderStep `json:"ladders"`
	}
	if err := json.Unmarshal(raw, &g); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return g.Ladders, nil
}
