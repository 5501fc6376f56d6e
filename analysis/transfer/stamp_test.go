package transfer

import (
	"gonum.org/v1/gonum/mat"

	"nodal/mna"
)

// stamper is a test-only MNA builder: node voltages first (ground "0" is
// the reference), then one branch current per inductor, voltage source and
// amplifier output. Conventions (textbook MNA): KCL rows sum the currents
// leaving a node; a branch current flows from the part's first node
// through the part to its second node.
type stamper struct {
	nodes map[string]int
	names []string
	parts []func(g, c *mat.Dense, b []float64)
	kinds []bool // true: branch current unknown
	in    int
	out   [2]string
}

func newStamper() *stamper { return &stamper{nodes: map[string]int{}, in: -1} }

// node returns the index of a node, -1 for ground.
func (s *stamper) node(name string) int {
	if name == "0" {
		return -1
	}
	if i, ok := s.nodes[name]; ok {
		return i
	}
	s.nodes[name] = len(s.names)
	s.names = append(s.names, "v("+name+")")
	s.kinds = append(s.kinds, false)
	return s.nodes[name]
}

// branch adds a branch-current unknown.
func (s *stamper) branch(name string) int {
	s.names = append(s.names, "i("+name+")")
	s.kinds = append(s.kinds, true)
	return len(s.names) - 1
}

func add(m *mat.Dense, i, j int, v float64) {
	if i >= 0 && j >= 0 {
		m.Set(i, j, m.At(i, j)+v)
	}
}

// twoTerm stamps an admittance y between a and b into m.
func twoTerm(m *mat.Dense, a, b int, y float64) {
	add(m, a, a, y)
	add(m, b, b, y)
	add(m, a, b, -y)
	add(m, b, a, -y)
}

func (s *stamper) R(a, b string, r float64) *stamper {
	i, j := s.node(a), s.node(b)
	s.parts = append(s.parts, func(g, c *mat.Dense, _ []float64) { twoTerm(g, i, j, 1/r) })
	return s
}

func (s *stamper) C(a, b string, v float64) *stamper {
	i, j := s.node(a), s.node(b)
	s.parts = append(s.parts, func(g, c *mat.Dense, _ []float64) { twoTerm(c, i, j, v) })
	return s
}

// L stamps an inductor with branch current k: v_a − v_b − sL·i = 0.
func (s *stamper) L(a, b string, v float64) *stamper {
	i, j := s.node(a), s.node(b)
	k := s.branch("L")
	s.parts = append(s.parts, func(g, c *mat.Dense, _ []float64) {
		add(g, i, k, 1)
		add(g, j, k, -1)
		add(g, k, i, 1)
		add(g, k, j, -1)
		add(c, k, k, -v)
	})
	return s
}

// V stamps the input voltage source (unit amplitude) from a (+) to b.
func (s *stamper) V(a, b string) *stamper {
	i, j := s.node(a), s.node(b)
	k := s.branch("V")
	s.in = k
	s.parts = append(s.parts, func(g, c *mat.Dense, bv []float64) {
		add(g, i, k, 1)
		add(g, j, k, -1)
		add(g, k, i, 1)
		add(g, k, j, -1)
		bv[k] = 1
	})
	return s
}

// Amp stamps a voltage-controlled voltage source from ground to out:
// v_out = k·(v_p − v_n), its output current a new unknown. k = Inf is the
// ideal op-amp (nullor): v_p = v_n, the output current free.
func (s *stamper) Amp(p, n, out string, k float64) *stamper {
	ip, in, io := s.node(p), s.node(n), s.node(out)
	br := s.branch("A")
	s.parts = append(s.parts, func(g, c *mat.Dense, _ []float64) {
		add(g, io, br, 1)
		if k > 1e300 {
			add(g, br, ip, 1)
			add(g, br, in, -1)
			return
		}
		add(g, br, io, 1)
		add(g, br, ip, -k)
		add(g, br, in, k)
	})
	return s
}

// Out sets the output v(a) − v(b).
func (s *stamper) Out(a, b string) *stamper {
	s.node(a)
	s.node(b)
	s.out = [2]string{a, b}
	return s
}

// System assembles the MNA system.
func (s *stamper) System() *mna.System {
	n := len(s.names)
	g, c := mat.NewDense(n, n, nil), mat.NewDense(n, n, nil)
	b, l := make([]float64, n), make([]float64, n)
	for _, p := range s.parts {
		p(g, c, b)
	}
	if i := s.node(s.out[0]); i >= 0 {
		l[i] = 1
	}
	if i := s.node(s.out[1]); i >= 0 {
		l[i] -= 1
	}
	return &mna.System{Unknowns: append([]string(nil), s.names...), G: mna.SparseOf(g), C: mna.SparseOf(c), B: b, L: l}
}
