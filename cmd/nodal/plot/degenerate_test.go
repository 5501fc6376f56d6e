package plot

import (
	"bytes"
	"testing"
)

func TestDegenerateInputsStillDraw(t *testing.T) {
	figs := map[string]func() (*Figure, error){
		"identical values": func() (*Figure, error) { return Histogram("q", []float64{0.7, 0.7, 0.7}, 0, 0.7) },
		"one value":        func() (*Figure, error) { return Histogram("q", []float64{3}, 4, 3) },
		"no roots":         func() (*Figure, error) { return PoleZero(nil, nil, PoleZeroOptions{}) },
		"root at origin":   func() (*Figure, error) { return PoleZero([]complex128{0}, nil, PoleZeroOptions{}) },
		"flat step":        func() (*Figure, error) { return Step([]float64{0, 1e-3}, []float64{0, 0}, StepMarks{}, StepOptions{}) },
	}
	for name, mk := range figs {
		t.Run(name, func(t *testing.T) {
			fig, err := mk()
			if err != nil {
				t.Fatal(err)
			}
			var b bytes.Buffer
			if err := fig.Encode(&b, FormatSVG); err != nil {
				t.Fatal(err)
			}
			checkSVG(t, name, b.Bytes())
			for _, l := range fig.Layout() {
				if !(l.XMax > l.XMin && l.YMax > l.YMin && l.Width > 0 && l.Height > 0) {
					t.Errorf("degenerate layout %+v", l)
				}
			}
		})
	}
}
