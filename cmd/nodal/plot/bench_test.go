package plot

import (
	"io"
	"testing"
)

// BenchmarkBodeSVG measures building and drawing a two-trace Bode plot of
// 401 points per trace as SVG.
func BenchmarkBodeSVG(b *testing.B) {
	traces := testTraces()
	b.ReportAllocs()
	for b.Loop() {
		fig, err := Bode(traces, BodeOptions{})
		if err != nil {
			b.Fatal(err)
		}
		if err := fig.Encode(io.Discard, FormatSVG); err != nil {
			b.Fatal(err)
		}
	}
}
