package derivation

import (
	"errors"
	"math"
	"testing"

	"nodal/netlist/syntax"
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

// checkErr asserts that a failure is a non-empty error list whose
// diagnostics name the file and sit at line >= 1, column >= 1.
func checkErr(t *testing.T, file, src string, err error) {
	t.Helper()
	var el syntax.ErrorList
	if !errors.As(err, &el) || len(el) == 0 {
		t.Fatalf("%q: error %T %v is not a non-empty ErrorList", src, err, err)
	}
	for _, d := range el {
		if d.Pos.File != file || d.Pos.Line < 1 || d.Pos.Col < 1 || d.Msg == "" {
			t.Fatalf("%q: badly positioned diagnostic %+v", src, d)
		}
	}
}

// checkFinite asserts that evaluated coefficients are finite and that the
// denominator is not all zero.
func checkFinite(t *testing.T, src string, num, den []float64) {
	t.Helper()
	nonzero := false
	for _, c := range append(append([]float64(nil), num...), den...) {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			t.Fatalf("%q: coefficient %v in %v / %v", src, c, num, den)
		}
	}
	for _, c := range den {
		nonzero = nonzero || c != 0
	}
	if len(num) == 0 || !nonzero {
		t.Fatalf("%q: evaluates to %v / %v", src, num, den)
	}
}

// FuzzParseODE: parsing, reducing and evaluating any text never panics,
// fails only with positioned errors, evaluates to finite coefficients,
// and whatever parses formats back to text that parses and formats the
// same again.
func FuzzParseODE(f *testing.F) {
	for _, s := range []string{"R1*C1*y' + y = u", "2.2e-7*y'' + 3.3e-4*dy/dt + y = 5*u", "d^2y/dt^2 = u", "y^(3) = u'", "y = (u"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		eq, err := ParseODE("ode", src)
		if err != nil {
			checkErr(t, "ode", src, err)
			return
		}
		text := Format(eq.Left) + " = " + Format(eq.Right)
		again, err := ParseODE("ode", text)
		if err != nil {
			t.Fatalf("%q formats to %q, which does not parse: %v", src, text, err)
		}
		if t2 := Format(again.Left) + " = " + Format(again.Right); t2 != text {
			t.Fatalf("%q formats to %q, which formats to %q", src, text, t2)
		}
		r, err := eq.Reduce(Signals{Known: func(n string) bool { _, ok := fuzzLookup(n); return ok }})
		if err != nil {
			checkErr(t, "ode", src, err)
			return
		}
		num, den, err := r.Evaluate(fuzzLookup)
		if err != nil {
			checkErr(t, "ode", src, err)
			return
		}
		checkFinite(t, src, num, den)
		checkPrecision(t, src, r)
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
			checkErr(t, "tf", src, err)
			return
		}
		text := Format(tf.Expr)
		again, err := ParseTF("tf", text)
		if err != nil {
			t.Fatalf("%q formats to %q, which does not parse: %v", src, text, err)
		}
		if t2 := Format(again.Expr); t2 != text {
			t.Fatalf("%q formats to %q, which formats to %q", src, text, t2)
		}
		r, err := tf.Reduce()
		if err != nil {
			checkErr(t, "tf", src, err)
			return
		}
		num, den, err := r.Evaluate(fuzzLookup)
		if err != nil {
			checkErr(t, "tf", src, err)
			return
		}
		checkFinite(t, src, num, den)
		checkPrecision(t, src, r)
	})
}

// checkPrecision asserts that the written precision of every coefficient
// is a non-negative number (Precision never panics).
func checkPrecision(t *testing.T, src string, r *Rational) {
	t.Helper()
	tn, td := r.Precision(fuzzLookup)
	for _, v := range append(tn, td...) {
		if v < 0 || math.IsNaN(v) {
			t.Fatalf("%q: precision %v / %v", src, tn, td)
		}
	}
}
