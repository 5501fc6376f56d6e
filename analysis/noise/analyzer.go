package noise

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"

	"nodal/mna"
	"nodal/netlist"
)

// Config chooses what a noise analysis observes.
type Config struct {
	// Out is the output: a node voltage (V/√Hz) or a part current (A/√Hz).
	Out mna.Observation
	// Input names the signal source for the input-referred density
	// ("" with HasInput: the circuit's only source). Without HasInput
	// there is no input-referred result.
	Input    string
	HasInput bool
	// TempK is the absolute temperature of every resistor, K.
	TempK float64
}

// Analyzer evaluates the noise of one circuit at one output, one
// frequency at a time: one factorisation of Y(s) and one adjoint solve
// per frequency, whatever the number of sources. It is not safe for
// concurrent use.
type Analyzer struct {
	// Sources are the noise sources, in part order.
	Sources []Source
	// OutUnit is "V" for a voltage output, "A" for a current output; the
	// output density is in OutUnit/√Hz. InUnit is the unit of the input
	// source ("V" or "A"), "" without an input.
	OutUnit, InUnit string
	// Output names the observed quantity ("v(out)", "v(p)-v(n)", "i(R1)");
	// Input the input source ("" without one).
	Output, Input string
	// TempK is the temperature of the resistors, K.
	TempK float64

	solver *mna.Solver
	row    mna.Row
	drive  []float64 // right-hand side of the unit input; nil without input
	feed   float64   // the row's feed-through of the input
	z      []complex128
	m      *mna.Matrices
	ob     mna.Observation
	stale  error    // the error of the last Revalue, nil after a successful one
	spare  []Source // Revalue's working memory (the sources before the last one)
}

// New builds the matrices of c once and resolves the output and input.
// Errors: those of mna (*LookupError for an unknown node, part or source,
// *PartError), or a bad temperature.
func New(c *netlist.Circuit, cfg Config) (*Analyzer, error) {
	m, err := mna.BuildMatrices(c)
	if err != nil {
		return nil, err
	}
	return NewOn(c, m, cfg)
}

// NewOn is New on matrices m that are c's own: mna.BuildMatrices of c, or
// those of an mna.Restamper holding c's values. The Analyzer solves on m
// as it is at each call, so after m is restamped with another circuit's
// values, Revalue with that circuit makes the Analyzer that circuit's.
func NewOn(c *netlist.Circuit, m *mna.Matrices, cfg Config) (*Analyzer, error) {
	var ex *mna.Excited
	var err error
	if cfg.HasInput {
		ex, err = m.Excite(mna.Excitation{Kind: mna.Drive, Source: cfg.Input})
	} else {
		// The output row does not depend on the excitation except for the
		// feed-through of a driven source, which noise never uses: resolve
		// it under a test current into the first node.
		if len(m.Unknowns) == 0 || m.NodeIndex(c.Nodes[len(c.Nodes)-1]) < 0 {
			return nil, fmt.Errorf("noise: the circuit has no node to observe")
		}
		ex, err = m.Excite(mna.Excitation{Kind: mna.Injection, Inject: c.Nodes[len(c.Nodes)-1]})
	}
	if err != nil {
		return nil, err
	}
	if ex.M != m {
		return nil, fmt.Errorf("noise: the input changes the circuit's stamps")
	}
	row, ob, err := ex.Observe(cfg.Out)
	if err != nil {
		return nil, err
	}
	src, err := Sources(c, m, ob, cfg.TempK)
	if err != nil {
		return nil, err
	}
	a := &Analyzer{Sources: src, OutUnit: "V", Output: observationName(ob), TempK: cfg.TempK,
		solver: mna.NewSolver(m), row: row, z: make([]complex128, m.Size()), m: m, ob: ob}
	if ob.Kind != mna.NodeVoltage {
		a.OutUnit = "A"
	}
	if cfg.HasInput {
		p, _ := c.Part(ex.Ex.Source)
		a.Input, a.InUnit, a.drive, a.feed = p.Name, "V", ex.B, row.Feed
		if p.Kind == netlist.CurrentSource {
			a.InUnit = "A"
		}
	}
	return a, nil
}

// Revalue takes the noise sources' densities from c, a circuit with the
// parts of the one the Analyzer was made for (its values restamped into
// the Analyzer's matrices, mna.Restamper): resistor values, opamp en and
// in, their corners. The output row and the input drive are those of the
// first circuit, so a probe whose row or drive depends on part values
// (not a node voltage) must not be revalued. An error (a value Sources
// refuses, other parts) makes every At fail with it until a Revalue
// succeeds. Sources is replaced; its memory of two Revalues back is
// reused, so a copy of it kept across Revalues must be cloned.
func (a *Analyzer) Revalue(c *netlist.Circuit) error {
	n := len(a.Sources)
	src, err := appendSources(a.spare[:0], c, a.m, a.ob, a.TempK)
	if err == nil && len(src) != n {
		err = fmt.Errorf("noise: %d sources, not %d: not the circuit of this analysis", len(src), n)
	}
	a.stale = err
	if err != nil {
		return err
	}
	a.Sources, a.spare = src, a.Sources
	return nil
}

// observationName writes an observation as the command line does.
func observationName(ob mna.Observation) string {
	switch ob.Kind {
	case mna.NodeVoltage:
		if ob.Ref == "" || ob.Ref == netlist.Ground {
			return "v(" + ob.Node + ")"
		}
		return "v(" + ob.Node + ")-v(" + ob.Ref + ")"
	case mna.SourceCurrent:
		return "-i(" + ob.Part + ")"
	}
	return "i(" + ob.Part + ")"
}

// HasInput reports whether the analysis has an input source, so that
// input-referred results exist.
func (a *Analyzer) HasInput() bool { return a.drive != nil }

// At evaluates the noise at fHz (> 0, finite): contrib[i] receives the
// output PSD of Sources[i] (OutUnit²/Hz; len(contrib) must be
// len(Sources)), and it returns the total output PSD and |H|, the
// magnitude of the transfer from the input (NaN without input). A
// singular Y(j2πf) is an error.
func (a *Analyzer) At(fHz float64, contrib []float64) (outPSD, gain float64, err error) {
	if !(fHz > 0) || math.IsInf(fHz, 0) {
		return 0, 0, fmt.Errorf("noise: frequency %g Hz; want a finite value > 0", fHz)
	}
	if a.stale != nil {
		return 0, 0, a.stale
	}
	if len(contrib) != len(a.Sources) {
		return 0, 0, fmt.Errorf("noise: %d contribution slots for %d sources", len(contrib), len(a.Sources))
	}
	if err := a.solver.Factor(complex(0, 2*math.Pi*fHz)); err != nil {
		return 0, 0, fmt.Errorf("noise at %g Hz: %w", fHz, err)
	}
	if err := a.solver.Adjoint(a.row, a.z); err != nil {
		return 0, 0, err
	}
	for i := range a.Sources {
		s := &a.Sources[i]
		g := s.gain(a.z)
		p := (real(g)*real(g) + imag(g)*imag(g)) * s.PSD(fHz)
		contrib[i] = p
		outPSD += p
	}
	gain = math.NaN()
	if a.drive != nil {
		h := complex(a.feed, 0)
		for i, b := range a.drive {
			if b != 0 {
				h += a.z[i] * complex(b, 0)
			}
		}
		gain = cmplx.Abs(h)
	}
	return outPSD, gain, nil
}

// Spectrum is the noise at a list of frequencies.
type Spectrum struct {
	FreqHz []float64
	// OutDensity is the output noise density, OutUnit/√Hz.
	OutDensity []float64
	// InDensity is the input-referred density OutDensity/|H|, InUnit/√Hz;
	// nil without input. +Inf where |H| = 0.
	InDensity []float64
	// Gain is |H| from the input (nil without input).
	Gain []float64
	// ContribPSD[i][j] is the output PSD of source j at FreqHz[i],
	// OutUnit²/Hz.
	ContribPSD [][]float64
}

// Top returns the index of the largest contributor at point i and its
// fraction of the output PSD (0..1); −1 when there is no noise.
func (sp *Spectrum) Top(i int) (int, float64) {
	best, total := -1, 0.0
	for j, p := range sp.ContribPSD[i] {
		total += p
		if best < 0 || p > sp.ContribPSD[i][best] {
			best = j
		}
	}
	if best < 0 || total == 0 {
		return -1, 0
	}
	return best, sp.ContribPSD[i][best] / total
}

// Spectrum evaluates At at every frequency (each > 0), checking ctx every
// few points.
func (a *Analyzer) Spectrum(ctx context.Context, freqsHz []float64) (*Spectrum, error) {
	n := len(freqsHz)
	sp := &Spectrum{FreqHz: append([]float64(nil), freqsHz...), OutDensity: make([]float64, n),
		ContribPSD: make([][]float64, n)}
	if a.HasInput() {
		sp.InDensity, sp.Gain = make([]float64, n), make([]float64, n)
	}
	flat := make([]float64, n*len(a.Sources))
	for i, f := range freqsHz {
		if i%32 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		c := flat[i*len(a.Sources) : (i+1)*len(a.Sources) : (i+1)*len(a.Sources)]
		psd, g, err := a.At(f, c)
		if err != nil {
			return nil, err
		}
		sp.ContribPSD[i] = c
		sp.OutDensity[i] = math.Sqrt(psd)
		if sp.Gain != nil {
			sp.Gain[i] = g
			sp.InDensity[i] = sp.OutDensity[i] / g
		}
	}
	return sp, nil
}
