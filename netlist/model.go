package netlist

import (
	"fmt"
	"math"
)

// model is the elaborator's valueModel: the compiled parameter and part
// expressions of a circuit, replayed by Vary. It is immutable after
// Elaborate, so concurrent Vary calls on one Circuit are safe; each call
// works on its own slot vector.
type model struct {
	nominal []float64  // nominal slot values
	lets    []letStep  // parameter slots in definition order (each after what it uses)
	parts   []partStep // parts whose values depend on parameters or tolerances
}

// letStep recomputes one parameter slot.
type letStep struct {
	name  string // hierarchical parameter name, for errors
	slot  int
	fn    evalFn
	vi    int  // index into Variations, or -1
	param int  // index into Circuit.Params, or -1
	konst bool // fn is constant
	// design marks a `let` statement: a design equation, evaluated once at
	// nominal values. Vary keeps its nominal value (times its own draw when
	// it is toleranced) instead of recomputing it from drawn inputs. Block
	// parameter bindings are not design lets: they pass drawn values on.
	design bool
}

// finish freezes the model: it keeps the nominal slots and drops the
// parameter steps that can never change (constant and untoleranced).
func (m *model) finish(nominal []float64) {
	m.nominal = append([]float64(nil), nominal...)
	kept := m.lets[:0]
	for _, l := range m.lets {
		if l.design && l.vi < 0 {
			continue // a design let keeps its nominal value
		}
		if !l.konst || l.vi >= 0 {
			kept = append(kept, l)
		}
	}
	m.lets = kept
}

// revalue implements valueModel.
func (m *model) revalue(dst *Circuit, factors, slots []float64) ([]float64, error) {
	slots = append(slots[:0], m.nominal...)
	for _, l := range m.lets {
		var v float64
		if l.design {
			v = m.nominal[l.slot]
		} else {
			v = l.fn(slots)
		}
		if l.vi >= 0 {
			v *= factors[l.vi]
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return slots, fmt.Errorf("vary: parameter %s is not finite (%v)", l.name, v)
		}
		slots[l.slot] = v
		if l.param >= 0 {
			dst.Params[l.param].Value = v
		}
	}
	for i := range m.parts {
		s := &m.parts[i]
		f := 1.0
		if s.vi >= 0 {
			f = factors[s.vi]
		}
		p := &dst.Parts[s.idx]
		if msg := s.apply(p, slots, f); msg != "" {
			return slots, fmt.Errorf("vary: %s %s: %s", p.Kind, p.Name, msg)
		}
	}
	return slots, nil
}
