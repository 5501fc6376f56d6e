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

// maxInputBytes is the largest circuit file nodal reads (16 MiB).
const maxInputBytes = 16 << 20

// circuitArgs are the arguments shared by every command that reads a circuit.
type circuitArgs struct {
	File string   `arg:"" help:"Circuit file (.nodal), or - for standard input." type:"string"`
	Set  []string `help:"Override a top-level parameter, NAME=VALUE (repeatable), e.g. --set fc=2.2kHz." placeholder:"NAME=VALUE"`
}

// probeArgs choose the input source and the observed output.
type probeArgs struct {
	In  string `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out string `required:"" help:"Output node (NODE or v(NODE)), or i(PART) for the current through a part." placeholder:"NODE"`
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
		return nil, name, fmt.Errorf("%s: file is larger than 16 MiB; nodal reads circuit files only", name)
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
	ov, err := parseOverrides(sets)
	if err != nil {
		return nil, err
	}
	c, err := netlist.Load(name, src, ov)
	if err != nil {
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

// output turns the probe flags into an mna.Output: "i(PART)" observes a
// part's current, anything else a node voltage against --ref.
func (p *probeArgs) output() mna.Output {
	return outputFor(p.Out, p.Ref)
}

// outputFor parses one --out value: NODE, v(NODE) or v(NODE, REF) (the
// form nodal prints; its REF replaces --ref), or i(PART).
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

// system builds the MNA system for the probe.
func (p *probeArgs) system(l *loaded) (*mna.System, error) {
	return mna.Build(l.circuit, mna.Input{Source: p.In}, p.output())
}

// errUsage marks a usage error discovered after flag parsing.
var errUsage = errors.New("usage")
