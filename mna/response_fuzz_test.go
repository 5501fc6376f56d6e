package mna

import (
	"errors"
	"testing"

	"nodal/netlist"
)

// FuzzResponses checks that resolving the named responses of any circuit
// that loads never panics, that every failure is a positioned diagnostic
// of the file, and that a response that resolves gives a probe Build
// accepts the names of.
func FuzzResponses(f *testing.F) {
	base := "V: voltage source (in, gnd) 1\nW: current source (gnd, in) 1m\nR: resistor (in, o) 1k\nC: capacitor (o, gnd) 1u\n"
	f.Add([]byte(base + "response a = v(o)\nresponse b = v(in, o) from V\nresponse c = i(R) from W\n"))
	f.Add([]byte(base + "response a = v(oo)\nresponse b = i(X)\nresponse c = v(o) from Z\nresponse d = v(gnd)\n"))
	f.Add([]byte(base + "response a = v(gnd, o)\nresponse b = i(V)\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		if len(src) > 1<<14 {
			t.Skip()
		}
		c, err := netlist.Load("fuzz.nodal", src, nil)
		if err != nil {
			return
		}
		for _, r := range c.Responses {
			p, err := ResponseProbe(c, r)
			if err != nil {
				var d *netlist.Diagnostic
				if !errors.As(err, &d) || d.Pos.File != "fuzz.nodal" || d.Pos.Line < 1 {
					t.Fatalf("response %s: not a positioned diagnostic: %v", r.Name, err)
				}
				continue
			}
			if _, _, err := Resolve(c, p.Ex, p.Ob); err != nil {
				t.Fatalf("response %s resolved to a probe Resolve refuses: %v", r.Name, err)
			}
		}
		_ = CheckResponses(c)
	})
}
