package main

import (
	"context"
	"fmt"
	"io"
	"testing"
)

// BenchmarkSweepCommandLadder is the whole `nodal sweep` of the issue's
// speed targets in one process: parse, build, ordering, 1,003 log-spaced
// points from 1 Hz to 1 MHz and the table (or JSON) written to a discarded
// writer, on the cable ladders (1 kΩ, 10 nF a section; tuneLadder) of
// 1,000 and 10,000 sections. One op is one command.
func BenchmarkSweepCommandLadder(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		path := tuneLadder(b, n)
		for _, format := range []string{"table", "json"} {
			b.Run(fmt.Sprintf("sections=%d/%s", n, format), func(b *testing.B) {
				args := []string{"sweep", path, "--out", fmt.Sprint("n", n), "--from", "1", "--to", "1M", "--per-decade", "167", "--format", format}
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					e := &env{ctx: context.Background(), stdout: io.Discard, stderr: io.Discard}
					if code := run(e, args); code != 0 {
						b.Fatalf("exit %d", code)
					}
				}
			})
		}
	}
}
