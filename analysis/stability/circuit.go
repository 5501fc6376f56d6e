package stability

import (
	"fmt"
	"slices"

	"nodal/mna"
	"nodal/netlist"
)

// The dominant-pole model put in place of every ideal op-amp to see the
// polarity an ideal op-amp hides (a nullor behaves the same with its
// inputs swapped): open-loop gain a(s) = A0/(1 + s·A0/ωt) with
// A0 = FiniteOpAmpA0 and ωt = 2π·FiniteOpAmpGBWHz.
const (
	FiniteOpAmpA0    = 1e6  // V/V
	FiniteOpAmpGBWHz = 10e6 // Hz, unity-gain frequency
)

// Result is the stability of one circuit.
type Result struct {
	Class Class
	// Reason says how the class was reached (every frequency computed,
	// the passivity certificate, the search of a large block).
	Reason Reason
	// AllNatural reports whether Natural holds every finite natural
	// frequency of the circuit. It is false when a diagonal block larger
	// than MaxUnknowns was judged without computing its frequencies
	// (Reason says how); a caller that counts or uses the natural
	// frequencies must require it.
	AllNatural bool
	// Natural is every finite natural frequency (rad/s) when AllNatural,
	// else those that were computed or found; sorted by decreasing real
	// part.
	Natural []complex128
	// Offending are the natural frequencies that make the circuit marginal
	// or unstable (rad/s): empty when Stable or Passive; when not
	// AllNatural, those found.
	Offending []complex128
	// LargestBlock is the number of unknowns of the largest diagonal block
	// whose frequencies were not computed (0 when none).
	LargestBlock int
	// SearchedRad is the range of real shifts (rad/s) of the Arnoldi
	// search of ReasonNotFound and ReasonFound, and Backward the largest
	// backward error η of a frequency found (dimensionless, arnoldi.go).
	SearchedRad [2]float64
	Backward    float64
	// Involved names the gain elements (controlled sources, op-amps with
	// a finite gain) whose loop carries an offending frequency: breaking
	// the element's control removes at least one. Filled by Options.Explain.
	Involved []string
	// Polarity names the ideal op-amps whose loop is unstable once they
	// are given the finite model above (FiniteOpAmpA0, FiniteOpAmpGBWHz),
	// the usual sign of swapped inputs; PolarityFrequencies are the
	// offending natural frequencies of that finite-model circuit (rad/s).
	// Filled by Options.Explain.
	Polarity            []string
	PolarityFrequencies []complex128

	// suspects, when not nil, are the only gain elements whose broken
	// control can change an offending frequency (large.go).
	suspects map[string]bool
}

// Err is nil for a Stable result and otherwise the error of a question
// that needs a stable circuit: wrapping ErrUnstable (Marginal, Unstable)
// or ErrUnchecked with the reason (Unchecked, Passive).
func (r *Result) Err() error {
	switch r.Class {
	case Stable:
		return nil
	case Unchecked, Passive:
		return fmt.Errorf("%w (%s): %s", ErrUnchecked, r.Class, r.Reason)
	}
	return fmt.Errorf("%w: %s", ErrUnstable, r.Class)
}

// Options choose how much Analyze explains.
type Options struct {
	// Explain fills Involved and Polarity, at the cost of one more
	// stability analysis per gain element and per ideal op-amp.
	Explain bool
}

// ofMatrices returns the stability of the circuit c whose MNA matrices
// are m (the class, the natural frequencies, the offending ones, rad/s):
// every natural frequency by the dense method up to MaxUnknowns unknowns,
// and past it the large-circuit path (large.go), which reads c's parts
// for the passive certificate.
func ofMatrices(c *netlist.Circuit, m *mna.Matrices) (*Result, error) {
	if m.Size() > MaxUnknowns {
		return largeResult(c, m)
	}
	// A regular Y(0) by the sweep's componentwise pivot rule (mna's
	// pivotVanished; Higham 2002, Theorem 9.3) refutes every natural
	// frequency at s = 0.
	regularAt0 := mna.NewSolver(m).Factor(0) == nil
	roots, _, err := finiteEigenvalues(m.G.Dense(), m.C.Dense(), regularAt0)
	if err != nil {
		return nil, err
	}
	cl, off := Classify(roots)
	if cl == Unstable && !slices.ContainsFunc(off, func(r complex128) bool { return real(r) != 0 }) && semisimpleAxis(m.G.Dense(), m.C.Dense(), off) {
		cl = Marginal // repeated on the axis, but with as many modes as roots
	}
	return &Result{Class: cl, Natural: roots, Offending: off, AllNatural: true}, nil
}

// Analyze builds the MNA matrices of c and returns its stability.
// Errors: *mna.PartError for a part that cannot be stamped,
// ErrSingularPencil when the circuit equations are singular at every s.
func Analyze(c *netlist.Circuit, opt Options) (*Result, error) {
	m, err := mna.BuildMatrices(c)
	if err != nil {
		return nil, err
	}
	res, err := ofMatrices(c, m)
	if err != nil {
		return nil, fmt.Errorf("stability: %w", err)
	}
	if !opt.Explain || res.Class == Unchecked || res.Class == Passive {
		return res, nil
	}
	if res.Class != Stable {
		res.Involved = involved(c, m, res, func(string) bool { return true })
	}
	return res, res.polarity(c)
}

// involved lists the gain elements p (with want(p)) whose broken control
// leaves provably fewer offending natural frequencies than res has in the
// circuit of m, or whose broken control leaves an unstable circuit
// marginal. Only the gain elements are tried (mna.Matrices.GainParts):
// the other parts have no control to break. A broken circuit whose
// result is not complete counts only when it is proven free of what res
// found: not Unchecked, and either every frequency known or not Unstable.
func involved(c *netlist.Circuit, m *mna.Matrices, res *Result, want func(string) bool) []string {
	var out []string
	for _, name := range m.GainParts() {
		if !want(name) || (res.suspects != nil && !res.suspects[name]) {
			continue
		}
		e, err := m.Excite(mna.Excitation{Kind: mna.BrokenControl, Part: name})
		if err != nil {
			continue
		}
		b, err := ofMatrices(c, e.M)
		if err != nil || b.Class == Unchecked || (!b.AllNatural && b.Class == Unstable) {
			continue
		}
		// Fewer offending frequencies, or the same ones no longer growing
		// (a tank driven at its own resonance by its twin through the
		// part: the broken circuit is two free tanks, marginal).
		if len(b.Offending) < len(res.Offending) || res.Class == Unstable && b.Class == Marginal {
			out = append(out, name)
		}
	}
	return out
}

// isIdealOpAmp reports whether p is an op-amp with neither a0 nor gbw.
func isIdealOpAmp(p *netlist.Part) bool {
	return p.Kind == netlist.OpAmp && p.A0 == 0 && p.GBWHz == 0
}

// polarity evaluates c with every ideal op-amp given the finite model and
// names the ideal op-amps whose loop is then unstable.
func (res *Result) polarity(c *netlist.Circuit) error {
	f := c.Clone()
	var ideal []string
	for i := range f.Parts {
		if p := &f.Parts[i]; isIdealOpAmp(p) {
			p.A0, p.GBWHz = FiniteOpAmpA0, FiniteOpAmpGBWHz
			ideal = append(ideal, p.Name)
		}
	}
	if len(ideal) == 0 {
		return nil
	}
	m, err := mna.BuildMatrices(f)
	if err != nil {
		return err
	}
	fr, err := ofMatrices(f, m)
	if err != nil || fr.Class != Unstable {
		return nil // the finite model changes nothing we can judge
	}
	res.PolarityFrequencies = fr.Offending
	res.Polarity = involved(f, m, fr, func(name string) bool {
		q, _ := c.Part(name)
		return q != nil && isIdealOpAmp(q)
	})
	if len(res.Polarity) == 0 {
		res.Polarity = ideal
	}
	return nil
}
