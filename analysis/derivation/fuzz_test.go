package derivation

import (
	"errors"
	"testing"

	"nodal/netlist"
)

// fuzzLookup knows every name except y, u and s, so reductions and
// evaluations of arbitrary input get exercised.
func fuzzLookup(name string) (float64, bool) {
	switch name {
	case "y", "u", "s":
		return 0, false
	}
	return 1.5, true
}

// checkErr asserts that a failure is a positioned error list.
func checkErr(t *testing.T, src string, err error) {
	var el netlist.ErrorList
	if err != nil && errors.As(err, &el) && len(el) == 0 {
		t.Fatalf("%q: empty error list", src)
	}
}

// FuzzParseODE: parsing, reducing and evaluating any text never panics,
// and whatever parses formats back to text that parses.
func FuzzParseODE(f *testing.F) {
	for _, s := range []string{"R1*C1*y' + y = u", "2.2e-7*y'' + 3.3e-4*dy/dt + y = 5*u", "d^2y/dt^2 = u", "y^(3) = u'", "y = (u"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		eq, err := ParseODE("ode", src)
		if err != nil {
			checkErr(t, src, err)
			return
		}
		if _, err := ParseODE("ode", Format(eq.Left)+" = "+Format(eq.Right)); err != nil {
			t.Fatalf("%q formats to text that does not parse: %v", src, err)
		}
		r, err := eq.Reduce(Signals{Known: func(n string) bool { _, ok := fuzzLookup(n); return ok }})
		if err != nil {
			checkErr(t, src, err)
			return
		}
		if _, _, err := r.Evaluate(fuzzLookup); err != nil {
			checkErr(t, src, err)
		}
	})
}

// FuzzParseTF: as FuzzParseODE for transfer functions.
func FuzzParseTF(f *testing.F) {
	for _, s := range []string{"1/(1 + s*R1*C1)", "(s*R2*C1)/(1 + s*(R1*C1+R2*C2) + s^2*R1*R2*C1*C2)", "H(s) = 1/(s^(2)+1)", "(1+s)^-3", "1/(1+2s"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		tf, err := ParseTF("tf", src)
		if err != nil {
			checkErr(t, src, err)
			return
		}
		if _, err := ParseTF("tf", Format(tf.Expr)); err != nil {
			t.Fatalf("%q formats to %q, which does not parse: %v", src, Format(tf.Expr), err)
		}
		r, err := tf.Reduce()
		if err != nil {
			checkErr(t, src, err)
			return
		}
		if _, _, err := r.Evaluate(fuzzLookup); err != nil {
			checkErr(t, src, err)
		}
	})
}
