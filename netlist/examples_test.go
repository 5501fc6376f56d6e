package netlist

import (
	"math"
	"os"
	"path/filepath"
	"testing"
)

// TestExamples parses and elaborates every example circuit and checks a
// value that follows from its documented design formula.
func TestExamples(t *testing.T) {
	files, err := filepath.Glob("../testdata/examples/*.nodal")
	if err != nil || len(files) < 3 {
		t.Fatalf("examples: %v %v", files, err)
	}
	checks := map[string]func(*Circuit) (string, float64, float64){
		// Sallen-Key equal-R Butterworth: C1 = 2Q·C0 = √2·10 nF.
		"logger_antialias.nodal": func(c *Circuit) (string, float64, float64) {
			p, _ := c.Part("C1")
			return "C1", p.Value, math.Sqrt2 * 10e-9
		},
		// The gain block instance A1 carries the file's Rf.
		"bridge_inamp.nodal": func(c *Circuit) (string, float64, float64) {
			p, _ := c.Part("A1.Rfb")
			return "A1.Rfb", p.Value, 24.9e3
		},
		// The opamp carries its noise model: en = 6 nV/√Hz.
		"photodiode_tia.nodal": func(c *Circuit) (string, float64, float64) {
			p, _ := c.Part("U1")
			return "U1.en", p.EnVPerRtHz, 6e-9
		},
		"tone_stage.nodal": func(c *Circuit) (string, float64, float64) {
			p, _ := c.Part("BASS.Rsh")
			return "BASS.Rsh", p.Value, 2.2e3
		},
	}
	for _, path := range files {
		src, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		c, err := Load(filepath.Base(path), src, nil)
		if err != nil {
			t.Errorf("%s: %v", path, err)
			continue
		}
		if len(c.Warnings) > 0 {
			t.Errorf("%s: warnings: %v", path, c.Warnings)
		}
		if check, ok := checks[filepath.Base(path)]; ok {
			if name, got, want := check(c); !near(got, want) {
				t.Errorf("%s: %s = %v; want %v", path, name, got, want)
			}
		}
		if len(c.Requirements) == 0 || len(c.Variations) == 0 {
			t.Errorf("%s: no requirements or tolerances", path)
		}
	}
}
