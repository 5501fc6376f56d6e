package loop

import (
	"errors"
	"fmt"

	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// LoopGain is the loop gain around one gain element, Bode's return ratio
// T(s) = −r/t (see mna.ReturnRatio), with its crossovers and margins.
type LoopGain struct {
	Part    string
	T       *transfer.TransferFunction // T(s), s in rad/s
	Figures *Figures                   // over Span(T)
	Sys     *mna.System                // the broken-control system r/t
}

// NewLoopGain extracts T(s) around part (transfer.Extract of the return
// ratio r/t, negated) and reads its figures. An ideal op-amp is an error
// that says to give it a finite model (its loop gain is infinite); a part
// that is no gain element is a *mna.LookupError naming the gain elements.
func NewLoopGain(c *netlist.Circuit, part string) (*LoopGain, error) {
	if p, ok := c.Part(part); ok && p.Kind == netlist.OpAmp && p.A0 == 0 && p.GBWHz == 0 {
		return nil, fmt.Errorf("%s is an ideal op-amp: its loop gain is infinite; give it a finite model, e.g. a0=1e6 gbw=10MHz", part)
	}
	pr := mna.ReturnRatio(part)
	sys, err := mna.Build(c, pr.Ex, pr.Ob)
	if err != nil {
		return nil, err
	}
	rt, err := transfer.Extract(sys)
	if err != nil {
		return nil, fmt.Errorf("loop gain around %s: %w", part, err)
	}
	t := rt.Negated()
	lo, hi := Span(t)
	fig, err := Analyze(t, lo, hi)
	if err != nil {
		return nil, fmt.Errorf("loop gain around %s: %w", part, err)
	}
	return &LoopGain{Part: part, T: t, Figures: fig, Sys: sys}, nil
}

// Circuit gives the metric quantities judged on one whole circuit
// (transfer.CircuitMetrics): its stability (analysis/stability) and the
// figures of the loop gain around each part a metric names, each computed
// once. Not safe for concurrent use; make one per circuit evaluated.
type Circuit struct {
	c     *netlist.Circuit
	st    *stability.Result
	stErr error
	loops map[string]*LoopGain
}

// NewCircuit returns the circuit quantities of c, computed when first
// asked for.
func NewCircuit(c *netlist.Circuit) *Circuit { return &Circuit{c: c} }

// Stability returns the stability of the circuit (stability.Analyze).
func (x *Circuit) Stability() (*stability.Result, error) {
	if x.st == nil && x.stErr == nil {
		x.st, x.stErr = stability.Analyze(x.c, stability.Options{})
	}
	return x.st, x.stErr
}

// Stable reports whether every natural frequency is in the open left
// half-plane.
func (x *Circuit) Stable() (bool, error) {
	st, err := x.Stability()
	if err != nil {
		return false, err
	}
	if st.Class == stability.Unchecked || st.Class == stability.Passive {
		return false, st.Err()
	}
	return st.Class == stability.Stable, nil
}

// CheckStable returns an error wrapping stability.ErrUnstable, naming the
// class, when the circuit is not stable.
func (x *Circuit) CheckStable() error {
	st, err := x.Stability()
	if err != nil {
		return err
	}
	return st.Err()
}

// ErrLoopGain marks an error in extracting the loop gain a metric names
// (no such gain element, an ideal op-amp): the metric is wrong, not the
// circuit drawn, so it is reported at the requirement.
var ErrLoopGain = errors.New("loop gain")

// loop returns the loop gain around part.
func (x *Circuit) loop(part string) (*LoopGain, error) {
	if lg := x.loops[part]; lg != nil {
		return lg, nil
	}
	lg, err := NewLoopGain(x.c, part)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrLoopGain, err)
	}
	if x.loops == nil {
		x.loops = map[string]*LoopGain{}
	}
	x.loops[part] = lg
	return lg, nil
}

// PhaseMarginDeg is the smallest phase margin around part, degrees.
func (x *Circuit) PhaseMarginDeg(part string) (float64, error) {
	lg, err := x.loop(part)
	if err != nil {
		return 0, err
	}
	if v, ok := lg.Figures.PhaseMarginDeg(); ok {
		return v, nil
	}
	return 0, errors.New("|T| does not cross 1: no gain crossover")
}

// GainMarginDB is the smallest gain margin around part, dB.
func (x *Circuit) GainMarginDB(part string) (float64, error) {
	lg, err := x.loop(part)
	if err != nil {
		return 0, err
	}
	if v, ok := lg.Figures.GainMarginDB(); ok {
		return v, nil
	}
	return 0, errors.New("arg T does not reach −180°: no phase crossover")
}

// CrossoverHz is the highest gain crossover around part, Hz.
func (x *Circuit) CrossoverHz(part string) (float64, error) {
	lg, err := x.loop(part)
	if err != nil {
		return 0, err
	}
	if v, ok := lg.Figures.CrossoverHz(); ok {
		return v, nil
	}
	return 0, errors.New("|T| does not cross 1: no gain crossover")
}
