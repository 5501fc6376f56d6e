package main

import (
	"strings"
	"testing"
)

// TestBudgetsRefuseWithMessage checks that work beyond nodal's caps is
// refused up front with a message naming the cap, never attempted.
func TestBudgetsRefuseWithMessage(t *testing.T) {
	bridge := "testdata/bridge_pass.nodal"
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"tolerance runs", []string{"tolerance", bridge, "--out", "out", "--metric", "f3db", "--runs=10000000000000000"}, "maximum of 10000000"},
		{"verify runs", []string{"verify", bridge, "--runs=10000000000000000"}, "maximum of 10000000"},
		{"points after the range", []string{"sweep", rcFile, "--out", "out", "--per-decade", "10000", "--from", "1e-150", "--to", "1e150"}, "3000001 points, more than the maximum of 1000000"},
		{"envelope work", []string{"tolerance", bridge, "--out", "out", "--metric", "f3db", "--envelope", "--runs", "5000000", "--from", "1", "--to", "1MHz", "--per-decade", "100"}, "part-points, more than the maximum"},
		{"--at out of range", []string{"sweep", rcFile, "--out", "out", "--at", "1e308"}, "out of range"},
		{"--to out of range", []string{"sweep", rcFile, "--out", "out", "--to", "1e308"}, "out of range"},
		{"metric out of range", []string{"tolerance", bridge, "--out", "out", "--metric", "gain@1e308Hz"}, "out of range"},
	}
	for _, tc := range cases {
		r := runNodal(t, "", tc.args...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) || strings.Contains(r.stderr, "internal error") {
			t.Errorf("%s: code %d, stderr %q; want exit 2 saying %q", tc.name, r.code, r.stderr, tc.want)
		}
	}
}

// TestWideRangeIsSpacedNotCollapsed: 1e-300 Hz to 1e300 Hz (a ratio that
// overflows a float64) gives 600 decades of points, not 2.
func TestWideRangeIsSpacedNotCollapsed(t *testing.T) {
	r := runNodal(t, "", "sweep", rcFile, "--out", "out", "--from", "1e-300", "--to", "1e300", "--per-decade", "1", "--format", "csv")
	if r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	lines := strings.Split(strings.TrimSpace(r.stdout), "\n")
	if len(lines) != 1+601 || !strings.HasPrefix(lines[301], "1,") {
		t.Errorf("%d lines, middle %q; want a header and 601 points with 1 Hz in the middle", len(lines), lines[min(301, len(lines)-1)])
	}
}
