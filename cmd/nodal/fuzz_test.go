package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// FuzzCircuitCommands feeds arbitrary circuit text on standard input to
// `nodal parts -` and `nodal transfer - --out out`. Whatever the text, the exit
// status is 0, 1 or 2; exit 2 comes with a message on stderr; no panic
// reaches run's recovery ("internal error"), no stack trace is printed
// and no run takes more than 10 s.
// Seeds: the example and reference circuits of the repository.
func FuzzCircuitCommands(f *testing.F) {
	for _, pattern := range []string{"../../testdata/examples/*.nodal", "../../testdata/reference/circuits/*.nodal"} {
		files, err := filepath.Glob(pattern)
		if err != nil || len(files) == 0 {
			f.Fatalf("no seed circuits for %s: %v", pattern, err)
		}
		for _, name := range files {
			src, err := os.ReadFile(name)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(string(src))
		}
	}
	f.Fuzz(func(t *testing.T, src string) {
		for _, args := range [][]string{{"parts", "-"}, {"transfer", "-", "--out", "out"}} {
			done := make(chan result, 1)
			go func() { done <- runNodal(t, src, args...) }()
			var r result
			select {
			case r = <-done:
			case <-time.After(10 * time.Second):
				t.Fatalf("%v still running after 10 s on %q", args, src)
			}
			switch {
			case r.code != exitOK && r.code != exitVerdict && r.code != exitInput:
				t.Fatalf("%v: exit %d on %q", args, r.code, src)
			case strings.Contains(r.stderr, "internal error") || strings.Contains(r.stderr, "goroutine "):
				t.Fatalf("%v: %s\ninput %q", args, r.stderr, src)
			case r.code == exitInput && strings.TrimSpace(r.stderr) == "":
				t.Fatalf("%v: exit 2 without a message on %q", args, src)
			}
		}
	})
}
