package report

import (
	"io"
	"testing"
)

// BenchmarkRender measures a full demo report: five plots drawn to SVG
// and the page assembled.
func BenchmarkRender(b *testing.B) {
	d := demoData(b)
	b.ReportAllocs()
	for b.Loop() {
		if err := Render(io.Discard, d); err != nil {
			b.Fatal(err)
		}
	}
}
