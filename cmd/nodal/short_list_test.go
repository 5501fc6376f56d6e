package main

import (
	"fmt"
	"strings"
	"testing"
)

// TestShortList: a message lists at most maxNamesInMessage names and says
// how many it left out (common practice: a message stays one short line).
func TestShortList(t *testing.T) {
	many := make([]string, 50000)
	for i := range many {
		many[i] = fmt.Sprintf("n%d", i)
	}
	for _, tc := range []struct {
		names []string
		want  string
	}{
		{nil, ""},
		{[]string{"a", "b"}, "a, b"},
		{many[:20], strings.Join(many[:20], ", ")},
		{many[:21], strings.Join(many[:20], ", ") + " … and 1 more"},
		{many, strings.Join(many[:20], ", ") + " … and 49980 more"},
	} {
		if got := shortList(tc.names, maxNamesInMessage); got != tc.want {
			t.Errorf("shortList(%d names) = %q, want %q", len(tc.names), got, tc.want)
		}
	}
}
