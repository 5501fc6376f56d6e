package stability

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
	"nodal/netlist"
)

// circuitDirs are where the circuits of testdata/pencils come from.
var circuitDirs = []string{
	filepath.Join("testdata", "circuits"),
	filepath.Join("..", "..", "testdata", "examples"),
	filepath.Join("..", "..", "testdata", "reference", "circuits"),
}

// TestNaturalFrequenciesGolden checks FiniteEigenvalues against the QZ
// algorithm (scipy.linalg.eig) and the exact degree of det(G + sC)
// (sympy), both from testdata/gen_natural.py, on the same matrices.
func TestNaturalFrequenciesGolden(t *testing.T) {
	pencils, err := filepath.Glob(filepath.Join("testdata", "pencils", "*.json"))
	if err != nil || len(pencils) < 20 {
		t.Fatalf("pencils: %v (%d files)", err, len(pencils))
	}
	for _, p := range pencils {
		name := strings.TrimSuffix(filepath.Base(p), ".json")
		t.Run(name, func(t *testing.T) {
			m := buildNamed(t, name)
			var pen struct{ G, C [][]float64 }
			readJSON(t, p, &pen)
			sameMatrix(t, "G", m.G, pen.G)
			sameMatrix(t, "C", m.C, pen.C)
			var gold struct {
				Degree  int
				Natural [][2]float64
			}
			readJSON(t, filepath.Join("testdata", "golden", name+".json"), &gold)
			got, w0, err := FiniteEigenvalues(m.G, m.C)
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != gold.Degree || len(got) != len(gold.Natural) {
				t.Fatalf("%d natural frequencies %v, want %d (degree of det(G + sC)) %v", len(got), got, gold.Degree, gold.Natural)
			}
			used := make([]bool, len(got))
			for _, g := range gold.Natural {
				want := complex(g[0], g[1])
				best, bi := math.Inf(1), -1
				for i, z := range got {
					if d := cmplx.Abs(z - want); !used[i] && d < best {
						best, bi = d, i
					}
				}
				used[bi] = true
				if best > 1e-7*math.Max(cmplx.Abs(want), 1e-3*w0) {
					t.Errorf("natural frequency %v rad/s, QZ gives %v", got[bi], want)
				}
			}
		})
	}
}

// buildNamed loads the circuit NAME.nodal from circuitDirs.
func buildNamed(t *testing.T, name string) *mna.Matrices {
	t.Helper()
	for _, d := range circuitDirs {
		path := filepath.Join(d, name+".nodal")
		src, err := os.ReadFile(path)
		if err != nil {
			continue
		}
		c, err := netlist.Load(path, src, nil)
		if err != nil {
			t.Fatal(err)
		}
		m, err := mna.BuildMatrices(c)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	t.Fatalf("no circuit %s.nodal", name)
	return nil
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

func sameMatrix(t *testing.T, what string, m *mat.Dense, want [][]float64) {
	t.Helper()
	r, c := m.Dims()
	if r != len(want) {
		t.Fatalf("%s is %d×%d, the committed pencil has %d rows: regenerate testdata/pencils", what, r, c, len(want))
	}
	for i := range want {
		for j := range want[i] {
			if m.At(i, j) != want[i][j] {
				t.Fatalf("%s[%d][%d] = %g, the committed pencil has %g: regenerate testdata/pencils", what, i, j, m.At(i, j), want[i][j])
			}
		}
	}
}
