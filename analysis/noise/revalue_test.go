package noise

import (
	"testing"

	"nodal/mna"
)

// TestRevalueMatchesNew checks that an Analyzer on a restamped system
// (NewOn on an mna.Restamper's matrices, then Restamp and Revalue for each
// varied circuit) gives exactly the densities of an Analyzer built anew
// for that circuit: the same G and C (TestRestampMatchesBuild) and the
// same sources, so the same numbers bit for bit. A circuit of other parts
// makes Revalue and every later At fail until a good Revalue.
func TestRevalueMatchesNew(t *testing.T) {
	c := load(t, `
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 10k ±5%
R2: resistor (a, b) 22k ±5%
C1: capacitor (a, out) 10nF ±5%
C2: capacitor (b, gnd) 4.7nF ±5%
U1: opamp (b, out, out) a0=200k gbw=1MHz en=10nV in=1pA
`)
	out := node("out")
	r, err := mna.NewRestamper(c, mna.Excitation{}, out)
	if err != nil {
		t.Fatal(err)
	}
	a, err := NewOn(c, r.Matrices(), Config{Out: out, TempK: roomK})
	if err != nil {
		t.Fatal(err)
	}
	f := make([]float64, len(c.Variations))
	got, want := make([]float64, len(a.Sources)), make([]float64, len(a.Sources))
	for k := 0; k < 20; k++ {
		for i := range f {
			f[i] = 1 + 0.01*float64((k*5+i*3)%9-4)
		}
		v, err := c.Vary(f)
		if err != nil {
			t.Fatal(err)
		}
		if err := r.Restamp(v); err != nil {
			t.Fatal(err)
		}
		if err := a.Revalue(v); err != nil {
			t.Fatal(err)
		}
		b := analyzer(t, v, Config{Out: out})
		for _, fHz := range []float64{10, 1e3, 3e4} {
			p, _, err := a.At(fHz, got)
			if err != nil {
				t.Fatal(err)
			}
			q, _, err := b.At(fHz, want)
			if err != nil {
				t.Fatal(err)
			}
			if p != q {
				t.Fatalf("draw %d, %g Hz: revalued %v, built %v V²/Hz", k, fHz, p, q)
			}
		}
	}
	other := load(t, "Vin: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\n")
	if err := a.Revalue(other); err == nil {
		t.Fatal("Revalue accepted another circuit")
	}
	if _, _, err := a.At(1e3, got); err == nil {
		t.Error("At after a failed Revalue gave a value")
	}
	if err := a.Revalue(c); err != nil {
		t.Fatal(err)
	}
	if _, _, err := a.At(1e3, got); err != nil {
		t.Errorf("At after a good Revalue: %v", err)
	}
}
