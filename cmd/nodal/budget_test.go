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
	}
	for _, tc := range cases {
		r := runNodal(t, "", tc.args...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) || strings.Contains(r.stderr, "internal error") {
			t.Errorf("%s: code %d, stderr %q; want exit 2 saying %q", tc.name, r.code, r.stderr, tc.want)
		}
	}
}
