package derivation

import (
	"math"
	"strings"
	"testing"
)

// values is a small circuit-like name table for the tests.
var values = map[string]float64{
	"R1": 10e3, "R2": 22e3, "C1": 10e-9, "C2": 4.7e-9, "L1": 1e-3,
	"LP1.R1": 4.7e3, "a1": 3, "a0": 2, "b0": 5, "w0": 1000, "zeta": 0.5, "K": 2,
}

func lookup(name string) (float64, bool) { v, ok := values[name]; return v, ok }
func known(name string) bool             { _, ok := values[name]; return ok }

// coefsOf parses (a transfer function when tf is set, else an ODE),
// reduces and evaluates src with the test values.
func coefsOf(tf bool, src string) (r *Rational, num, den []float64, err error) {
	if tf {
		var x *TF
		if x, err = ParseTF("tf", src); err == nil {
			r, err = x.Reduce()
		}
	} else {
		var eq *Equation
		if eq, err = ParseODE("ode", src); err == nil {
			r, err = eq.Reduce(Signals{Known: known})
		}
	}
	if err != nil {
		return nil, nil, nil, err
	}
	num, den, err = r.Evaluate(lookup)
	return r, num, den, err
}

func closeTo(a, b float64) bool {
	return math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

func sameList(got, want []float64) bool {
	if len(got) != len(want) {
		return false
	}
	for i := range got {
		if !closeTo(got[i], want[i]) {
			return false
		}
	}
	return true
}

// TestODEForms checks every accepted ODE notation by the coefficients it
// reduces to: a_k·y⁽ᵏ⁾ summed = b_k·u⁽ᵏ⁾ summed gives Den = a, Num = b.
// The expected lists are read off the equations by collecting the
// coefficient of each derivative order (common practice).
func TestODEForms(t *testing.T) {
	RC := 10e3 * 10e-9
	tests := []struct {
		src      string
		num, den []float64
		out, in  string
	}{
		{"R1*C1*y' + y = u", []float64{1}, []float64{1, RC}, "y", "u"},
		{"2.2e-7*y'' + 3.3e-4*dy/dt + y = 5*u", []float64{5}, []float64{1, 3.3e-4, 2.2e-7}, "y", "u"},
		{"d^2y/dt^2 + 2*zeta*w0*dy/dt + w0^2*y = w0^2*u", []float64{1e6}, []float64{1e6, 1000, 1}, "y", "u"},
		{"d2y/dt2 + a1*y' + a0*y = b0*u", []float64{5}, []float64{2, 3, 1}, "y", "u"},
		{"y^(3) + a1*y'' + y = u' + u", []float64{1, 1}, []float64{1, 0, 3, 1}, "y", "u"},
		{"y''' = u - y", []float64{1}, []float64{1, 0, 0, 1}, "y", "u"},
		{"y' = (u - y)/(R1*C1)", []float64{1 / RC}, []float64{1 / RC, 1}, "y", "u"},
		{"R1*C1*y' + y - u = 0", []float64{1}, []float64{1, RC}, "y", "u"},
		{"4.7k*10n*dv_out/dt + v_out = v_in", []float64{1}, []float64{1, 4.7e-5}, "v_out", "v_in"},
		{"LP1.R1*C1*y' + y = K*u", []float64{2}, []float64{1, 4.7e3 * 10e-9}, "y", "u"},
		{"-(y' + y) = -u", []float64{-1}, []float64{-1, -1}, "y", "u"}, // scale as written
		{"y' + y = sqrt(K)*pi*u", []float64{math.Sqrt2 * math.Pi}, []float64{1, 1}, "y", "u"},
		{"y'+y=100µ*u+1m*u", []float64{1.1e-3}, []float64{1, 1}, "y", "u"},
		{"d y / dt + y = u", []float64{1}, []float64{1, 1}, "y", "u"},
		{"y = K*u", []float64{2}, []float64{1}, "y", "u"},
	}
	for _, tt := range tests {
		r, num, den, err := coefsOf(false, tt.src)
		if err != nil {
			t.Errorf("%q: %v", tt.src, err)
			continue
		}
		if !sameList(num, tt.num) || !sameList(den, tt.den) || r.Output != tt.out || r.Input != tt.in {
			t.Errorf("%q: got num %v den %v (%s from %s), want num %v den %v (%s from %s)",
				tt.src, num, den, r.Output, r.Input, tt.num, tt.den, tt.out, tt.in)
		}
	}
}

// TestTFForms checks transfer-function expressions by their coefficients,
// expanded from the written expressions by polynomial arithmetic (common
// practice).
func TestTFForms(t *testing.T) {
	R1, R2, C1, C2 := 10e3, 22e3, 10e-9, 4.7e-9
	tests := []struct {
		src      string
		num, den []float64
	}{
		{"1/(1 + s*R1*C1)", []float64{1}, []float64{1, R1 * C1}},
		{"(s*R2*C1)/(1 + s*(R1*C1+R2*C2) + s^2*R1*R2*C1*C2)", []float64{0, R2 * C1}, []float64{1, R1*C1 + R2*C2, R1 * R2 * C1 * C2}},
		{"H(s) = 1/(1 + s/w0)", []float64{1}, []float64{1, 1e-3}}, // a division by w0, free of s, scales the coefficient
		{"w0^2/(s^2 + 2*zeta*w0*s + w0^2)", []float64{1e6}, []float64{1e6, 1000, 1}},
		{"1/(s^(2) + 1)", []float64{1}, []float64{1, 0, 1}},
		{"1/(1+s*R1*C1) * 1/(1+s*R2*C2)", []float64{1}, []float64{1, R1*C1 + R2*C2, R1*R1*0 + R1*C1*R2*C2}},
		{"1/(1+s) + 1/(1+s)", []float64{2}, []float64{1, 1}},
		{"(1 + s)^-1", []float64{1}, []float64{1, 1}},
		{"K", []float64{2}, []float64{1}},
		{"s*L1/(R1 + s*L1)", []float64{0, 1e-3}, []float64{1e4, 1e-3}},
		{"1/(1/(s*C1) + R1) ", []float64{0, C1}, []float64{1, R1 * C1}},
	}
	for _, tt := range tests {
		_, num, den, err := coefsOf(true, tt.src)
		if err != nil {
			t.Errorf("%q: %v", tt.src, err)
			continue
		}
		if !sameList(num, tt.num) || !sameList(den, tt.den) {
			t.Errorf("%q: got num %v den %v, want num %v den %v", tt.src, num, den, tt.num, tt.den)
		}
	}
}

// TestErrors checks messages and columns of parse, reduce and evaluate
// errors.
func TestErrors(t *testing.T) {
	tests := []struct {
		tf   bool
		src  string
		want string // prefix of the first line of the error
	}{
		{false, "R1*C1*y' + = u", `ode:1:12: expected a term after "+"`},
		{false, "y' + y = u +", `ode:1:13: expected a term after "+"`},
		{false, "y' + y = (u", `ode:1:12: missing ")"`},
		{false, "y' + y = u)", `ode:1:11: unmatched ")"`},
		{false, "y' + y = 2 u", `ode:1:12: expected an operator before "u"`},
		{false, "y' + y = 3kdB*u", `ode:1:10: number "3kdB": the unit dB takes no prefix`},
		{false, "y' + y = 3x*u", `ode:1:10: number "3x": unknown unit or prefix "x" (write * between a number and a name)`},
		{false, "y' + y", `ode:1:7: expected "="`},
		{false, "y' = u = y", `ode:1:8: only one "=" is allowed`},
		{false, "y' + y = u $", `ode:1:12: unexpected character '$'`},
		{false, "y' + R1(2)*y = u", `ode:1:6: R1 is not a function`},
		{false, "d^2y/dt^3 + y = u", `ode:1:1: derivative "d^2y/dt^3" has order 2 above and 3 below`},
		{false, "", `ode:1:1: empty expression`},
		{false, "R11*C1*y' + y = u", `ode:1:1: unknown name R11: not a parameter or part (the output is y, the input u)`},
		{false, "y'*y + y = u", `ode:1:3: product of signals (y' times y)`},
		{false, "y' + R1/y = u", `ode:1:8: signal y in a denominator`},
		{false, "y' + y^2 = u", `ode:1:7: power of a signal`},
		{false, "y' + sqrt(y) = u", `ode:1:6: sqrt of a signal`},
		{false, "y' + y = u + 1", `ode:1:14: constant term 1`},
		{false, "y' + u' = u", `ode:1:6: derivative of the input u on the left-hand side`},
		{false, "y' + y = 0", `ode:1:10: no input signal`},
		{false, "R1 = u", `ode:1:1: no output signal`},
		{false, "y' + y = u + z'", `ode:1:14: a third signal z`},
		{false, "y' - y' = u", `ode:1:1: the output y cancels out`},
		{true, "1/(1 + s*R1*C1", `tf:1:15: missing ")"`},
		{true, "1/(1 + s*R1*C1))", `tf:1:16: unmatched ")"`},
		{true, "1/(1 + 2s)", `tf:1:8: number "2s" carries the unit s, but s is the Laplace variable here: write 2*s`},
		{true, "1/(1 + 2ms)", `tf:1:8: number "2ms" carries the unit s, but s is the Laplace variable here: write 2m*s`},
		{true, "y'/s", `tf:1:1: derivative of y in a transfer function`},
		{true, "1/sqrt(s)", `tf:1:3: s inside sqrt`},
		{true, "1/(1+s^K)", `tf:1:7: the power of an expression in s must be a whole number`},
		{true, "1/(1+s^0.5)", `tf:1:7: the power of an expression in s must be a whole number`},
		{true, "2^s", `tf:1:2: s in an exponent`},
		{true, "1/(s - s)", `tf:1:2: division by zero`},
		{true, "G(x) = 1/s", `tf:1:1: the left of "=" must name the function of s`},
		{true, "1/(1 + s*Rx*C1)", `tf:1:10: unknown name Rx: not a parameter or part`},
		{false, "y' + y = u/(C1-C1)", `ode:1:11: division by zero (C1 - C1 is 0)`},
		{true, "1/(s*R1 - s*R1)", `tf:1:1: the denominator evaluates to zero`},
	}
	for _, tt := range tests {
		_, _, _, err := coefsOf(tt.tf, tt.src)
		if err == nil {
			t.Errorf("%q: no error, want %q", tt.src, tt.want)
			continue
		}
		if got := err.Error(); !strings.HasPrefix(got, tt.want) {
			t.Errorf("%q:\n got %q\nwant %q", tt.src, got, tt.want)
		}
	}
}

// TestExplicitSignals names the signals instead of inferring them, so a
// parameter called u can exist and zero-order equations need no Known.
func TestExplicitSignals(t *testing.T) {
	eq, err := ParseODE("ode", "vo = K*vi")
	if err != nil {
		t.Fatal(err)
	}
	r, err := eq.Reduce(Signals{Output: "vo", Input: "vi"})
	if err != nil {
		t.Fatal(err)
	}
	num, den, err := r.Evaluate(lookup)
	if err != nil || !sameList(num, []float64{2}) || !sameList(den, []float64{1}) {
		t.Errorf("got %v %v %v", num, den, err)
	}
	// Without Known and without names, only differentiated names are signals.
	eq, _ = ParseODE("ode", "y' + y = u")
	if _, err := eq.Reduce(Signals{}); err == nil || !strings.Contains(err.Error(), "no input signal") {
		t.Errorf("nil Known: got %v, want a missing-input error", err)
	}
}

// TestCoefficientExpressions checks that reduced coefficients stay
// expressions in the user's names (for later symbolic comparison) and that
// Format output parses back to the same tree.
func TestCoefficientExpressions(t *testing.T) {
	tf, err := ParseTF("tf", "(s*R2*C1)/(1 + s*(R1*C1+R2*C2) + s^2*R1*R2*C1*C2)")
	if err != nil {
		t.Fatal(err)
	}
	r, err := tf.Reduce()
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"1", "R1*C1 + R2*C2", "R1*R2*C1*C2"}
	for k, w := range want {
		if got := Format(r.Den[k]); got != w {
			t.Errorf("den[%d] = %q, want %q", k, got, w)
		}
	}
	if got := Format(r.Num[1]); got != "R2*C1" {
		t.Errorf("num[1] = %q, want R2*C1", got)
	}
	for _, src := range []string{"-x^2", "(-x)^2", "a - (b - c)", "a/(b*c)", "a^b^c", "(a^b)^c", "-(a + b)*c", "sqrt(a/b)*pi"} {
		e1, err := ParseTF("tf", src)
		if err != nil {
			t.Fatal(err)
		}
		e2, err := ParseTF("tf", Format(e1.Expr))
		if err != nil || !Equal(e1.Expr, e2.Expr) {
			t.Errorf("%q formats as %q, which does not parse back equal (%v)", src, Format(e1.Expr), err)
		}
	}
}

// TestWalkNodeSet checks that Walk reaches every node kind and only the
// documented kinds appear in reduced coefficients.
func TestWalkNodeSet(t *testing.T) {
	eq, err := ParseODE("ode", "R1*C1*y' + sqrt(K)*y = -u + 0*LP1.R1^2")
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[string]int{}
	Walk(eq, func(n Node) bool {
		switch n.(type) {
		case *Number:
			kinds["Number"]++
		case *Name:
			kinds["Name"]++
		case *Deriv:
			kinds["Deriv"]++
		case *Unary:
			kinds["Unary"]++
		case *Binary:
			kinds["Binary"]++
		case *Call:
			kinds["Call"]++
		}
		return true
	})
	for _, k := range []string{"Number", "Name", "Deriv", "Unary", "Binary", "Call"} {
		if kinds[k] == 0 {
			t.Errorf("Walk never visited a %s", k)
		}
	}
	r, err := eq.Reduce(Signals{Known: known})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range append(r.Num, r.Den...) {
		Walk(c, func(n Node) bool {
			if _, ok := n.(*Deriv); ok {
				t.Errorf("derivative in a reduced coefficient %s", Format(c))
			}
			if nm, ok := n.(*Name); ok && (nm.Name == "y" || nm.Name == "u") {
				t.Errorf("signal in a reduced coefficient %s", Format(c))
			}
			return true
		})
	}
}

// TestExpressionSizeLimit: multiplying out a high power grows coefficient
// trees combinatorially; the reduction stops with a message instead.
func TestExpressionSizeLimit(t *testing.T) {
	tf, err := ParseTF("tf", "1/(1+s*R1)^40")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := tf.Reduce(); err == nil || !strings.Contains(err.Error(), "exceed") {
		t.Errorf("got %v, want a size-limit error", err)
	}
	tf, _ = ParseTF("tf", "1/(1+s*R1)^8")
	if _, err := tf.Reduce(); err != nil {
		t.Errorf("order 8: %v", err)
	}
}
