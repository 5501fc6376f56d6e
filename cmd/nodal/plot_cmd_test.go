package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"

	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// validSVG parses b as XML to the end and checks the root is <svg>.
func validSVG(t *testing.T, b []byte) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	root := ""
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Fatalf("root element %q, want svg", root)
	}
}

// Every --plot of the commands writes a valid SVG or PNG file.
func TestPlotFiles(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name string
		args []string
		file string
	}{
		{"bode svg", []string{"sweep", rcFile, "--out", "out", "--out", "in"}, "bode.svg"},
		{"bode png", []string{"sweep", rcFile, "--out", "out"}, "bode.png"},
		{"pole-zero", []string{"transfer", rcFile, "--out", "out"}, "pz.svg"},
		{"step", []string{"time", rcFile, "--out", "out"}, "step.png"},
		{"impulse", []string{"time", rcFile, "--input", "impulse", "--out", "out"}, "impulse.svg"},
	}
	for _, tc := range cases {
		path := filepath.Join(dir, tc.file)
		r := runNodal(t, "", append(tc.args, "--plot", path)...)
		if r.code != 0 {
			t.Fatalf("%s: code %d: %s", tc.name, r.code, r.stderr)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if filepath.Ext(path) == ".svg" {
			validSVG(t, b)
		} else {
			img, err := png.Decode(bytes.NewReader(b))
			if err != nil || img.Bounds().Dx() == 0 || img.Bounds().Dy() == 0 {
				t.Fatalf("%s: PNG does not decode to a picture: %v", tc.name, err)
			}
		}
	}
	r := runNodal(t, "", "sweep", rcFile, "--out", "out", "--plot", filepath.Join(dir, "bode.gif"))
	if r.code != exitInput {
		t.Errorf("unsupported plot extension: code %d, want 2", r.code)
	}
}

// The plotted Bode series are the computed response, point for point, and
// the −3 dB mark sits at 1/(2πRC) (common practice).
func TestBodeFigureMatchesResponse(t *testing.T) {
	src, err := os.ReadFile(rcFile)
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.Load(rcFile, src, nil)
	if err != nil {
		t.Fatal(err)
	}
	sys, err := mna.Build(c, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	if err != nil {
		t.Fatal(err)
	}
	resp, err := response.Sweep(context.Background(), sys, response.LogGrid(10, 1e5, 10), 1)
	if err != nil {
		t.Fatal(err)
	}
	fig, err := bodeFigure("rc", []*transfer.TransferFunction{systemTF(sys)}, []*response.Response{resp})
	if err != nil {
		t.Fatal(err)
	}
	series := fig.Series()
	mag, marks := series["magnitude/out"], series["magnitude/out/-3dB"]
	if mag == nil {
		t.Fatalf("no magnitude trace among %v", keys(series))
	}
	for i, p := range mag {
		if p[0] != resp.FreqHz[i] || p[1] != resp.MagDB[i] {
			t.Fatalf("point %d plotted (%g, %g), computed (%g, %g)", i, p[0], p[1], resp.FreqHz[i], resp.MagDB[i])
		}
	}
	if len(marks) != 1 || math.Abs(marks[0][0]-rcCornerHz) > 1e-6*rcCornerHz {
		t.Errorf("−3 dB mark %v, want %g Hz (series %v)", marks, rcCornerHz, keys(series))
	}
}

func keys(m map[string][][2]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}
