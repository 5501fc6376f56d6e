package analysis

import (
	"errors"
	"fmt"

	"nodal/analysis/loop"
	"nodal/analysis/stability"
	"nodal/mna"
	"nodal/netlist"
)

// LoopGain is the loop gain around one gain element, Bode's return ratio
// T(s) = −r/t (see mna.ReturnRatio), with its crossovers and margins.
type LoopGain struct {
	Part    string
	T       *TransferFunction // T(s), s in rad/s
	Gain    loop.Gain         // T in the factored form the figures read
	Figures *loop.Figures     // over loop.Span(Gain)
	Sys     *mna.System       // the broken-control system r/t
}

// NewLoopGain extracts T(s) around part and reads its figures. An ideal
// op-amp is an error that says to give it a finite model (its loop gain
// is infinite); a part that is no gain element is a *mna.LookupError
// naming the gain elements.
func NewLoopGain(c *netlist.Circuit, part string) (*LoopGain, error) {
	if p, ok := c.Part(part); ok && p.Kind == netlist.OpAmp && p.A0 == 0 && p.GBWHz == 0 {
		return nil, fmt.Errorf("%s is an ideal op-amp: its loop gain is infinite; give it a finite model, e.g. a0=1e6 gbw=10MHz", part)
	}
	pr := mna.ReturnRatio(part)
	sys, err := mna.Build(c, pr.Ex, pr.Ob)
	if err != nil {
		return nil, err
	}
	rt, err := Extract(sys)
	if err != nil {
		return nil, fmt.Errorf("loop gain around %s: %w", part, err)
	}
	t := *rt
	t.Num = make([]float64, len(rt.Num))
	for i, v := range rt.Num {
		t.Num[i] = -v
	}
	t.Gain = -rt.Gain
	g := loop.Gain{K: t.Gain, Zeros: t.Zeros, Poles: t.Poles}
	lo, hi := loop.Span(g)
	fig, err := loop.Analyze(g, lo, hi)
	if err != nil {
		return nil, fmt.Errorf("loop gain around %s: %w", part, err)
	}
	return &LoopGain{Part: part, T: &t, Gain: g, Figures: fig, Sys: sys}, nil
}

// ErrUnstable marks a circuit whose natural frequencies are not all in
// the open left half-plane: its response metrics do not exist (no steady
// state). The tolerance engines count such runs; verify fails them.
var ErrUnstable = errors.New("the circuit is not stable")

// circuitMetric reports whether m is judged on the circuit rather than
// on the transfer function of the requirement probe.
func (m Metric) circuitMetric() bool {
	switch m.Kind {
	case MetricStable, MetricPhaseMargin, MetricGainMargin, MetricCrossover:
		return true
	}
	return false
}

// metricContext evaluates metrics on one circuit, extracting the probe's
// transfer function, the stability and each loop gain once.
type metricContext struct {
	c     *netlist.Circuit
	in    mna.Input
	out   mna.Output
	tf    *TransferFunction
	st    *stability.Result
	loops map[string]*LoopGain
}

// transfer returns the probe's transfer function.
func (x *metricContext) transfer() (*TransferFunction, error) {
	if x.tf != nil {
		return x.tf, nil
	}
	sys, err := mna.Build(x.c, x.in, x.out)
	if err != nil {
		return nil, err
	}
	x.tf, err = Extract(sys)
	return x.tf, err
}

// stable returns the circuit's stability.
func (x *metricContext) stability() (*stability.Result, error) {
	if x.st != nil {
		return x.st, nil
	}
	st, err := stability.Analyze(x.c, stability.Options{})
	x.st = st
	return st, err
}

// value returns metric m for the circuit (see Metric.Eval and the loop
// metrics); fatal is true when the error is the circuit's, not the
// metric's (the system cannot be built).
func (x *metricContext) value(m Metric) (v float64, fatal bool, err error) {
	if !m.circuitMetric() {
		tf, err := x.transfer()
		if err != nil {
			return 0, true, err
		}
		v, err := m.Eval(tf)
		return v, false, err
	}
	if m.Kind == MetricStable {
		st, err := x.stability()
		if err != nil {
			return 0, true, err
		}
		if st.Class == stability.Stable {
			return 1, false, nil
		}
		return 0, false, nil
	}
	if x.loops == nil {
		x.loops = map[string]*LoopGain{}
	}
	lg := x.loops[m.Part]
	if lg == nil {
		if lg, err = NewLoopGain(x.c, m.Part); err != nil {
			return 0, true, fmt.Errorf("%s: %w", m.Name, err)
		}
		x.loops[m.Part] = lg
	}
	var ok bool
	switch m.Kind {
	case MetricPhaseMargin:
		v, ok = lg.Figures.PhaseMarginDeg()
		if !ok {
			return 0, false, fmt.Errorf("%s: |T| does not cross 1: no gain crossover", m.Name)
		}
	case MetricGainMargin:
		v, ok = lg.Figures.GainMarginDB()
		if !ok {
			return 0, false, fmt.Errorf("%s: arg T does not reach −180°: no phase crossover", m.Name)
		}
	default:
		v, ok = lg.Figures.CrossoverHz()
		if !ok {
			return 0, false, fmt.Errorf("%s: |T| does not cross 1: no gain crossover", m.Name)
		}
	}
	return v, false, nil
}
