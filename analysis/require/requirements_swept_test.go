package require

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladderSource is a uniform RC ladder of k sections, series R (a `let`,
// toleranced by rTol, "" for none) and shunt C = 10 nF, driven by V1 at
// n0 and read open at nK; extra is appended (parts).
func ladderSource(k int, rTol, extra string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "let R = 1k %s\nV1: voltage source (n0, gnd) 1\n", rTol)
	for j := range k {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) R\nC%d: capacitor (n%d, gnd) 10n\n", j, j, j+1, j, j+1)
	}
	return b.String() + extra
}

func loadLadder(t *testing.T, k int, rTol, extra string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.Load("ladder.nodal", []byte(ladderSource(k, rTol, extra)), nil)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// ladderF3dB returns the reference f3db (Hz) of the k-section ladder from
// testdata/reference/ladder/ladder_f3db.json (gen_ladder_f3db.py: 50-digit
// mpmath, the ladder walked by hand).
func ladderF3dB(t *testing.T, k int) float64 {
	t.Helper()
	ref, err := testcircuit.LadderF3dBReference("../../testdata/reference/ladder/ladder_f3db.json")
	if err != nil {
		t.Fatal(err)
	}
	f, ok := ref[k]
	if !ok {
		t.Fatalf("no reference for %d sections", k)
	}
	return f
}

// ladderGainDB is 20·log10|H(j2πf)| of the k-section ladder (R Ω, C F)
// from its closed-form poles (from memory; the docstring of
// gen_ladder_f3db.py checks the same formula against its walk)
// p_j = −(4/(RC))·sin²((2j−1)π/(2(2k+1))), |H(jω)|² = Π p_j²/(p_j²+ω²).
func ladderGainDB(k int, r, c, fHz float64) float64 {
	w := 2 * math.Pi * fHz
	sum := 0.0
	for j := 1; j <= k; j++ {
		s := math.Sin(float64(2*j-1) * math.Pi / float64(2*(2*k+1)))
		p := 4 / (r * c) * s * s
		sum += math.Log1p(w * w / (p * p))
	}
	return -10 * sum / math.Ln10
}

// TestVerifyLadderPastExtraction: on a 1,000-section ladder, which the
// extraction refuses, verify judges f3db, dc and gain@F by direct solves:
// verdicts pass and fail either side of the reference f3db (1e-6
// relative margins), the nominal values match the references (f3db to
// 1e-9 relative; gain to 1e-9 dB of the closed-form poles), the
// worst-case f3db over R ± 1 % is the nominal over 1.01 and 0.99 (every R
// scaled by x scales every time constant, so f3db by 1/x: dimensional
// analysis), and the implicit `stable` passes on the passivity
// certificate.
func TestVerifyLadderPastExtraction(t *testing.T) {
	const k = 1000
	c := loadLadder(t, k, "±1%", "")
	ref := ladderF3dB(t, k)
	g1 := ladderGainDB(k, 1e3, 10e-9, 1)
	lo, hi := ref*(1-1e-6), ref*(1+1e-6)
	tests := []struct {
		req  netlist.Requirement
		want float64 // reference value
		abs  bool    // compare want in absolute (dB) rather than relative
		pass bool
	}{
		{netlist.Requirement{Metric: "f3db", Op: netlist.Within, Lo: lo, Hi: hi}, ref, false, true},
		{netlist.Requirement{Metric: "f3db", Op: netlist.Above, Lo: hi}, ref, false, false},
		{netlist.Requirement{Metric: "f3db", Op: netlist.Below, Hi: lo}, ref, false, false},
		{netlist.Requirement{Metric: "f3db", Op: netlist.Below, Hi: hi}, ref, false, true},
		{netlist.Requirement{Metric: "dc", Op: netlist.Within, Lo: -1e-9, Hi: 1e-9}, 0, true, true},
		{netlist.Requirement{Metric: "gain@1Hz", Op: netlist.Below, Hi: g1 - 1e-6}, g1, true, false},
		{netlist.Requirement{Metric: "gain@1Hz", Op: netlist.Within, Lo: g1 - 1e-6, Hi: g1 + 1e-6}, g1, true, true},
	}
	for _, tc := range tests {
		c.Requirements = append(c.Requirements, tc.req)
	}
	c.Requirements = WithStable(c.Requirements)
	probes := make([]mna.Probe, len(c.Requirements))
	for i := range probes {
		probes[i] = mna.Probe{Ob: mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("n%d", k)}}
	}
	rm, err := NewProbeMetrics(c, c.Requirements, probes)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Verify(context.Background(), c, rm, VerifyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !rm.swept[0].ready.Load() {
		t.Fatal("the ladder was not judged by direct solves")
	}
	if d := res.Verdicts[0]; d.Nominal != 1 || !d.NominalPass || !d.WorstPass || res.Failed != 0 {
		t.Errorf("stable: %+v, failed %d (%v)", d, res.Failed, res.FirstFailure)
	}
	for i, tc := range tests {
		d := res.Verdicts[i+1]
		err := math.Abs(d.Nominal - tc.want)
		if !tc.abs {
			err /= tc.want
		}
		if err > 1e-9 || d.NominalPass != tc.pass {
			t.Errorf("%s op %d: nominal %.15g (want %.15g, err %.2g), pass %v want %v", tc.req.Metric, tc.req.Op, d.Nominal, tc.want, err, d.NominalPass, tc.pass)
		}
		if tc.req.Metric == "f3db" {
			if math.Abs(d.WorstMin-d.Nominal/1.01) > 1e-9*ref || math.Abs(d.WorstMax-d.Nominal/0.99) > 1e-9*ref {
				t.Errorf("f3db worst case %.15g..%.15g, want %.15g..%.15g", d.WorstMin, d.WorstMax, d.Nominal/1.01, d.Nominal/0.99)
			}
		}
	}
}

// TestRequirementSweptAgreesWithExtraction: on a 100-section ladder, which
// the extraction serves, the direct-solve path (forced) gives the same
// values as the extraction path at nominal and for a varied build, to
// 1e-9 (relative for Hz, absolute for dB), and the same stable verdict.
func TestRequirementSweptAgreesWithExtraction(t *testing.T) {
	const k = 100
	c := loadLadder(t, k, "", "")
	out := mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("n%d", k)}
	reqs := WithStable([]netlist.Requirement{
		{Metric: "f3db", Op: netlist.Above, Lo: 1},
		{Metric: "dc", Op: netlist.Above, Lo: -1},
		{Metric: "gain@1Hz", Op: netlist.Above, Lo: -1},
		{Metric: "gain@10Hz", Op: netlist.Below, Hi: -10},
		{Metric: "peak", Op: netlist.Below, Hi: 1},
	})
	extract, err := NewRequirementMetrics(c, reqs, mna.Input{}, out)
	if err != nil {
		t.Fatal(err)
	}
	swept, err := NewRequirementMetrics(c, reqs, mna.Input{}, out)
	if err != nil {
		t.Fatal(err)
	}
	// Force the direct-solve path, as a refusal of the nominal would.
	_, release, err := swept.sweptSubject(0, c, []int{0, 1, 2, 3, 4, 5}, transfer.ErrTooLarge)
	if err != nil {
		t.Fatal(err)
	}
	release()
	varied := c.Clone()
	for i := range varied.Parts {
		if varied.Parts[i].Name == "R37" {
			varied.Parts[i].Value *= 1.03
		}
	}
	for _, circ := range []*netlist.Circuit{c, varied} {
		want, err := extract.Eval(circ)
		if err != nil {
			t.Fatal(err)
		}
		got, err := swept.Eval(circ)
		if err != nil {
			t.Fatal(err)
		}
		for i, q := range reqs {
			d := math.Abs(got[i] - want[i])
			if q.Metric == "f3db" {
				d /= want[i]
			}
			if !(d <= 1e-9) {
				t.Errorf("%s: direct solves %.15g, extraction %.15g (diff %.2g)", q.Metric, got[i], want[i], d)
			}
		}
	}
	if extract.swept[0].ready.Load() || !swept.swept[0].ready.Load() {
		t.Fatal("the two paths were not the ones compared")
	}
}

// TestRequirementSweptRefuses: on a circuit the extraction refuses, a
// metric no direct solve serves (q needs poles; phase@F is known only on
// its principal branch) is an error naming the requirement's position
// and the metric, not a value; and a stability not checked (a buffered
// feedback from the far end to the middle makes one block of 1,001
// unknowns with an active part: stability.Unchecked) fails `stable` with
// its reason while the other metrics stand.
func TestRequirementSweptRefuses(t *testing.T) {
	const k = 1000
	c := loadLadder(t, k, "", "E1: voltage source (e, gnd) 0.5*v(n1000, gnd)\nRfb: resistor (e, n500) 1M\n")
	out := mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("n%d", k)}
	pos := netlist.Pos{File: "ladder.nodal", Line: 9, Col: 1}
	for _, tc := range []struct{ metric, want string }{
		{"q", "needs the transfer function's poles"},
		{"phase@1Hz", "principal branch"},
	} {
		rm, err := NewRequirementMetrics(c, []netlist.Requirement{{Metric: "f3db", Op: netlist.Above, Lo: 0}, {Metric: tc.metric, Op: netlist.Above, Lo: 0, Pos: pos}}, mna.Input{}, out)
		if err != nil {
			t.Fatal(err)
		}
		_, err = rm.Eval(c)
		if err == nil || !strings.Contains(err.Error(), "ladder.nodal:9:1") || !strings.Contains(err.Error(), tc.metric) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: %v", tc.metric, err)
		}
	}
	reqs := WithStable([]netlist.Requirement{{Metric: "f3db", Op: netlist.Above, Lo: 0}})
	rm, err := NewRequirementMetrics(c, reqs, mna.Input{}, out)
	if err != nil {
		t.Fatal(err)
	}
	vals, err := rm.Eval(c)
	if err != nil {
		t.Fatal(err)
	}
	why, err := rm.Explain(c)
	if err != nil {
		t.Fatal(err)
	}
	if reqs[0].Pass(vals[0]) || !errors.Is(why[0], stability.ErrUnchecked) {
		t.Errorf("stable: value %v, why %v", vals[0], why[0])
	}
	if !(vals[1] > 0) || math.IsInf(vals[1], 0) || why[1] != nil || !rm.swept[0].ready.Load() {
		t.Errorf("f3db with the feedback: %.15g (why %v)", vals[1], why[1])
	}
}
