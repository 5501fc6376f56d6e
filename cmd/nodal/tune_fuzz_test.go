package main

import (
	"context"
	"errors"
	"io"
	"net/url"
	"os"
	"strings"
	"testing"

	"nodal/cmd/nodal/tune"
)

// FuzzTuneQuery feeds query strings to the tune backend's analysis and
// rewrite: whatever the page or an address bar sends, the answer is a
// document or an error (a request error for a value or name that is not
// understood), never a panic, and a rewrite is either refused or changes
// only value texts (the line count stays).
func FuzzTuneQuery(f *testing.F) {
	for _, s := range []string{"", "R=6.8k", "R=4k7&C=2.2n", "R1=1e-300", "C=1e300", "R=-1", "R=0", "R=NaN", "%40out=in", "R=1k&R=2k", "R1=10kΩ", "R=%zz"} {
		f.Add(s)
	}
	src, err := os.ReadFile(tuneFile)
	if err != nil {
		f.Fatal(err)
	}
	c := &tuneCmd{File: tuneFile}
	be, err := c.backend(&env{ctx: context.Background(), stderr: io.Discard}, tuneFile, src)
	if err != nil {
		f.Fatal(err)
	}
	lines := strings.Count(string(src), "\n")
	f.Fuzz(func(t *testing.T, q string) {
		vals, err := url.ParseQuery(q)
		if err != nil {
			return
		}
		var re *tune.RequestError
		if _, err := be.Analyse(context.Background(), vals); err != nil && !errors.As(err, &re) {
			t.Logf("%q: %v", q, err) // a numerical refusal (extreme values) is an answer too
		}
		out, err := be.Rewrite(vals)
		if err == nil && strings.Count(string(out), "\n") != lines {
			t.Errorf("%q: rewrite changed the line count:\n%s", q, out)
		}
	})
}
