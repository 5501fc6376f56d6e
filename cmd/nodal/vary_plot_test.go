package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/cmd/nodal/plot"
)

// svgTexts parses an SVG document and returns the content of every
// <text> element; it fails the test when the file is not valid SVG.
func svgTexts(t *testing.T, path string) []string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(b))
	var texts []string
	root, inText := "", false
	var cur strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: not valid XML: %v", path, err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = el.Name.Local
			}
			if el.Name.Local == "text" {
				inText = true
				cur.Reset()
			}
		case xml.CharData:
			if inText {
				cur.Write(el)
			}
		case xml.EndElement:
			if el.Name.Local == "text" {
				inText = false
				texts = append(texts, strings.TrimSpace(cur.String()))
			}
		}
	}
	if root != "svg" {
		t.Fatalf("%s: root element %q, want svg", path, root)
	}
	return texts
}

// A --vary --plot run of every command that takes both writes one SVG
// whose legend holds one entry per value: each value's label is the text
// of exactly one element, in the order of the values.
func TestVaryPlotLegend(t *testing.T) {
	const tia = "../../testdata/examples/photodiode_frontend.nodal"
	cases := []struct {
		name   string
		args   []string
		labels []string
		first  string // the first section of the text output
	}{
		{"time", []string{"time", rcFile, "--vary", "R=1k,3k,10k"}, []string{"R=1k", "R=3k", "R=10k"}, "R=1k"},
		{"impulse", []string{"time", rcFile, "--input", "impulse", "--vary", "R=1k,3k"}, []string{"R=1k", "R=3k"}, "R=1k"},
		{"impedance", []string{"impedance", rcFile, "--node", "out", "--vary", "R=1k,2k,4.7k"}, []string{"R=1k", "R=2k", "R=4.7k"}, "R=1k"},
		{"noise", []string{"noise", rcFile, "--out", "out", "--vary", "R=1k,10k"}, []string{"total, R=1k", "total, R=10k"}, "R=1k"},
		{"loop", []string{"loop", tia, "--at", "U1", "--vary", "Cf=0.5p,1p,2.2p"}, []string{"T, Cf=500f", "T, Cf=1p", "T, Cf=2.2p"}, "Cf=500f"},
		{"transfer", []string{"transfer", rcFile, "--vary", "R=1k,2k", "--vary", "C1=10n,47n"}, []string{"R=1k, C1=10n", "R=1k, C1=47n", "R=2k, C1=10n", "R=2k, C1=47n"}, "R=1k, C1=10n"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			svg := filepath.Join(t.TempDir(), tc.name+".svg")
			r := runNodal(t, "", append(tc.args, "--plot", svg)...)
			if r.code != 0 {
				t.Fatalf("exit %d: %s", r.code, r.stderr)
			}
			if !strings.Contains(r.stdout, "── "+tc.first+" ──") {
				t.Errorf("stdout lacks the section of %s:\n%s", tc.first, r.stdout)
			}
			texts := svgTexts(t, svg)
			var order []string
			for _, s := range texts {
				for _, l := range tc.labels {
					if s == l {
						order = append(order, s)
					}
				}
			}
			if strings.Join(order, "|") != strings.Join(tc.labels, "|") {
				t.Errorf("legend entries %q, want %q (texts %q)", order, tc.labels, texts)
			}
		})
	}
	// A bad plot path is refused before any analysis.
	r := runNodal(t, "", "time", rcFile, "--vary", "R=1k,2k", "--plot", filepath.Join(t.TempDir(), "x.gif"))
	if r.code != 2 || r.stdout != "" {
		t.Errorf("--plot x.gif: exit %d, stdout %q", r.code, r.stdout)
	}
}

// The step traces handed to the --vary plot of the RC low-pass reach
// 1 − 1/e = 63.2 % of the final value (the DC gain, 1) at t = RC for each
// R (first-order RC step response; common practice), and the figure
// draws exactly those points.
func TestVaryPlotStepTimeConstant(t *testing.T) {
	const c0 = 15.9155e-9
	rs := []float64{1e3, 3e3, 10e3}
	c := &timeCmd{Input: "step", Points: 2001}
	c.File = rcFile
	svg := filepath.Join(t.TempDir(), "step.svg")
	c.Plot = svg
	var out, errb bytes.Buffer
	e := &env{ctx: context.Background(), stdin: strings.NewReader(""), stdout: &out, stderr: &errb}
	var runs []variantPlot[plot.TimeTrace]
	var series map[string][][2]float64
	capture := func(labels []string, data []variantPlot[plot.TimeTrace]) (*plot.Figure, error) {
		runs = data
		fig, err := timeOverlay(labels, data)
		if err == nil {
			series = fig.Series()
		}
		return fig, err
	}
	err := runVaried(e, &c.circuitArgs, &varyArgs{Vary: []string{"R=1k,3k,10k"}}, "", svg, "table",
		func(e *env) error { return c.run(e, "step") }, capture)
	if err != nil {
		t.Fatalf("%v\n%s", err, errb.String())
	}
	if len(runs) != len(rs) {
		t.Fatalf("%d traces handed to the plot, want %d", len(runs), len(rs))
	}
	labels := []string{"R=1k", "R=3k", "R=10k"}
	for i, rv := range rs {
		tr := runs[i].data
		tau := rv * c0
		final := 1.0 // DC gain of the RC divider
		got := linearAt(tr.TS, tr.Y, tau)
		if want := (1 - math.Exp(-1)) * final; math.Abs(got-want) > 1e-4 {
			t.Errorf("R=%g: y(RC = %g s) = %.6f, want %.6f", rv, tau, got, want)
		}
		if end := tr.Y[len(tr.Y)-1]; math.Abs(end-final) > 2e-3 {
			t.Errorf("R=%g: last sample %g, want close to the final value %g", rv, end, final)
		}
		pts := series[plot.PanelStep+"/"+labels[i]]
		if len(pts) != len(tr.TS) || pts[len(pts)/2][1] != tr.Y[len(pts)/2] {
			t.Errorf("R=%g: the figure's series %q holds %d points, the trace %d", rv, labels[i], len(pts), len(tr.TS))
		}
	}
	if texts := svgTexts(t, svg); !strings.Contains(strings.Join(texts, "\n"), "one trace per value") {
		t.Errorf("title lacks the overlay note: %q", texts)
	}
}

// linearAt interpolates y at x linearly on increasing xs (NaN outside).
func linearAt(xs, ys []float64, x float64) float64 {
	for i := 1; i < len(xs); i++ {
		if xs[i] >= x {
			return ys[i-1] + (x-xs[i-1])/(xs[i]-xs[i-1])*(ys[i]-ys[i-1])
		}
	}
	return math.NaN()
}
