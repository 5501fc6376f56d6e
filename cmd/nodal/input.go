package main

import (
	_ "embed"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"nodal/mna"
	"nodal/netlist"
	"nodal/netlist/syntax"
)

// demoName is the name the built-in demo circuit is reported under.
const demoName = "demo:vibration-logger.nodal"

// demoCircuit is the built-in demo: our own vibration-logger input stage.
//
//go:embed demo/vibration-logger.nodal
var demoCircuit []byte

// maxInputBytes is the largest circuit file nodal reads (64 MiB, netlist.MaxSourceBytes).
const maxInputBytes = netlist.MaxSourceBytes

// circuitArgs are the arguments shared by every command that reads a circuit.
type circuitArgs struct {
	File string   `arg:"" help:"Circuit file (.nodal), or - for standard input." type:"string"`
	Set  []string `help:"Override a top-level parameter or a part value, NAME=VALUE (repeatable), e.g. --set fc=2.2kHz or --set Rf=6.8k." placeholder:"NAME=VALUE"`
}

// probeArgs choose the input source and the observed output.
type probeArgs struct {
	In  string `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out string `help:"Output: a response named in the file, a node (NODE or v(NODE)), or i(PART) for the current through a part (default: the file's first response, then the node named out)." placeholder:"NAME"`
	Ref string `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
}

// loaded is a circuit read and elaborated, with its source text.
type loaded struct {
	name    string
	src     []byte
	circuit *netlist.Circuit
}

// readSource reads path, "-" for standard input, refusing oversize input.
func readSource(e *env, path string) ([]byte, string, error) {
	var r io.Reader
	name := path
	if path == "-" {
		r = e.stdin
		name = "<stdin>"
	} else {
		f, err := os.Open(path)
		if err != nil {
			return nil, name, fmt.Errorf("cannot read circuit: %w", err)
		}
		defer f.Close()
		r = f
	}
	src, err := io.ReadAll(io.LimitReader(r, maxInputBytes+1))
	if err != nil {
		return nil, name, fmt.Errorf("%s: cannot read: %w", name, err)
	}
	if len(src) > maxInputBytes {
		return nil, name, fmt.Errorf("%s: file is larger than 64 MiB; nodal reads circuit files only", name)
	}
	return src, name, nil
}

// load reads and elaborates the circuit named by a, printing any warnings
// to stderr.
func (a *circuitArgs) load(e *env) (*loaded, error) {
	src, name, err := readSource(e, a.File)
	if err != nil {
		return nil, err
	}
	return elaborate(e, name, src, a.Set)
}

// elaborate parses src under name with the --set overrides.
func elaborate(e *env, name string, src []byte, sets []string) (*loaded, error) {
	return elaborateWith(e, name, src, sets, nil)
}

// elaborateWith is elaborate with extra overrides (a --vary value) on top
// of the --set ones.
func elaborateWith(e *env, name string, src []byte, sets []string, extra netlist.Overrides) (*loaded, error) {
	ov, err := parseOverrides(sets)
	if err != nil {
		return nil, err
	}
	if len(extra) > 0 && ov == nil {
		ov = netlist.Overrides{}
	}
	for k, v := range extra {
		ov[k] = v
	}
	c, err := netlist.Load(name, src, ov)
	if err != nil {
		return nil, err
	}
	if err := mna.CheckResponses(c); err != nil {
		return nil, err
	}
	for _, w := range c.Warnings {
		fmt.Fprintln(e.stderr, w.Error())
	}
	return &loaded{name: name, src: src, circuit: c}, nil
}

// parseOverrides turns NAME=VALUE strings into netlist overrides.
func parseOverrides(sets []string) (netlist.Overrides, error) {
	if len(sets) == 0 {
		return nil, nil
	}
	ov := netlist.Overrides{}
	for _, s := range sets {
		name, val, ok := strings.Cut(s, "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, fmt.Errorf("--set %q: want NAME=VALUE", s)
		}
		v, err := syntax.ParseValueAt("--set", s, len(s)-len(val), len(s), "")
		if err != nil {
			return nil, err
		}
		ov[name] = v
	}
	return ov, nil
}

// outputFor parses one --out value that is not a response name: NODE,
// v(NODE) or v(NODE, REF) (the form nodal prints; its REF replaces --ref),
// or i(PART).
func outputFor(out, ref string) mna.Output {
	s := strings.TrimSpace(out)
	if strings.HasPrefix(s, "i(") && strings.HasSuffix(s, ")") {
		return mna.Output{Kind: mna.PartCurrent, Part: strings.TrimSpace(s[2 : len(s)-1])}
	}
	if strings.HasPrefix(s, "v(") && strings.HasSuffix(s, ")") {
		node, r, two := strings.Cut(s[2:len(s)-1], ",")
		if two {
			ref = strings.TrimSpace(r)
		}
		return mna.Output{Kind: mna.NodeVoltage, Node: strings.TrimSpace(node), Ref: ref}
	}
	return mna.Output{Kind: mna.NodeVoltage, Node: s, Ref: ref}
}

// probeFor is the probe of --in, --out and --ref: --out names a response
// of the file (its source, unless --in names another), a node (against
// ref) or i(PART); with no --out, the first response of the file, then the
// node named out. name is the response name, or "" for a node or part.
func probeFor(c *netlist.Circuit, in, out, ref string) (p mna.Probe, name string, err error) {
	out = strings.TrimSpace(out)
	if out == "" {
		switch {
		case len(c.Responses) > 0:
			out = c.Responses[0].Name
		case c.HasNode("out"):
			out = "out"
		default:
			return mna.Probe{}, "", fmt.Errorf("say which output to analyse with --out NODE, --out i(PART) or a response statement in the file (the circuit has no node named out; nodes: %s)", shortList(c.Nodes[1:], maxNamesInMessage))
		}
	}
	r, ok := c.Response(out)
	if parts, err := sumParts(c, out); !ok && err == nil && parts != nil {
		return mna.Probe{}, "", fmt.Errorf("--out %s: a sum of responses is shown by sweep and compare; here give one response, node or i(PART)", out)
	}
	if !ok {
		if h := netlist.Closest(out, c.ResponseNames()); h != "" && !c.HasNode(out) {
			return mna.Probe{}, "", fmt.Errorf("--out: no response or node %q; did you mean %q?", out, h)
		}
		return mna.Probe{Ex: mna.Excitation{Source: in}, Ob: outputFor(out, ref)}, "", nil
	}
	if ref != "" {
		return mna.Probe{}, "", fmt.Errorf("--ref goes with a node: response %s is %s", r.Name, r.Probe())
	}
	if in != "" && r.From != "" && in != r.From {
		return mna.Probe{}, "", fmt.Errorf("--in %s: response %s is driven from %s", in, r.Name, r.From)
	}
	if r.From == "" && in != "" {
		// The source comes from --in, not from the file: a wrong name is
		// reported against the flag, with the same hint as any other probe.
		_, _, err := mna.Resolve(c, mna.Excitation{Source: in}, mna.Observation{Kind: mna.NodeVoltage, Node: netlist.Ground})
		var le *mna.LookupError
		if errors.As(err, &le) && le.What == "source" {
			return mna.Probe{}, "", fmt.Errorf("--in: %w", err)
		}
		r.From = in
	}
	p, err = mna.ResponseProbe(c, r)
	return p, r.Name, err
}

// sumParts splits --out A+B into the names of the responses it sums (nil
// for a single output). Every part must be a response of c; they must be
// driven by the same source.
func sumParts(c *netlist.Circuit, out string) ([]string, error) {
	if !strings.Contains(out, "+") {
		return nil, nil
	}
	parts := strings.Split(out, "+")
	for i, name := range parts {
		name = strings.TrimSpace(name)
		parts[i] = name
		if _, ok := c.Response(name); !ok {
			hint := ""
			if h := netlist.Closest(name, c.ResponseNames()); h != "" {
				hint = fmt.Sprintf("; did you mean %q?", h)
			} else if len(c.Responses) > 0 {
				hint = " (responses: " + strings.Join(c.ResponseNames(), ", ") + ")"
			}
			return nil, fmt.Errorf("--out %s: a sum adds named responses, and %q is not one%s", out, name, hint)
		}
	}
	return parts, nil
}

// probe resolves the probe flags against the loaded circuit (probeFor).
func (p *probeArgs) probe(l *loaded) (mna.Probe, error) {
	q, _, err := probeFor(l.circuit, p.In, p.Out, p.Ref)
	return q, err
}

// system builds the MNA system for the probe.
func (p *probeArgs) system(l *loaded) (*mna.System, error) {
	q, err := p.probe(l)
	if err != nil {
		return nil, err
	}
	return mna.Build(l.circuit, q.Ex, q.Ob)
}

// errUsage marks a usage error discovered after flag parsing.
var errUsage = errors.New("usage")

// maxNamesInMessage is how many names an error message lists before it
// says how many more there are.
const maxNamesInMessage = 20

// shortList joins the first max names with commas and says how many it
// left out, so a message about a circuit of 10⁵ nodes stays one short line.
func shortList(names []string, max int) string {
	if len(names) <= max {
		return strings.Join(names, ", ")
	}
	return fmt.Sprintf("%s … and %d more", strings.Join(names[:max], ", "), len(names)-max)
}
