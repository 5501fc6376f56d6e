package netlist

import (
	"strings"
	"testing"
	"time"
)

// FuzzParse checks that parsing and elaborating any input never panics,
// takes bounded time, and fails only with positioned diagnostics.
func FuzzParse(f *testing.F) {
	f.Add([]byte(allForms))
	f.Add([]byte(blockSrc))
	f.Add([]byte(base + "R2: resistor (a b) 10k\n"))
	f.Fuzz(func(t *testing.T, src []byte) {
		start := time.Now()
		c, err := Load("fuzz", src, nil)
		if el := time.Since(start); el > 5*time.Second && len(src) < 1<<16 {
			t.Fatalf("Load took %v for %d bytes", el, len(src))
		}
		if err != nil {
			l, ok := err.(ErrorList)
			if !ok || len(l) == 0 {
				t.Fatalf("error %T %v is not a non-empty ErrorList", err, err)
			}
			for _, d := range l {
				if !strings.HasPrefix(d.Error(), "fuzz") {
					t.Fatalf("diagnostic without file: %q", d.Error())
				}
			}
			return
		}
		if len(c.Nodes) == 0 || c.Nodes[0] != Ground {
			t.Fatalf("Nodes[0] = %v", c.Nodes)
		}
		if _, err := c.Vary(ones(len(c.Variations))); err != nil {
			t.Fatalf("Vary at nominal: %v", err)
		}
	})
}

// FuzzExpr checks that evaluating any expression never panics.
func FuzzExpr(f *testing.F) {
	for _, s := range []string{"2*pi*1kHz", "-2^2^-1", "max(1, sqrt(4k7))", "(1, 2)", "1/0", "R47*2R2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		_, _, err := EvalExpr(s)
		if err != nil && err.Error() == "" {
			t.Fatal("empty error")
		}
	})
}
