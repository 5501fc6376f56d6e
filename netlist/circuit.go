package netlist

import "fmt"

// Kind is the kind of an element, named in the circuit file by an explicit
// keyword. The first letter of an element's name never implies its kind.
// It is one byte, so that a Part packs it with its flags.
type Kind uint8

// The element kinds of the circuit language.
const (
	Resistor      Kind = iota + 1 // two terminals, value in ohms
	Capacitor                     // two terminals, value in farads
	Inductor                      // two terminals, value in henries
	VoltageSource                 // independent small-signal voltage source, + on terminal 0
	CurrentSource                 // independent current source, pushes current into terminal 0 through the external circuit
	VCVS                          // voltage-controlled voltage source, gain in V/V
	VCCS                          // voltage-controlled current source, transconductance in S
	CCVS                          // current-controlled voltage source, transresistance in ohms
	CCCS                          // current-controlled current source, gain in A/A
	OpAmp                         // operational amplifier (noninverting, inverting, output), output referred to ground
	Coupling                      // mutual inductance between two inductors, value is K
)

// kindKeywords are the words that name a kind in a circuit file. A
// controlled source is written with the word of its output (voltage source,
// current source) and a value that is a gain times one control: v(c, d) or
// i(PART).
var kindKeywords = map[Kind]string{
	Resistor: "resistor", Capacitor: "capacitor", Inductor: "inductor",
	VoltageSource: "voltage source", CurrentSource: "current source", VCVS: "voltage source", VCCS: "current source",
	CCVS: "voltage source", CCCS: "current source", OpAmp: "opamp", Coupling: "coupling",
}

// String returns the keyword that names the kind in a circuit file; the
// controlled sources share the keyword of their output ("voltage source",
// "current source").
func (k Kind) String() string {
	if s, ok := kindKeywords[k]; ok {
		return s
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// KindByKeyword returns the kind named by a circuit-file keyword; for
// "voltage source" and "current source" it is the independent source (the
// value decides whether it is controlled).
func KindByKeyword(word string) (Kind, bool) {
	k, ok := keywordKinds[word]
	return k, ok
}

// keywordKinds maps each keyword to the first kind in constant order that
// it names.
var keywordKinds = func() map[string]Kind {
	m := map[string]Kind{}
	for k := Coupling; k >= Resistor; k-- {
		m[kindKeywords[k]] = k
	}
	return m
}()

// Keywords returns every element keyword once, in the order of the Kind
// constants.
func Keywords() []string {
	out := make([]string, 0, len(kindKeywords))
	for k := Resistor; k <= Coupling; k++ {
		if !contains(out, kindKeywords[k]) {
			out = append(out, kindKeywords[k])
		}
	}
	return out
}

// Controlled reports whether k is a controlled source.
func (k Kind) Controlled() bool {
	return k == VCVS || k == VCCS || k == CCVS || k == CCCS
}

// Dist is the statistical distribution of a toleranced value.
type Dist int

const (
	// Uniform draws uniformly over nominal·(1 ± tol). It is the default.
	Uniform Dist = iota
	// Normal draws from a normal distribution with σ = tol/3 (relative).
	Normal
)

// String returns the keyword of the distribution ("uniform" or "normal").
func (d Dist) String() string {
	if d == Normal {
		return "normal"
	}
	return "uniform"
}

// Tolerance is the relative tolerance of a value. A zero Rel means the value
// is exact.
type Tolerance struct {
	Rel  float64 // relative half-width, 0.01 for ±1 %; for Normal it is 3σ
	Dist Dist
}

// Ground is the canonical name of the reference node. The file may also
// call it "0".
const Ground = "gnd"

// Part is one flat, evaluated element of a circuit.
//
// Invariants after Elaborate: Name is unique and hierarchical ("LP1.R1");
// Nodes holds the terminal node names in the order of the kind's terminals
// (the reference node is always Ground); Value is in SI units, finite, and
// > 0 for resistors, capacitors and inductors.
//
// The fields are laid out for size (Kind and the flags share one word): a
// circuit of 10⁶ parts holds 10⁶ of them.
type Part struct {
	Name      string
	Kind      Kind
	Fixed     bool     // marked fixed in the file: standard-value rounding leaves it alone
	Noiseless bool     // a resistor marked noiseless (see the noise model below)
	Nodes     []string // terminal nodes; two for two-terminal kinds, three for OpAmp, none for Coupling

	// Value is the element's main value in SI units: ohms, farads, henries,
	// the source amplitude (V or A, default 1), the controlled-source gain
	// (V/V, S, ohms or A/A) or the coupling factor K. Zero for OpAmp.
	Value float64

	Tol Tolerance // the part's own tolerance; zero when exact

	PhaseRad float64 // independent sources: phase of the small-signal amplitude, radians

	Sense   [2]string // VCVS, VCCS: the controlling node pair (c, d)
	Control string    // CCVS, CCCS: the element whose current controls; Coupling: unused
	Coupled [2]string // Coupling: the two inductors, dots on their first terminals

	// OpAmp model. A0 == 0 with GBWHz == 0 is the ideal nullor; A0 > 0 is a
	// finite DC gain; GBWHz > 0 is the gain-bandwidth product in Hz (alone:
	// integrator ωt/s; with A0: single pole A0/(1 + s·A0/ωt), ωt = 2π·GBWHz).
	// Rout > 0 is an output resistance in ohms.
	A0    float64
	GBWHz float64
	Rout  float64

	// Noise model (nodal noise); zero means absent. A resistor is noisy
	// (thermal, 4kTR) unless Noiseless. An opamp has an input voltage noise
	// density EnVPerRtHz (V/√Hz, in series with its noninverting input)
	// and an input current noise density InAPerRtHz (A/√Hz, from each
	// input to Ground, the two uncorrelated), with 1/f corners FenHz and
	// FinHz (Hz): density(f) = white·√(1 + fc/f).
	EnVPerRtHz float64
	InAPerRtHz float64
	FenHz      float64
	FinHz      float64

	Pos       Pos  // position of the element's name
	ValueSpan Span // where the value expression stands in the source (empty when the value was defaulted)
}

// Span is a half-open byte range [Start, End) of a source file (the line
// and column of Start are those of the part or parameter that holds it,
// or File.Position of the offset).
type Span struct {
	Start, End int // byte offsets into the source
}

// Param is an evaluated top-level `let` parameter.
type Param struct {
	Name  string
	Value float64 // SI value
	Unit  string  // unit symbol attached to the literal that set it, if any ("F", "Hz"); may be empty
	Tol   Tolerance
	Pos   Pos
	Span  Span // the value expression in the source
}

// Variation is one toleranced item of a circuit: a part with its own
// tolerance, or a toleranced parameter (one shared draw for every use).
type Variation struct {
	Name    string  // part name ("LP1.R1") or parameter name ("C")
	IsParam bool    // true for a toleranced `let`
	Nominal float64 // SI value
	Tol     Tolerance
	Pos     Pos
}

// Circuit is a flat, evaluated and validated circuit: the result of
// Elaborate. It has value semantics for analysis: Vary returns an
// independent copy, so Monte Carlo runs never share mutable state.
type Circuit struct {
	File  string // file name as given to Parse
	Title string
	Parts []Part
	// Nodes lists every node name; Nodes[0] is Ground. The rest appear in
	// order of first use.
	Nodes        []string
	Params       []Param
	Requirements []Requirement
	// Responses are the named responses in declaration order; the first
	// is the default output of every command.
	Responses []Response
	// Variations lists every toleranced item in source order; Vary takes one
	// factor per entry.
	Variations []Variation
	// Warnings are non-fatal diagnostics (for example a node touched by only
	// one terminal).
	Warnings ErrorList

	// model recomputes part values for Vary; nil in a hand-built Circuit, in
	// which case Vary scales part values directly (parts only).
	model valueModel
	// varySlots is VaryInto's working memory when this circuit is the
	// target (never shared: Clone drops it).
	varySlots []float64
}

// valueModel recomputes every part value from multiplicative factors on the
// circuit's Variations. It is implemented by the elaborator.
type valueModel interface {
	// revalue writes into dst the values for factors, using slots
	// (grown as needed) as working memory, and returns slots.
	revalue(dst *Circuit, factors, slots []float64) ([]float64, error)
}

// Part returns the part with the given hierarchical name.
func (c *Circuit) Part(name string) (*Part, bool) {
	for i := range c.Parts {
		if c.Parts[i].Name == name {
			return &c.Parts[i], true
		}
	}
	return nil, false
}

// HasNode reports whether name is a node of the circuit ("0" counts as Ground).
func (c *Circuit) HasNode(name string) bool {
	if name == "0" {
		name = Ground
	}
	for _, n := range c.Nodes {
		if n == name {
			return true
		}
	}
	return false
}

// Clone returns a deep copy of c.
func (c *Circuit) Clone() *Circuit {
	d := *c
	d.Parts = make([]Part, len(c.Parts))
	for i, p := range c.Parts {
		p.Nodes = append([]string(nil), p.Nodes...)
		d.Parts[i] = p
	}
	d.Nodes = append([]string(nil), c.Nodes...)
	d.Params = append([]Param(nil), c.Params...)
	d.Requirements = append([]Requirement(nil), c.Requirements...)
	d.Responses = append([]Response(nil), c.Responses...)
	d.Variations = append([]Variation(nil), c.Variations...)
	d.Warnings = append(ErrorList(nil), c.Warnings...)
	d.varySlots = nil
	return &d
}

// Vary returns a copy of c in which Variation i takes the value
// Nominal·factors[i], with every part value that depends on a varied
// parameter re-evaluated ("one shared draw for every use"), through block
// parameters too. A `let` is a design equation: an untoleranced let keeps
// its nominal value even when it is computed from a toleranced one, and a
// toleranced let is its own nominal value times its own factor.
// len(factors) must equal len(c.Variations).
func (c *Circuit) Vary(factors []float64) (*Circuit, error) {
	if len(factors) != len(c.Variations) {
		return nil, fmt.Errorf("vary: %d factors for %d toleranced items", len(factors), len(c.Variations))
	}
	d := c.Clone()
	if err := c.VaryInto(d, factors); err != nil {
		return nil, err
	}
	d.varySlots = nil
	return d, nil
}

// VaryInto writes into dst the values Vary(factors) would give, without
// copying the circuit: dst must be c.Clone() (or c.Vary of it) or a
// circuit VaryInto has filled from c before, and then holds exactly what
// Vary returns (the values every Variation touches are rewritten; nothing
// else of dst is changed). It is how a tolerance run keeps one copy of
// the circuit per goroutine. dst is not safe for concurrent use; c is
// only read, so many goroutines may VaryInto their own copies of one c.
// After an error dst's values are unspecified until the next successful
// VaryInto.
func (c *Circuit) VaryInto(dst *Circuit, factors []float64) error {
	if len(factors) != len(c.Variations) {
		return fmt.Errorf("vary: %d factors for %d toleranced items", len(factors), len(c.Variations))
	}
	if dst == c || dst.model != c.model || len(dst.Parts) != len(c.Parts) || len(dst.Params) != len(c.Params) {
		return fmt.Errorf("vary: the target is not a copy of this circuit")
	}
	if c.model != nil {
		var err error
		dst.varySlots, err = c.model.revalue(dst, factors, dst.varySlots)
		return err
	}
	for i, v := range c.Variations {
		if v.IsParam {
			return fmt.Errorf("vary: parameter %q cannot be varied in a hand-built circuit", v.Name)
		}
		p, ok := dst.Part(v.Name)
		if !ok {
			return fmt.Errorf("vary: no part %q", v.Name)
		}
		p.Value = v.Nominal * factors[i]
	}
	return nil
}

// Lookup returns the SI value of a top-level parameter or, failing that,
// of a part by hierarchical name (for an opamp, its A0). It lets hand
// derivations refer to the file's names.
func (c *Circuit) Lookup(name string) (float64, bool) {
	for _, p := range c.Params {
		if p.Name == name {
			return p.Value, true
		}
	}
	if p, ok := c.Part(name); ok {
		if p.Kind == OpAmp {
			return p.A0, p.A0 != 0
		}
		return p.Value, true
	}
	return 0, false
}
