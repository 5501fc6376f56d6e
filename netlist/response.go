package netlist

import (
	"fmt"
	"strings"
)

// ResponseKind says what a named response observes.
type ResponseKind int

const (
	// ResponseVoltage observes v(Node) − v(Ref) (Ref "" means Ground).
	ResponseVoltage ResponseKind = iota
	// ResponseCurrent observes the current through Part, into its first
	// terminal.
	ResponseCurrent
)

// Response is a `response NAME = ...` statement: a named transfer from the
// independent source From ("" means the circuit's only source) to a node
// voltage, a node pair or a part current. The names are as written; they
// are checked against the circuit by mna (mna.ResponseProbe, mna.Resolve),
// which reports a wrong one at ProbePos or FromPos.
type Response struct {
	Name string
	Kind ResponseKind
	Node string // ResponseVoltage: the node
	Ref  string // ResponseVoltage: the reference node; "" means Ground
	Part string // ResponseCurrent: the part
	From string // the driving source; "" means the only source

	Pos      Pos    // the statement
	ProbePos Pos    // the v( ) or i( ) call
	FromPos  Pos    // the source name after from (zero when absent)
	Line     string // the source line, for diagnostics made outside netlist
}

// Probe is the response as written: "v(out)", "v(a, b)" or "i(R1)".
func (r Response) Probe() string {
	switch {
	case r.Kind == ResponseCurrent:
		return "i(" + r.Part + ")"
	case r.Ref != "":
		return "v(" + r.Node + ", " + r.Ref + ")"
	}
	return "v(" + r.Node + ")"
}

// Diag is a diagnostic at p on the response's line.
func (r Response) Diag(p Pos, msg, hint string) *Diagnostic {
	return &Diagnostic{Pos: p, Severity: SevError, Msg: msg, Hint: hint, Line: r.Line}
}

// Response returns the named response of c.
func (c *Circuit) Response(name string) (Response, bool) {
	for _, r := range c.Responses {
		if r.Name == name {
			return r, true
		}
	}
	return Response{}, false
}

// ResponseNames lists the names of c's responses in declaration order.
func (c *Circuit) ResponseNames() []string {
	out := make([]string, len(c.Responses))
	for i, r := range c.Responses {
		out[i] = r.Name
	}
	return out
}

// response records a response statement (pass one, before any element, so
// a require may name a response declared below it).
func (e *elab) response(r *ResponseStmt) {
	name := r.Name.Name
	if strings.Contains(name, ".") {
		e.errorf(r.Name.Pos, "a response name is one word, as in tweeter", "response name %q has a dot", name)
		return
	}
	if _, dup := e.c.Response(name); dup {
		e.errorf(r.Name.Pos, "", "second response named %q", name)
		return
	}
	p := r.Probe
	resp := Response{Name: name, Pos: e.f.Position(r.Pos), ProbePos: e.f.Position(p.Pos), Line: e.f.lineText(r.Pos.Offset)}
	switch p.Fn {
	case "v":
		if len(p.Args) < 1 || len(p.Args) > 2 {
			e.errorf(p.Pos, "write v(NODE) or v(NODE, REF)", "v( ) takes one or two nodes, not %d", len(p.Args))
			return
		}
		resp.Kind, resp.Node = ResponseVoltage, p.Args[0].Name
		if len(p.Args) == 2 {
			resp.Ref = p.Args[1].Name
		}
	case "i":
		if len(p.Args) != 1 {
			e.errorf(p.Pos, "write i(PART)", "i( ) takes one part, not %d", len(p.Args))
			return
		}
		resp.Kind, resp.Part = ResponseCurrent, p.Args[0].Name
	default:
		e.errorf(p.Pos, "write v(NODE), v(NODE, REF) or i(PART)"+suggestSuffix(p.Fn, []string{"v", "i"}), "a response is a voltage v( ) or a current i( ), not %s( )", p.Fn)
		return
	}
	if r.From != nil {
		resp.From, resp.FromPos = r.From.Name, e.f.Position(r.From.Pos)
	}
	e.c.Responses = append(e.c.Responses, resp)
}

// splitResponse splits a requirement's metric word "tweeter.f3db" into the
// response name and the metric ("", "f3db" for an unqualified metric).
func splitResponse(word string) (resp, metric string) {
	if i := strings.LastIndexByte(word, '.'); i >= 0 {
		return word[:i], word[i+1:]
	}
	return "", word
}

// requireResponse checks the response a requirement names; it reports and
// returns false for one the file does not declare.
func (e *elab) requireResponse(r *RequireStmt, resp string) bool {
	if resp == "" {
		return true
	}
	if _, ok := e.c.Response(resp); ok {
		return true
	}
	names := e.c.ResponseNames()
	hint := suggest(resp, names)
	switch {
	case hint != "":
	case len(names) == 0:
		hint = fmt.Sprintf("declare it first, as in response %s = v(NODE)", resp)
	default:
		hint = "responses: " + strings.Join(names, ", ")
	}
	e.errorf(r.Metric.Pos, hint, "no response %q", resp)
	return false
}
