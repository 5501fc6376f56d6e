package plot

import (
	"bytes"
	"math"
	"testing"
)

// TestDensity: the traces keep their data under "PANEL/LABEL", points
// that are zero or not finite are dropped, the y axis spans whole decades
// around the data, and bad input is refused.
func TestDensity(t *testing.T) {
	f := logGrid(10, 1e5, 41)
	total := make([]float64, len(f))
	part := make([]float64, len(f))
	for i, v := range f {
		total[i] = 4e-9 * math.Sqrt(1+100/v)
		part[i] = 4e-9
	}
	part[3] = 0
	fig, err := Density([]DensityTrace{{Label: "total", FreqHz: f, Density: total}, {Label: "R1", FreqHz: f, Density: part}}, DensityOptions{Title: "t"})
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	if len(s["density/total"]) != len(f) || len(s["density/R1"]) != len(f)-1 {
		t.Errorf("series lengths %d, %d; want %d, %d", len(s["density/total"]), len(s["density/R1"]), len(f), len(f)-1)
	}
	var b bytes.Buffer
	if err := fig.Encode(&b, FormatSVG); err != nil || b.Len() == 0 {
		t.Errorf("encode: %v", err)
	}
	in, err := Density([]DensityTrace{{Label: "in", FreqHz: f, Density: part}}, DensityOptions{Panel: "input"})
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := in.Series()["input/in"]; !ok {
		t.Errorf("panel name not used: %v", in.Series())
	}
	for name, tr := range map[string][]DensityTrace{
		"none":       nil,
		"no label":   {{FreqHz: f, Density: total}},
		"duplicate":  {{Label: "a", FreqHz: f, Density: total}, {Label: "a", FreqHz: f, Density: total}},
		"length":     {{Label: "a", FreqHz: f, Density: total[:3]}},
		"all zero":   {{Label: "a", FreqHz: f, Density: make([]float64, len(f))}},
		"decreasing": {{Label: "a", FreqHz: []float64{10, 1}, Density: []float64{1, 1}}},
	} {
		if _, err := Density(tr, DensityOptions{}); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}
