package main

import (
	"context"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// tuneLadder writes an RC ladder of n sections driven by a source: n + 1
// nodes and the source's current, n + 2 unknowns, with a requirement.
func tuneLadder(tb testing.TB, n int) string {
	tb.Helper()
	var b strings.Builder
	b.WriteString("# Sensor bridge output: long RC smoothing ladder\nlet R = 1k\nlet C = 10nF\nVs: voltage source (n0, gnd) 1\n")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) R\nC%d: capacitor (n%d, gnd) C\n", i, i-1, i, i, i)
	}
	b.WriteString("require f3db above 100Hz\n")
	path := filepath.Join(tb.TempDir(), "ladder.nodal")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		tb.Fatal(err)
	}
	return path
}

// BenchmarkTuneAnalyse40 is one slider step of the page on a 40-unknown
// circuit (38 RC sections): the transfer function, the Bode sweep, the
// step response and the requirement, as /api/analyse computes them. The
// page's target is well under 100 ms per step.
func BenchmarkTuneAnalyse40(b *testing.B) {
	path := tuneLadder(b, 38)
	src, err := os.ReadFile(path)
	if err != nil {
		b.Fatal(err)
	}
	c := &tuneCmd{File: path, requireProbe: requireProbe{Out: "n38"}}
	e := &env{ctx: context.Background(), stderr: os.Stderr}
	be, err := c.backend(e, path, src)
	if err != nil {
		b.Fatal(err)
	}
	if n := len(be.nominal.Nodes) - 1 + 1; n != 40 {
		b.Fatalf("%d unknowns, want 40", n)
	}
	queries := []url.Values{{"R": {"1.2k"}}, {"R": {"820"}}, {"C7": {"22n"}}}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := be.Analyse(context.Background(), queries[i%len(queries)]); err != nil {
			b.Fatal(err)
		}
	}
}
