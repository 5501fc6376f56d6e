package stability

import (
	"fmt"

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
	// Natural is every finite natural frequency (rad/s), sorted by
	// decreasing real part.
	Natural []complex128
	// Offending are the natural frequencies that make the circuit marginal
	// or unstable (rad/s): empty when Stable.
	Offending []complex128
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
}

// Options choose how much Analyze explains.
type Options struct {
	// Explain fills Involved and Polarity, at the cost of one more
	// eigenvalue computation per gain element and per ideal op-amp.
	Explain bool
}

// OfMatrices returns the class, every natural frequency and the offending
// ones of the circuit whose MNA matrices are m (rad/s).
//
// Past MaxUnknowns it returns Unchecked with no frequencies.
func OfMatrices(m *mna.Matrices) (Class, []complex128, []complex128, error) {
	if m.Size() > MaxUnknowns {
		return Unchecked, nil, nil, nil
	}
	roots, _, err := FiniteEigenvalues(m.G.Dense(), m.C.Dense())
	if err != nil {
		return Unstable, nil, nil, err
	}
	cl, off := Classify(roots)
	return cl, roots, off, nil
}

// Analyze builds the MNA matrices of c and returns its stability.
// Errors: *mna.PartError for a part that cannot be stamped,
// ErrSingularPencil when the circuit equations are singular at every s.
func Analyze(c *netlist.Circuit, opt Options) (*Result, error) {
	m, err := mna.BuildMatrices(c)
	if err != nil {
		return nil, err
	}
	cl, nat, off, err := OfMatrices(m)
	if err != nil {
		return nil, fmt.Errorf("stability: %w", err)
	}
	res := &Result{Class: cl, Natural: nat, Offending: off}
	if !opt.Explain || cl == Unchecked {
		return res, nil
	}
	if cl != Stable {
		res.Involved = involved(c, m, len(off), func(*netlist.Part) bool { return true })
	}
	return res, res.polarity(c)
}

// involved lists the parts p (with want(p)) whose broken control leaves
// fewer than n offending natural frequencies in the circuit of m.
func involved(c *netlist.Circuit, m *mna.Matrices, n int, want func(*netlist.Part) bool) []string {
	var out []string
	for i := range c.Parts {
		p := &c.Parts[i]
		if !want(p) {
			continue
		}
		e, err := m.Excite(mna.Excitation{Kind: mna.BrokenControl, Part: p.Name})
		if err != nil {
			continue // not a gain element
		}
		if _, _, off, err := OfMatrices(e.M); err == nil && len(off) < n {
			out = append(out, p.Name)
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
	cl, _, off, err := OfMatrices(m)
	if err != nil || cl != Unstable {
		return nil // the finite model changes nothing we can judge
	}
	res.PolarityFrequencies = off
	res.Polarity = involved(f, m, len(off), func(p *netlist.Part) bool {
		q, _ := c.Part(p.Name)
		return q != nil && isIdealOpAmp(q)
	})
	if len(res.Polarity) == 0 {
		res.Polarity = ideal
	}
	return nil
}
