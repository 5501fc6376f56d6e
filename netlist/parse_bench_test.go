package netlist

import (
	"fmt"
	"strings"
	"testing"
)

// ladderSource is the text of a uniform RC ladder of k sections (2k+1
// parts).
func ladderSource(k int) []byte {
	var b strings.Builder
	b.WriteString("Vin: voltage source (n0, gnd) 1\n")
	for j := 1; j <= k; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 1k\nC%d: capacitor (n%d, gnd) 10n\n", j, j-1, j, j, j)
	}
	return []byte(b.String())
}

// BenchmarkParse100k parses (participle grammar, line by line) a file of
// 100,001 parts; the target is under 1 s.
func BenchmarkParse100k(b *testing.B) {
	src := ladderSource(50000)
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Parse("ladder.nodal", src); err != nil {
			b.Fatal(err)
		}
	}
}
