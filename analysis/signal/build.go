package signal

import (
	"math"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// builder turns the syntax tree into a Signal, checking meaning.
type builder struct {
	text *syntax.Text
	warn []*syntax.Diagnostic
}

// errAt is a one-diagnostic syntax.ErrorList at p.
func (b *builder) errAt(p lexer.Position, format string, args ...any) error {
	return syntax.ErrorList{b.text.Errorf(p.Offset, format, args...)}
}

// signedProducts flattens a sum into (sign, product) pairs.
func signedProducts(s *sumAST) ([]float64, []*prodAST) {
	signs := []float64{signOf(s.Lead)}
	prods := []*prodAST{s.First}
	for _, r := range s.Rest {
		signs = append(signs, signOf(r.Op))
		prods = append(prods, r.Prod)
	}
	return signs, prods
}

func signOf(op string) float64 {
	if op == "-" || op == "−" {
		return -1
	}
	return 1
}

func (b *builder) signal(s *sumAST) (*Signal, error) {
	out := &Signal{}
	signs, prods := signedProducts(s)
	for i, p := range prods {
		pr, err := b.product(p, false)
		if err != nil {
			return nil, err
		}
		if pr.hasT {
			return nil, b.errAt(pr.tPos, "t may appear only inside sin(...) or cos(...)")
		}
		if pr.angle != "" {
			return nil, b.errAt(pr.anglePos, "an angle unit belongs inside sin(...) or cos(...)")
		}
		v := signs[i] * pr.value
		if pr.call == nil {
			out.DC += v
			continue
		}
		t, err := b.term(pr.call)
		if err != nil {
			return nil, err
		}
		t.Amplitude = v
		t.Pos = b.text.At(p.Pos)
		out.Terms = append(out.Terms, t)
	}
	if math.IsInf(out.DC, 0) || math.IsNaN(out.DC) {
		return nil, b.errAt(s.First.Pos, "constant out of range")
	}
	out.Warnings = b.warn
	return out, nil
}

// product is the meaning of one product of factors.
type product struct {
	value    float64    // product of the numeric factors and pi
	call     *factorAST // the sin/cos factor, if any
	hasT     bool
	tPos     lexer.Position
	angle    string // "deg" or "rad" if a number carried an angle unit
	anglePos lexer.Position
	piCount  int
	twoPi    bool // written as 2*pi (a literal 2 directly before pi)
}

// product evaluates p. inArg says p sits inside a sin/cos argument, where
// calls are not allowed.
func (b *builder) product(p *prodAST, inArg bool) (product, error) {
	pr := product{value: 1}
	factors := []*factorAST{p.First}
	ops := []string{"*"}
	for _, m := range p.Rest {
		factors = append(factors, m.Factor)
		ops = append(ops, m.Op)
	}
	prevTwo := false
	for i, f := range factors {
		divide := ops[i] == "/"
		isTwo := false
		switch {
		case f.Number != nil:
			n, err := b.number(*f.Number, f.Pos)
			if err != nil {
				return pr, err
			}
			if n.angle != "" {
				if pr.angle != "" {
					return pr, b.errAt(f.Pos, "only one angle unit per product")
				}
				pr.angle, pr.anglePos = n.angle, f.Pos
			}
			if divide {
				if n.value == 0 {
					return pr, b.errAt(f.Pos, "division by zero")
				}
				pr.value /= n.value
			} else {
				pr.value *= n.value
			}
			isTwo = n.value == 2 && !divide
		case f.Args != nil:
			if f.Name != "sin" && f.Name != "cos" {
				return pr, b.errAt(f.Pos, "unknown function %q: expected sin or cos", f.Name)
			}
			if inArg {
				return pr, b.errAt(f.Pos, "%s(...) inside a sin/cos argument is not a sinusoid", f.Name)
			}
			if pr.call != nil {
				return pr, b.errAt(f.Pos, "a product of two sinusoids is not a sum of sinusoids; write one sin or cos per term")
			}
			if divide {
				return pr, b.errAt(f.Pos, "%s(...) may not divide", f.Name)
			}
			pr.call = f
		case f.Name == "pi" || f.Name == "π":
			if divide {
				pr.value /= piValue
			} else {
				pr.value *= piValue
				pr.twoPi = pr.twoPi || prevTwo
			}
			pr.piCount++
		case f.Name == "t":
			if pr.hasT {
				return pr, b.errAt(f.Pos, "t may appear only once in a term (the signal must be sinusoidal)")
			}
			if divide {
				return pr, b.errAt(f.Pos, "t may not divide")
			}
			pr.hasT, pr.tPos = true, f.Pos
		case f.Name == "sin" || f.Name == "cos":
			return pr, b.errAt(f.Pos, "expected \"(\" after %s", f.Name)
		default:
			return pr, b.errAt(f.Pos, "unknown name %q: expected a number, pi, t, sin(...) or cos(...)", f.Name)
		}
		prevTwo = isTwo
	}
	if math.IsInf(pr.value, 0) || math.IsNaN(pr.value) {
		return pr, b.errAt(p.Pos, "value out of range")
	}
	return pr, nil
}

// term reads the argument of sin/cos: one product containing t (ω·t) and
// any number of constant products (the phase).
func (b *builder) term(call *factorAST) (Term, error) {
	t := Term{Func: call.Name}
	signs, prods := signedProducts(call.Args)
	var omegaProd *prodAST
	for i, p := range prods {
		pr, err := b.product(p, true)
		if err != nil {
			return t, err
		}
		if !pr.hasT {
			ph := signs[i] * pr.value
			if pr.angle == "deg" {
				ph *= piValue / 180
			}
			if pr.angle == "" && pr.piCount == 0 && math.Abs(pr.value) > 2*piValue {
				// A bare number is radians; one above a full turn
				// was almost surely meant in degrees.
				written := strings.Join(strings.Fields(string(b.text.Source[p.Pos.Offset:p.EndPos.Offset])), "")
				b.warn = append(b.warn, b.text.Diag(p.Pos.Offset, syntax.SevWarning,
					"read "+written+" as radians; did you mean "+written+"deg?", "a phase without deg or rad is in radians"))
			}
			t.PhaseRad += ph
			continue
		}
		if omegaProd != nil {
			return t, b.errAt(p.Pos, "t appears in two places of the argument; combine them into one ω·t")
		}
		if pr.angle != "" {
			return t, b.errAt(pr.anglePos, "an angle unit on the frequency: write ω in rad/s or 2*pi*f with f in Hz")
		}
		omegaProd = p
		t.OmegaRad = signs[i] * pr.value
		t.WrittenAsHz = pr.piCount == 1 && pr.twoPi
	}
	if omegaProd == nil {
		return t, b.errAt(call.Pos, "%s(...) has no t: expected an argument like 2*pi*400*t or 2500*t", call.Name)
	}
	if !(t.OmegaRad > 0) {
		return t, b.errAt(omegaProd.Pos, "angular frequency must be positive (write the sign outside %s)", call.Name)
	}
	if math.IsInf(t.PhaseRad, 0) || math.IsNaN(t.PhaseRad) {
		return t, b.errAt(call.Pos, "phase out of range")
	}
	if math.Abs(t.PhaseRad) > 2*piValue {
		// More than a full turn: reduce it, so that the phase prints in
		// degrees without overflow and reads back as the same angle.
		t.PhaseRad = math.Remainder(t.PhaseRad, 2*piValue)
	}
	t.OmegaText = strings.Join(strings.Fields(string(b.text.Source[omegaProd.Pos.Offset:omegaProd.EndPos.Offset])), "")
	return t, nil
}
