package symbolic

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// publishedCase is a circuit with a transfer function from a published
// source, written as polynomials (not strings).
type publishedCase struct {
	name     string
	source   string // where the expected form comes from
	c        *netlist.Circuit
	out      mna.Output
	in       mna.Input
	num, den []Poly // expected, ascending in s
	// exact: the expected form is written in the package's normalisation,
	// so coefficients must match one by one, not only as a ratio.
	exact bool
}

func publishedCases() []publishedCase {
	one := Int(1)
	var zero Poly
	return []publishedCase{
		{
			name:   "RC low-pass",
			source: "Van Valkenburg, Analog Filter Design, first-order section: 1/(1 + sRC)",
			c:      circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "out", 1e3), capa("C1", "out", "gnd", 1e-6)),
			out:    nodeOut("out"),
			num:    []Poly{one},
			den:    []Poly{one, m("R1", "C1")},
			exact:  true,
		},
		{
			name:   "RC high-pass",
			source: "Van Valkenburg, first-order section: sRC/(1 + sRC)",
			c:      circuit(vsrc("V1", "in", "gnd"), capa("C1", "in", "out", 1e-6), res("R1", "out", "gnd", 1e3)),
			out:    nodeOut("out"),
			num:    []Poly{zero, m("R1", "C1")},
			den:    []Poly{one, m("R1", "C1")},
			exact:  true,
		},
		{
			name:   "RL high-pass",
			source: "voltage divider of R and sL, common practice: sL/(R + sL)",
			c:      circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "out", 100), ind("L1", "out", "gnd", 1e-3)),
			out:    nodeOut("out"),
			num:    []Poly{zero, m("L1")},
			den:    []Poly{m("R1"), m("L1")},
			exact:  true,
		},
		{
			name:   "RL low-pass",
			source: "voltage divider of sL and R, common practice: R/(R + sL)",
			c:      circuit(vsrc("V1", "in", "gnd"), ind("L1", "in", "out", 1e-3), res("R1", "out", "gnd", 100)),
			out:    nodeOut("out"),
			num:    []Poly{m("R1")},
			den:    []Poly{m("R1"), m("L1")},
			exact:  true,
		},
		{
			name:   "series RLC, output across C",
			source: "Van Valkenburg, second-order low-pass: 1/(1 + sRC + s²LC)",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 50), ind("L1", "a", "out", 1e-3),
				capa("C1", "out", "gnd", 1e-6)),
			out:   nodeOut("out"),
			num:   []Poly{one},
			den:   []Poly{one, m("R1", "C1"), m("L1", "C1")},
			exact: true,
		},
		{
			name:   "series RLC, output across R",
			source: "Van Valkenburg, second-order band-pass: sRC/(1 + sRC + s²LC)",
			c: circuit(vsrc("V1", "in", "gnd"), capa("C1", "in", "a", 1e-6), ind("L1", "a", "out", 1e-3),
				res("R1", "out", "gnd", 50)),
			out:   nodeOut("out"),
			num:   []Poly{zero, m("R1", "C1")},
			den:   []Poly{one, m("R1", "C1"), m("L1", "C1")},
			exact: true,
		},
		{
			name:   "parallel RLC impedance",
			source: "Z = 1/(1/R + 1/(sL) + sC) = sRL/(R + sL + s²RLC), common practice",
			c: circuit(isrc("I1", "top", "gnd"), res("R1", "top", "gnd", 1e3), ind("L1", "top", "gnd", 1e-3),
				capa("C1", "top", "gnd", 1e-6)),
			out:   nodeOut("top"),
			num:   []Poly{zero, m("R1", "L1")},
			den:   []Poly{m("R1"), m("L1"), m("R1", "L1", "C1")},
			exact: true,
		},
		{
			name:   "Sallen-Key low-pass, unity gain",
			source: "Sedra & Smith, Microelectronic Circuits: 1/(1 + sC2(R1+R2) + s²R1R2C1C2)",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 10e3), res("R2", "a", "b", 10e3),
				capa("C1", "a", "out", 20e-9), capa("C2", "b", "gnd", 10e-9), opamp("U1", "b", "out", "out", 0, 0, 0)),
			out:   nodeOut("out"),
			num:   []Poly{one},
			den:   []Poly{one, sum(m("R1", "C2"), m("R2", "C2")), m("R1", "R2", "C1", "C2")},
			exact: true,
		},
		{
			name: "Sallen-Key low-pass, gain K",
			source: "Sallen & Key 1955 / Sedra & Smith, derived by nodal analysis here: " +
				"K/(1 + s(C2(R1+R2) + (1−K)R1C1) + s²R1R2C1C2)",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 10e3), res("R2", "a", "b", 10e3),
				capa("C1", "a", "out", 20e-9), capa("C2", "b", "gnd", 10e-9), vcvs("K", "out", "gnd", "b", "gnd", 1.5)),
			out: nodeOut("out"),
			num: []Poly{m("K")},
			den: []Poly{one,
				sum(m("R1", "C2"), m("R2", "C2"), m("R1", "C1"), prod(-1, "R1", "C1", "K")),
				m("R1", "R2", "C1", "C2")},
			exact: true,
		},
		{
			name: "multiple-feedback band-pass",
			source: "Sedra & Smith (Deliyannis-Friend): −sR2R3C1/(R1+R3 + sR1R3(C1+C2) + s²R1R2R3C1C2), " +
				"C1 to the inverting input, C2 to the output",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 10e3), res("R3", "a", "gnd", 1e3),
				capa("C1", "a", "n", 10e-9), capa("C2", "a", "out", 10e-9), res("R2", "n", "out", 100e3),
				opamp("U1", "gnd", "n", "out", 0, 0, 0)),
			out: nodeOut("out"),
			num: []Poly{zero, prod(-1, "R2", "R3", "C1")},
			den: []Poly{sum(m("R1"), m("R3")), sum(m("R1", "R3", "C1"), m("R1", "R3", "C2")),
				m("R1", "R2", "R3", "C1", "C2")},
			exact: true,
		},
		{
			name:   "Wien network",
			source: "Wien bridge arm, series RC over parallel RC: sR2C1/(1 + s(R1C1 + R2C2 + R2C1) + s²R1R2C1C2), common practice",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 10e3), capa("C1", "a", "out", 10e-9),
				res("R2", "out", "gnd", 10e3), capa("C2", "out", "gnd", 10e-9)),
			out:   nodeOut("out"),
			num:   []Poly{zero, m("R2", "C1")},
			den:   []Poly{one, sum(m("R1", "C1"), m("R2", "C2"), m("R2", "C1")), m("R1", "R2", "C1", "C2")},
			exact: true,
		},
		{
			name:   "inverting amplifier, ideal op-amp",
			source: "Sedra & Smith: −R2/R1",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "n", 1e3), res("R2", "n", "out", 10e3),
				opamp("U1", "gnd", "n", "out", 0, 0, 0)),
			out:   nodeOut("out"),
			num:   []Poly{prod(-1, "R2")},
			den:   []Poly{m("R1")},
			exact: true,
		},
		{
			name:   "non-inverting amplifier, ideal op-amp",
			source: "Sedra & Smith: 1 + R2/R1 = (R1 + R2)/R1",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "n", "gnd", 1e3), res("R2", "n", "out", 10e3),
				opamp("U1", "in", "n", "out", 0, 0, 0)),
			out:   nodeOut("out"),
			num:   []Poly{sum(m("R1"), m("R2"))},
			den:   []Poly{m("R1")},
			exact: true,
		},
		{
			name:   "inverting amplifier, finite a0",
			source: "Sedra & Smith: −a0R2/(R1 + R2 + a0R1)",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "n", 1e3), res("R2", "n", "out", 10e3),
				opamp("U1", "gnd", "n", "out", 1e5, 0, 0)),
			out:   nodeOut("out"),
			num:   []Poly{prod(-1, "R2", "U1.a0")},
			den:   []Poly{sum(m("R1"), m("R2"), m("R1", "U1.a0"))},
			exact: true,
		},
		{
			name:   "non-inverting amplifier, finite a0",
			source: "Sedra & Smith, A/(1 + Aβ) with β = R1/(R1+R2): a0(R1+R2)/(R1 + R2 + a0R1)",
			c: circuit(vsrc("V1", "in", "gnd"), res("R1", "n", "gnd", 1e3), res("R2", "n", "out", 10e3),
				opamp("U1", "in", "n", "out", 1e5, 0, 0)),
			out:   nodeOut("out"),
			num:   []Poly{sum(m("R1", "U1.a0"), m("R2", "U1.a0"))},
			den:   []Poly{sum(m("R1"), m("R2"), m("R1", "U1.a0"))},
			exact: true,
		},
	}
}

func TestPublishedForms(t *testing.T) {
	for _, tc := range publishedCases() {
		for _, method := range []Method{Bareiss, Minors} {
			t.Run(tc.name+"/"+method.String(), func(t *testing.T) {
				r, err := Transfer(context.Background(), tc.c, tc.in, tc.out, Options{Method: method})
				if err != nil {
					t.Fatalf("Transfer: %v (source: %s)", err, tc.source)
				}
				if ok, diff := Equivalent(r.Num, r.Den, tc.num, tc.den); !ok {
					t.Fatalf("H = (%v)/(%v) is not %s: %v", r.NumStrings(), r.DenStrings(), tc.source, diff)
				}
				if !tc.exact {
					return
				}
				if !polysEqual(r.Num, tc.num) || !polysEqual(r.Den, tc.den) {
					t.Errorf("normalised form num=%q den=%q, want num=%q den=%q (%s)",
						r.NumStrings(), r.DenStrings(), strs(tc.num), strs(tc.den), tc.source)
				}
			})
		}
	}
}

func polysEqual(a, b []Poly) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !a[i].Equal(b[i]) {
			return false
		}
	}
	return true
}

func strs(ps []Poly) []string {
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = p.String()
	}
	return out
}

// TestDisplayStrings pins the readable order of the JSON strings: the
// issue's example D1 = "R1*C1 + R2*C1 + R2*C2" (resistors before
// capacitors, natural order).
func TestDisplayStrings(t *testing.T) {
	// Two RC sections, loaded: D = 1 + s(R1C1 + R2C1 + R2C2) + s²R1R2C1C2
	// (Van Valkenburg, ladder of two RC sections, derived by nodal analysis).
	c := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 1e3), capa("C1", "a", "gnd", 1e-6),
		res("R2", "a", "out", 1e3), capa("C2", "out", "gnd", 1e-6))
	r := mustTransfer(t, c, nodeOut("out"), Options{})
	want := []string{"1", "R1*C1 + R1*C2 + R2*C2", "R1*R2*C1*C2"}
	if den := r.DenStrings(); strings.Join(den, "|") != strings.Join(want, "|") {
		t.Errorf("den = %q, want %q", den, want)
	}
	if num := r.NumStrings(); strings.Join(num, "|") != "1" {
		t.Errorf("num = %q, want [1]", num)
	}
}

func TestKeepSubstitutes(t *testing.T) {
	// Sallen-Key unity gain with only C1 and C2 symbolic: R1 = R2 = 10k
	// gives D = 1 + 20000·C2·s + 1e8·C1·C2·s² (Sedra & Smith form).
	c := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 10e3), res("R2", "a", "b", 10e3),
		capa("C1", "a", "out", 20e-9), capa("C2", "b", "gnd", 10e-9), opamp("U1", "b", "out", "out", 0, 0, 0))
	r := mustTransfer(t, c, nodeOut("out"), Options{Keep: []string{"C1", "C2"}})
	want := []Poly{Int(1), prod(20000, "C2"), prod(100000000, "C1", "C2")}
	if !polysEqual(r.Den, want) || !polysEqual(r.Num, []Poly{Int(1)}) {
		t.Errorf("den = %q, want %q", r.DenStrings(), strs(want))
	}
	if got := strings.Join(r.Symbols, ","); got != "C1,C2" {
		t.Errorf("symbols %q", got)
	}
	// Nothing kept: D = 1 + 2e-4 s + 2e-8 s² exactly.
	r = mustTransfer(t, c, nodeOut("out"), Options{Keep: []string{}})
	if got := strings.Join(r.DenStrings(), "|"); got != "1|0.0002|0.00000002" {
		t.Errorf("numeric den %q", got)
	}
	if _, err := Transfer(context.Background(), c, mna.Input{}, nodeOut("out"), Options{Keep: []string{"R9"}}); err == nil {
		t.Error("keeping an unknown symbol is not an error")
	}
}

func TestErrors(t *testing.T) {
	ctx := context.Background()
	floating := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "out", 1), capa("C1", "x", "y", 1))
	if _, err := Transfer(ctx, floating, mna.Input{}, nodeOut("out"), Options{}); !errors.Is(err, ErrSingular) {
		t.Errorf("floating node: %v, want ErrSingular", err)
	}
	rc := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "out", 1), capa("C1", "out", "gnd", 1))
	for _, tc := range []struct {
		name string
		in   mna.Input
		out  mna.Output
		want string
	}{
		{"unknown node", mna.Input{}, nodeOut("nowhere"), `"nowhere"`},
		{"unknown source", mna.Input{Source: "V9"}, nodeOut("out"), `"V9"`},
		{"source is not a source", mna.Input{Source: "R1"}, nodeOut("out"), `"R1"`},
		{"unknown part current", mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "Q1"}, `"Q1"`},
	} {
		if _, err := Transfer(ctx, rc, tc.in, tc.out, Options{}); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want mention of %s", tc.name, err, tc.want)
		}
	}
	cancelled, cancel := context.WithCancel(ctx)
	cancel()
	if _, err := Transfer(cancelled, rc, mna.Input{}, nodeOut("out"), Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled context: %v", err)
	}
}

func TestSizeLimit(t *testing.T) {
	// A 6-section RC ladder's D is a continuant with F(13) = 233 terms
	// (Fibonacci count of ladder continuants, from memory); a limit of 100
	// must stop it.
	for _, method := range []Method{Minors, Bareiss} {
		_, err := Transfer(context.Background(), rcLadder(6), mna.Input{}, nodeOut("n6"), Options{MaxTerms: 100, Method: method})
		var se *SizeError
		if !errors.As(err, &se) || se.Terms <= 100 || se.Limit != 100 || !strings.Contains(err.Error(), "--keep") {
			t.Errorf("%s: err = %v, want *SizeError over 100 terms suggesting --keep", method, err)
		}
	}
	r := mustTransfer(t, rcLadder(6), nodeOut("n6"), Options{})
	total := 0
	for _, p := range r.Den {
		total += p.Len()
	}
	if total != 233 {
		t.Errorf("6-section ladder D has %d terms, want 233", total)
	}
}

func TestJSONAndValues(t *testing.T) {
	// MFB band-pass (Sedra & Smith form, see publishedCases): D0 = R1 + R3.
	tc := publishedCases()[9]
	if tc.name != "multiple-feedback band-pass" {
		t.Fatalf("case order changed: %s", tc.name)
	}
	r := mustTransfer(t, tc.c, tc.out, Options{})
	if got, want := strings.Join(r.NumStrings(), "|"), "0|-R2*R3*C1"; got != want {
		t.Errorf("num %s, want %s", got, want)
	}
	if got, want := strings.Join(r.DenStrings(), "|"), "R1 + R3|R1*R3*C1 + R1*R3*C2|R1*R2*R3*C1*C2"; got != want {
		t.Errorf("den %s, want %s", got, want)
	}
	num, den, err := r.CoefficientValues(r.Values)
	if err != nil {
		t.Fatal(err)
	}
	// R1 = 10k, R2 = 100k, R3 = 1k, C1 = C2 = 10 nF (values of the case).
	wantDen := []float64{11e3, 10e3 * 1e3 * 20e-9, 10e3 * 100e3 * 1e3 * 100e-18}
	for k := range wantDen {
		if math.Abs(den[k]-wantDen[k]) > 1e-12*wantDen[k] {
			t.Errorf("den[%d] = %g, want %g", k, den[k], wantDen[k])
		}
	}
	if math.Abs(num[1]+100e3*1e3*10e-9) > 1e-15 {
		t.Errorf("num[1] = %g", num[1])
	}
	if _, _, err := r.CoefficientValues(map[string]float64{"R1": 1}); err == nil {
		t.Error("missing values accepted")
	}
}

func TestCancelsBufferedSection(t *testing.T) {
	// Observed before an ideal buffer, the second RC section cannot
	// matter: H = 1/(1 + sR1C1) (first-order section, Van Valkenburg),
	// although det Y carries the factor of the buffered section.
	c := circuit(vsrc("V1", "in", "gnd"), res("R1", "in", "a", 1e3), capa("C1", "a", "gnd", 1e-6),
		vcvs("Gain1", "b", "gnd", "a", "gnd", 1), res("R2", "b", "out", 2e3), capa("C2", "out", "gnd", 1e-7))
	for _, method := range []Method{Minors, Bareiss} {
		r, err := Transfer(context.Background(), c, mna.Input{}, nodeOut("a"), Options{Method: method})
		if err != nil {
			t.Fatal(err)
		}
		if len(r.Cancelled) != 1 || !r.Cancelled[0].Equal(sum(Int(1), m("R2", "C2", LaplaceVar))) {
			t.Errorf("%s: cancelled %q, want [1 + R2*C2*s]", method, strs(r.Cancelled))
		}
		if !polysEqual(r.Num, []Poly{Int(1)}) || !polysEqual(r.Den, []Poly{Int(1), m("R1", "C1")}) {
			t.Errorf("%s: num=%q den=%q, want 1/(1 + R1*C1·s); cancelled %q", method, r.NumStrings(), r.DenStrings(), strs(r.Cancelled))
		}
	}
}
