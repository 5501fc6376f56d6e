package analysis

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// referenceGolden is the part of testdata/reference/golden/NAME.json that
// Extract is checked against (written by testdata/reference/gen_reference.py:
// hand-written nodal equations solved exactly with sympy, roots by nroots
// at 30 digits; see testdata/reference/README.md).
type referenceGolden struct {
	Input, Output string
	Order         int
	Num, Den      []float64
	Poles, Zeros  []struct{ Re, Im float64 }
	Cancelled     []struct{ Re, Im float64 }
}

func TestReferenceCircuitFiles(t *testing.T) {
	files, err := filepath.Glob("../testdata/reference/circuits/*.nodal")
	if err != nil || len(files) == 0 {
		t.Fatalf("no reference circuits: %v", err)
	}
	for _, file := range files {
		name := strings.TrimSuffix(filepath.Base(file), ".nodal")
		t.Run(name, func(t *testing.T) {
			raw, err := os.ReadFile(filepath.Join("../testdata/reference/golden", name+".json"))
			if err != nil {
				t.Fatal(err)
			}
			var g referenceGolden
			if err := json.Unmarshal(raw, &g); err != nil {
				t.Fatal(err)
			}
			src, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			c, err := netlist.Load(file, src, nil)
			if err != nil {
				t.Fatal(err)
			}
			sys, err := mna.Build(c, mna.Input{Source: g.Input}, mna.Output{Kind: mna.NodeVoltage, Node: g.Output})
			if err != nil {
				t.Fatal(err)
			}
			tf := mustExtract(t, sys)
			conv := func(r []struct{ Re, Im float64 }) [][2]float64 {
				out := make([][2]float64, len(r))
				for i, v := range r {
					out[i] = [2]float64{v.Re, v.Im}
				}
				return out
			}
			scale := rootCentre(tf.Poles)
			matchRoots(t, "poles", tf.Poles, conv(g.Poles), 1e-8, scale)
			matchRoots(t, "zeros", tf.Zeros, conv(g.Zeros), 1e-8, scale)
			if len(g.Cancelled) > 0 || len(tf.Cancelled) > 0 {
				matchRoots(t, "cancelled", tf.Cancelled, conv(g.Cancelled), 1e-6, scale)
			}
			matchCoeffs(t, "den", tf.Den, g.Den, 1e-8)
			matchCoeffs(t, "num", tf.Num, g.Num, 1e-8)
			if tf.Order()+len(tf.Cancelled) != g.Order && tf.Order() != g.Order {
				t.Errorf("order %d (+%d cancelled), golden %d", tf.Order(), len(tf.Cancelled), g.Order)
			}
		})
	}
}
