package main

import (
	"context"
	"io"
	"os"
	"path/filepath"
	"testing"

	"nodal/cmd/nodal/plot"
)

// TestReportFiguresHaveNoOverlappingLabels builds the report of the demo
// and of every example circuit and checks that no two strings of any of
// its figures (notes of marks, tick labels, titles, legends) overlap.
func TestReportFiguresHaveNoOverlappingLabels(t *testing.T) {
	files, err := filepath.Glob("../../testdata/examples/*.nodal")
	if err != nil || len(files) == 0 {
		t.Fatalf("examples: %v %v", files, err)
	}
	e := &env{ctx: context.Background(), stdout: io.Discard, stderr: io.Discard}
	sources := map[string][]byte{demoName: demoCircuit}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		sources[filepath.Base(f)] = b
	}
	for name, src := range sources {
		l, err := elaborate(e, name, src, nil)
		if err != nil {
			t.Fatal(err)
		}
		out := "out" // or, with named responses, every response of the file
		if len(l.circuit.ResponseNames()) > 0 {
			out = ""
		}
		d, err := buildReport(e, l, tfRequest{Out: out}, reportRun{Runs: 200, Seed: 1, TempK: 300})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		figs := map[string]*plot.Figure{"bode": d.Bode.Figure, "pole-zero": d.PoleZero.Figure}
		if d.Step != nil {
			figs["step"] = d.Step.Plot.Figure
		}
		if d.MonteCarlo != nil {
			figs["band"], figs["histograms"] = d.MonteCarlo.Band.Figure, d.MonteCarlo.Histograms.Figure
		}
		for what, fig := range figs {
			if fig == nil {
				continue
			}
			boxes := fig.TextBoxes()
			if len(boxes) < 4 {
				t.Errorf("%s %s: %d strings found", name, what, len(boxes))
			}
			for i := range boxes {
				for j := i + 1; j < len(boxes); j++ {
					if boxes[i].Overlaps(boxes[j]) {
						t.Errorf("%s %s: %q overlaps %q", name, what, boxes[i].Text, boxes[j].Text)
					}
				}
			}
		}
	}
}
