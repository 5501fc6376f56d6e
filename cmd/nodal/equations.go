package main

import (
	"fmt"
	"io"
	"strings"

	"nodal/mna"
)

// equationsCmd prints the MNA system (G + sC)x = b.
type equationsCmd struct {
	circuitArgs
	In     string `help:"Input source whose unit amplitude makes b; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Format string `help:"Output format: table, json (dense G and C) or sparse-json (G and C as rows, cols, vals of their non-zeros; any size) (default: from the -o extension, else table)." placeholder:"table|json|sparse-json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *equationsCmd) Help() string {
	return `Shows the modified nodal analysis equations nodal solves: the unknowns by
name (node voltages v(NODE), branch currents i(PART)), the real matrices G
and C of Y(s) = G + sC, and the excitation vector b for a unit input.

Example:

    nodal equations testdata/examples/logger_antialias.nodal --in Vin`
}

// Run prints the equations.
func (c *equationsCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json", "sparse-json"); err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	out := mna.Output{Kind: mna.NodeVoltage}
	if len(l.circuit.Nodes) > 1 {
		out.Node = l.circuit.Nodes[1]
	}
	sys, err := mna.Build(l.circuit, mna.Input{Source: c.In}, out)
	if err != nil && sys == nil {
		return err
	}
	if err != nil {
		// Print the equations anyway: they show why the system is singular.
		fmt.Fprintf(e.stderr, "nodal: %v\n", err)
	}
	if n := sys.Size(); n > maxDenseEquations && c.Format != "sparse-json" {
		return fmt.Errorf("equations: %d unknowns is more than the %d written as dense n×n matrices: use --format sparse-json (G and C as their non-zeros)", n, maxDenseEquations)
	}
	werr := writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
		switch c.Format {
		case "json":
			return writeJSON(w, equationsJSON(sys))
		case "sparse-json":
			return writeJSON(w, equationsSparseJSON(sys))
		}
		return equationsTable(w, sys)
	})
	if werr != nil {
		return werr
	}
	return err
}

// maxDenseEquations is the most unknowns `equations` writes: its table
// and JSON are dense n×n (2,000 unknowns is about 100 MB of JSON).
const maxDenseEquations = 2000

// equationsJSON is the JSON document of `nodal equations`.
func equationsJSON(sys *mna.System) any {
	n := sys.Size()
	g := make([][]float64, n)
	cm := make([][]float64, n)
	for i := 0; i < n; i++ {
		g[i] = make([]float64, n)
		cm[i] = make([]float64, n)
		for j := 0; j < n; j++ {
			g[i][j] = sys.G.At(i, j)
			cm[i][j] = sys.C.At(i, j)
		}
	}
	return struct {
		Input    string      `json:"input"`
		Unknowns []string    `json:"unknowns"`
		G        [][]float64 `json:"G"`
		C        [][]float64 `json:"C"`
		B        []float64   `json:"b"`
	}{sys.Input.Source, sys.Unknowns, g, cm, sys.B}
}

// sparseMatrixJSON is a matrix by its non-zeros: entry k is
// (rows[k], cols[k]) = vals[k], 0-based, column by column.
type sparseMatrixJSON struct {
	Rows []int     `json:"rows"`
	Cols []int     `json:"cols"`
	Vals []float64 `json:"vals"`
}

func sparseJSON(m *mna.Sparse) sparseMatrixJSON {
	out := sparseMatrixJSON{Rows: []int{}, Cols: []int{}, Vals: []float64{}}
	m.Each(func(i, j int, v float64) {
		out.Rows = append(out.Rows, i)
		out.Cols = append(out.Cols, j)
		out.Vals = append(out.Vals, v)
	})
	return out
}

// equationsSparseJSON is the sparse JSON document of `nodal equations`.
func equationsSparseJSON(sys *mna.System) any {
	return struct {
		Input    string           `json:"input"`
		Unknowns []string         `json:"unknowns"`
		G        sparseMatrixJSON `json:"G"`
		C        sparseMatrixJSON `json:"C"`
		B        []float64        `json:"b"`
	}{sys.Input.Source, sys.Unknowns, sparseJSON(sys.G), sparseJSON(sys.C), sys.B}
}

// equationsTable prints G, C and b as tables with named rows and columns.
func equationsTable(w io.Writer, sys *mna.System) error {
	n := sys.Size()
	fmt.Fprintf(w, "(G + sC)·x = b for a unit input %s: %d unknowns, columns x, rows the equations\n\n", sys.Input.Source, n)
	for _, m := range []struct {
		name string
		at   func(i, j int) float64
	}{{"G (S and dimensionless)", sys.G.At}, {"C (F, H and s)", sys.C.At}} {
		fmt.Fprintln(w, m.name)
		t := newTable(w, append([]string{"equation"}, sys.Unknowns...)...)
		for i := 0; i < n; i++ {
			cells := []string{equationName(sys.Unknowns[i])}
			for j := 0; j < n; j++ {
				v := m.at(i, j)
				if v == 0 {
					cells = append(cells, ".")
				} else {
					cells = append(cells, num(v))
				}
			}
			if err := t.row(cells...); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w, "b")
	t := newTable(w, "equation", "b")
	for i := 0; i < n; i++ {
		if err := t.row(equationName(sys.Unknowns[i]), num(sys.B[i])); err != nil {
			return err
		}
	}
	return t.render()
}

// equationName names MNA row i after the unknown it pairs with: the
// current balance (KCL) at a node, or the branch equation of a part.
func equationName(unknown string) string {
	switch {
	case strings.HasPrefix(unknown, "v(") && strings.HasSuffix(unknown, ")"):
		return "KCL at " + unknown[2:len(unknown)-1]
	case strings.HasPrefix(unknown, "i(") && strings.HasSuffix(unknown, ")"):
		return "branch " + unknown[2:len(unknown)-1]
	}
	return unknown
}
