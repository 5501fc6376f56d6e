package testcircuit

import (
	"encoding/json"
	"fmt"
	"os"
	"strconv"
)

// LadderF3dBReference reads the golden file of
// testdata/reference/ladder/gen_ladder_f3db.py at path (relative to the
// calling test's package) and returns the f3db (Hz) of each uniform RC
// ladder it holds (R = 1 kΩ, C = 10 nF), by number of sections. The
// values are 50-digit mpmath roots, parsed to the nearest float64.
func LadderF3dBReference(path string) (map[int]float64, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var g struct {
		Ladders []struct {
			Sections int    `json:"sections"`
			F3dBHz   string `json:"f3db_hz"`
		} `json:"ladders"`
	}
	if err := json.Unmarshal(raw, &g); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	out := map[int]float64{}
	for _, l := range g.Ladders {
		f, err := strconv.ParseFloat(l.F3dBHz, 64)
		if err != nil {
			return nil, fmt.Errorf("%s: %d sections: %w", path, l.Sections, err)
		}
		out[l.Sections] = f
	}
	return out, nil
}
