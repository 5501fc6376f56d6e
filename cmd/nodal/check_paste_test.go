package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// probeHeader reads the "# input: X   output: Y" first line of a reference
// circuit; the examples have none and are read at node out.
var probeHeader = regexp.MustCompile(`^# input: *(\S+) +output: *(\S+)`)

// pasteCircuits lists every example and reference circuit with the probe
// flags to read it.
func pasteCircuits(t *testing.T) map[string][]string {
	t.Helper()
	out := map[string][]string{}
	for _, dir := range []string{"../../testdata/examples", "../../testdata/reference/circuits"} {
		files, err := filepath.Glob(filepath.Join(dir, "*.nodal"))
		if err != nil || len(files) == 0 {
			t.Fatalf("no circuits in %s: %v", dir, err)
		}
		for _, f := range files {
			src, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			if m := probeHeader.FindStringSubmatch(string(src)); m != nil {
				out[f] = []string{"--in", m[1], "--out", m[2]}
			} else if strings.Contains(string(src), "\nresponse ") {
				out[f] = []string{} // the file's first named response
			} else {
				out[f] = []string{"--out", "out"}
			}
		}
	}
	return out
}

// formLine returns the text after "label:" in a transfer listing, or the
// line after the one containing label when after is set.
func formLine(t *testing.T, listing, label string, after bool) string {
	t.Helper()
	lines := strings.Split(listing, "\n")
	for i, l := range lines {
		if after && strings.Contains(l, label) && i+1 < len(lines) {
			return strings.TrimSpace(lines[i+1])
		}
		if !after && strings.HasPrefix(l, label) {
			return strings.TrimSpace(strings.TrimPrefix(l, label))
		}
	}
	t.Fatalf("no %q in\n%s", label, listing)
	return ""
}

// TestPrintedFormsPasteBack: every form of H(s) and the ODE that
// `nodal transfer` prints (4 significant digits, ·, −, ′ ″, y⁽⁴⁾, s², [ ])
// and the exact H(s) and ODE of `nodal transfer --symbolic` (including the
// gbw= op-amps, whose 1/ωt constants print as exact fractions) give
// "agrees" from `nodal check` for every example and reference circuit; the
// symbolic ones are "identical". The README promises the paste-back.
func TestPrintedFormsPasteBack(t *testing.T) {
	circuits := pasteCircuits(t)
	if len(circuits) < 10 {
		t.Fatalf("only %d circuits", len(circuits))
	}
	for file, probe := range circuits {
		t.Run(filepath.Base(file), func(t *testing.T) {
			tr := runNodal(t, "", append([]string{"transfer", file}, probe...)...)
			if tr.code != 0 {
				t.Fatalf("transfer: %d %s", tr.code, tr.stderr)
			}
			forms := map[string][]string{
				"expanded":  {"--tf", formLine(t, tr.stdout, "expanded:", false)},
				"factored":  {"--tf", formLine(t, tr.stdout, "factored:", false)},
				"zero-pole": {"--tf", formLine(t, tr.stdout, "zero-pole:", false)},
				"ode":       {"--ode", formLine(t, tr.stdout, "differential equation", true)},
			}
			sym := runNodal(t, "", append([]string{"transfer", file, "--symbolic"}, probe...)...)
			if sym.code != 0 {
				t.Fatalf("transfer --symbolic: %d %s", sym.code, sym.stderr)
			}
			var symTF string
			for _, l := range strings.Split(sym.stdout, "\n") {
				if strings.HasPrefix(l, "H(s) = ") && !strings.Contains(l, "symbolic (") && !strings.Contains(l, "[") {
					symTF = l
				}
			}
			if symTF == "" {
				t.Fatalf("no H(s) line in\n%s", sym.stdout)
			}
			forms["symbolic H(s)"] = []string{"--tf", symTF}
			forms["symbolic ode"] = []string{"--ode", formLine(t, sym.stdout, "differential equation", true)}
			for name, flags := range forms {
				// The value is passed as a separate argument, so one
				// beginning with "-" must work without "=".
				r := runNodal(t, "", append(append([]string{"check", file}, probe...), flags...)...)
				if r.code != 0 || !strings.Contains(r.stdout, "verdict: agrees") {
					t.Errorf("%s %q: exit %d\n%s%s", name, flags[1], r.code, r.stdout, r.stderr)
				}
				if strings.HasPrefix(name, "symbolic") && !strings.Contains(r.stdout, "symbolic comparison: identical") {
					t.Errorf("%s: not identical\n%s", name, r.stdout)
				}
			}
		})
	}
}
