package mna

import (
	"errors"

	"nodal/netlist"
)

// ResponseProbe is the probe of a named response: a Drive of its source
// and a NodeVoltage or PartCurrent observation, resolved by Resolve. A name
// the circuit lacks is a *netlist.Diagnostic at the name in the response
// statement with Resolve's message and nearest-name hint, so a wrong
// response reads as a wrong --out does.
func ResponseProbe(c *netlist.Circuit, r netlist.Response) (Probe, error) {
	ex := Excitation{Kind: Drive, Source: r.From}
	ob := Observation{Kind: NodeVoltage, Node: r.Node, Ref: r.Ref}
	if r.Kind == netlist.ResponseCurrent {
		ob = Observation{Kind: PartCurrent, Part: r.Part}
	}
	rex, err := newNames(c).excitation(ex)
	if err != nil {
		at := r.FromPos
		if r.From == "" {
			at = r.Pos
		}
		return Probe{}, responseDiag(r, at, err)
	}
	rob, err := newNames(c).observation(rex, ob)
	if err != nil {
		return Probe{}, responseDiag(r, r.ProbePos, err)
	}
	return Probe{rex, rob}, nil
}

// responseDiag turns a resolution error into a diagnostic of response r
// at the name it is about.
func responseDiag(r netlist.Response, at netlist.Pos, err error) error {
	return r.Diag(at, "response "+r.Name+": "+err.Error(), "")
}

// CheckResponses resolves every named response of c (ResponseProbe) and
// returns their diagnostics as a netlist.ErrorList, or nil.
func CheckResponses(c *netlist.Circuit) error {
	var list netlist.ErrorList
	for _, r := range c.Responses {
		if _, err := ResponseProbe(c, r); err != nil {
			var d *netlist.Diagnostic
			if errors.As(err, &d) {
				list = append(list, d)
			}
		}
	}
	return list.Err()
}
