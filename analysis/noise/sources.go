// Package noise computes the small-signal noise of a linear circuit: the
// output noise density from every uncorrelated noise source (resistor
// thermal noise, opamp input voltage and current noise), the
// input-referred density, and their integrals over a band.
//
// The transfer from every source to the output comes from one adjoint
// solve per frequency (mna.Solver.Adjoint): z = Y(s)⁻ᵀ·l for the output
// row l, so a unit current pushed into node a and out of node b reaches the
// output as z_a − z_b, and a unit voltage in the branch row k as z_k. The
// cost per frequency is one factorisation, one transposed solve and one
// multiply-add per source.
package noise

import (
	"fmt"
	"math"

	"nodal/mna"
	"nodal/netlist"
)

// BoltzmannJPerK is the Boltzmann constant k in J/K, exact since the 2019
// redefinition of the SI (CODATA 2018; BIPM SI Brochure, 9th edition).
const BoltzmannJPerK = 1.380649e-23

// Kind is the physical kind of a noise source.
type Kind int

const (
	// Thermal is the Johnson–Nyquist noise of a resistor: a current of
	// one-sided PSD 4kT/R (A²/Hz) in parallel, or equivalently a voltage of
	// 4kTR (V²/Hz) in series.
	Thermal Kind = iota
	// InputVoltage is an opamp's input voltage noise en (V/√Hz), in series
	// with its noninverting input.
	InputVoltage
	// InputCurrent is an opamp's input current noise in (A/√Hz) from one
	// input to Ground; the two inputs are separate, uncorrelated sources.
	InputCurrent
)

// Source is one noise source of a circuit. The sources of a circuit are
// uncorrelated: their output PSDs add.
type Source struct {
	// Name labels the source in results: the resistor's name ("R1"), or
	// the opamp's name with ".en", ".in+" or ".in-" ("U1.en").
	Name string
	Part string // the part it belongs to
	Kind Kind
	// WhitePSD is the one-sided PSD of the white part: A²/Hz for a current
	// source (a parallel thermal current, an opamp in), V²/Hz for a voltage
	// (an opamp en, the series thermal voltage of a resistor with a branch
	// current).
	WhitePSD float64
	// CornerHz is the 1/f corner: PSD(f) = WhitePSD·(1 + CornerHz/f).
	CornerHz float64

	// Where it enters: a current into row into and out of row from (−1 is
	// Ground), or with branch ≥ 0 a voltage in branch row branch.
	into, from, branch int
	// direct is the part of the source that reaches the output without
	// passing through the circuit: −1 when the output is the current
	// through this resistor (its own noise current is part of it).
	direct float64
}

// PSD returns the one-sided PSD of the source at fHz (unit as WhitePSD).
func (s *Source) PSD(fHz float64) float64 {
	if s.CornerHz == 0 {
		return s.WhitePSD
	}
	return s.WhitePSD * (1 + s.CornerHz/fHz)
}

// gain returns the transfer from the source to the output given the
// adjoint vector z.
func (s *Source) gain(z []complex128) complex128 {
	if s.branch >= 0 {
		return z[s.branch]
	}
	g := complex(s.direct, 0)
	if s.into >= 0 {
		g += z[s.into]
	}
	if s.from >= 0 {
		g -= z[s.from]
	}
	return g
}

// Sources lists the noise sources of c at the absolute temperature tempK
// (K, > 0), in part order, for the output ob (resolved by mna): every
// resistor not marked noiseless, and for each opamp its en (when > 0) and
// in at each input not on Ground (when > 0). Capacitors, inductors, controlled and
// independent sources are noiseless.
func Sources(c *netlist.Circuit, m *mna.Matrices, ob mna.Observation, tempK float64) ([]Source, error) {
	return appendSources(nil, c, m, ob, tempK)
}

// appendSources appends the sources Sources lists to out.
func appendSources(out []Source, c *netlist.Circuit, m *mna.Matrices, ob mna.Observation, tempK float64) ([]Source, error) {
	if !(tempK > 0) || math.IsInf(tempK, 0) {
		return nil, fmt.Errorf("noise: temperature %g K; want a finite value > 0", tempK)
	}
	kT4 := 4 * BoltzmannJPerK * tempK
	for i := range c.Parts {
		p := &c.Parts[i]
		switch p.Kind {
		case netlist.Resistor:
			if p.Noiseless {
				continue
			}
			if len(p.Nodes) != 2 || !(p.Value > 0) {
				return nil, fmt.Errorf("noise: resistor %s: needs two terminals and a value > 0", p.Name)
			}
			s := Source{Name: p.Name, Part: p.Name, Kind: Thermal, branch: m.BranchIndex(p.Name)}
			if s.branch >= 0 {
				s.WhitePSD = kT4 * p.Value // series voltage in v(a) − v(b) − R·i = e
			} else {
				s.WhitePSD = kT4 / p.Value
				s.into, s.from = m.NodeIndex(p.Nodes[0]), m.NodeIndex(p.Nodes[1])
				if ob.Kind == mna.PartCurrent && ob.Part == p.Name {
					s.direct = -1
				}
			}
			out = append(out, s)
		case netlist.OpAmp:
			if len(p.Nodes) != 3 {
				return nil, fmt.Errorf("noise: opamp %s: needs three terminals", p.Name)
			}
			if p.EnVPerRtHz > 0 {
				// The gain row holds −(v(+) − v(−)); a voltage e in series
				// with v(+) puts ±e on its right: the transfer is z_k.
				out = append(out, Source{Name: p.Name + ".en", Part: p.Name, Kind: InputVoltage,
					WhitePSD: p.EnVPerRtHz * p.EnVPerRtHz, CornerHz: p.FenHz, branch: m.BranchIndex(p.Name)})
			}
			if p.InAPerRtHz > 0 {
				for j, suffix := range []string{".in+", ".in-"} {
					if m.NodeIndex(p.Nodes[j]) < 0 {
						continue // an input on Ground: its current noise goes nowhere
					}
					out = append(out, Source{Name: p.Name + suffix, Part: p.Name, Kind: InputCurrent,
						WhitePSD: p.InAPerRtHz * p.InAPerRtHz, CornerHz: p.FinHz,
						into: m.NodeIndex(p.Nodes[j]), from: -1, branch: -1})
				}
			}
		}
	}
	return out, nil
}
