package require

import (
	"errors"
	"math"
	"strings"
	"testing"

	"nodal/analysis/loop"
	"nodal/analysis/stability"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// TestLoopMetrics: the requirement metrics read the same figures as the
// loop command, and `stable` is 1 or 0; an unstable build has every other
// metric NaN with ErrUnstable.
func TestLoopMetrics(t *testing.T) {
	ps := testcircuit.Load(t, "../loop/testdata/phase_shift.nodal", nil)
	reqs := []netlist.Requirement{{Metric: "stable", Op: netlist.Holds}, {Metric: "gain_margin@E1"}, {Metric: "phase_margin@E1"}, {Metric: "crossover@E1"}}
	rm, err := NewRequirementMetrics(ps, reqs, mna.Input{}, mna.Output{Node: "c3"})
	if err != nil {
		t.Fatal(err)
	}
	vals, err := rm.Eval(ps)
	if err != nil {
		t.Fatal(err)
	}
	lg, err := loop.NewLoopGain(ps, "E1")
	if err != nil {
		t.Fatal(err)
	}
	pm, _ := lg.Figures.PhaseMarginDeg()
	hz, _ := lg.Figures.CrossoverHz()
	// 20·log10(29/20), the phase-shift ladder's classic attenuation 1/29.
	if vals[0] != 1 || math.Abs(vals[1]-20*math.Log10(29.0/20)) > 1e-8 || vals[2] != pm || vals[3] != hz {
		t.Errorf("metrics %v, want [1 %g %g %g]", vals, 20*math.Log10(29.0/20), pm, hz)
	}
	unstable := testcircuit.Load(t, "../loop/testdata/phase_shift.nodal", netlist.Overrides{"K": 40})
	vals, err = rm.Eval(unstable)
	if err != nil {
		t.Fatal(err)
	}
	why, _ := rm.Explain(unstable)
	if vals[0] != 0 || !math.IsNaN(vals[1]) || !math.IsNaN(vals[3]) || !errors.Is(why[2], stability.ErrUnstable) {
		t.Errorf("unstable build: metrics %v, why %v", vals, why)
	}
	if got := WithStable(reqs[1:]); len(got) != 4 || got[0].Metric != "stable" || len(WithStable(reqs)) != 4 {
		t.Errorf("WithStable: %v", got)
	}
}

// TestLoopMetricBadPart: a loop metric naming no gain element, or an
// ideal op-amp, is an error at its requirement, not a NaN.
func TestLoopMetricBadPart(t *testing.T) {
	ps := testcircuit.Load(t, "../loop/testdata/phase_shift.nodal", nil)
	pos := netlist.Pos{File: "ps.nodal", Line: 7, Col: 1}
	rm, err := NewRequirementMetrics(ps, []netlist.Requirement{{Metric: "phase_margin@R1", Pos: pos}}, mna.Input{}, mna.Output{Node: "c3"})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := rm.Eval(ps); err == nil || !strings.Contains(err.Error(), "ps.nodal:7") {
		t.Errorf("phase_margin@R1: %v, want an error at ps.nodal:7", err)
	}
}
