package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/alecthomas/kong"
)

// commandNames lists every command of the command tree, read from kong's
// model so that a new command is covered without editing a list.
func commandNames(t *testing.T) []string {
	t.Helper()
	var c cli
	parser, err := kong.New(&c, kong.Name("nodal"), helpVars())
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, n := range parser.Model.Children {
		names = append(names, n.Name)
	}
	return names
}

// helpExamples returns the example command lines of a help text: the
// lines indented four spaces that begin with "nodal ", with the lines a
// trailing " \" continues joined on.
func helpExamples(help string) []string {
	var out []string
	lines := strings.Split(help, "\n")
	for i := 0; i < len(lines); i++ {
		line := lines[i]
		rest, ok := strings.CutPrefix(line, "    nodal")
		if !ok || (rest != "" && rest[0] != ' ') {
			continue
		}
		cmd := strings.TrimSpace(line)
		for strings.HasSuffix(cmd, "\\") && i+1 < len(lines) {
			i++
			cmd = strings.TrimSpace(strings.TrimSuffix(cmd, "\\")) + " " + strings.TrimSpace(lines[i])
		}
		out = append(out, cmd)
	}
	return out
}

// shellWords splits a command line as a POSIX shell would for the quoting
// the help texts use ('...' and "..." without escapes) and drops a
// trailing # comment.
func shellWords(line string) []string {
	var words []string
	var cur strings.Builder
	inWord := false
	var quote rune
	for _, r := range line {
		switch {
		case quote != 0:
			if r == quote {
				quote = 0
			} else {
				cur.WriteRune(r)
			}
		case r == '\'' || r == '"':
			quote, inWord = r, true
		case r == '#' && !inWord:
			return words
		case r == ' ' || r == '\t':
			if inWord {
				words = append(words, cur.String())
				cur.Reset()
				inWord = false
			}
		default:
			cur.WriteRune(r)
			inWord = true
		}
	}
	if inWord {
		words = append(words, cur.String())
	}
	return words
}

func TestShellWords(t *testing.T) {
	got := shellWords(`nodal sweep f.nodal --out 'i(R1)' --ode "R1*C1*y' + y = u"   # note`)
	want := []string{"nodal", "sweep", "f.nodal", "--out", "i(R1)", "--ode", "R1*C1*y' + y = u"}
	if strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("shellWords = %q, want %q", got, want)
	}
}

// TestHelpExamplesRun runs every example of every command's --help, from
// a scratch folder with the repository's testdata beside it, so that an example
// names files that exist and options that work. A verdict (exit 1) is an
// answer; bad input or usage (exit 2) is a broken example.
func TestHelpExamplesRun(t *testing.T) {
	testdata, err := filepath.Abs(filepath.Join("..", "..", "testdata"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := os.Symlink(testdata, filepath.Join(dir, "testdata")); err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	names := commandNames(t)
	if len(names) < 14 {
		t.Fatalf("command tree lists %d commands: %v", len(names), names)
	}
	for _, cmd := range names {
		r := runNodal(t, "", cmd, "--help")
		if r.code != 0 || !strings.Contains(r.stdout, "Example") {
			t.Errorf("%s --help: code %d, no worked example in %q", cmd, r.code, r.stdout)
			continue
		}
		ex := helpExamples(r.stdout)
		if len(ex) == 0 {
			t.Errorf("%s --help: no example command line", cmd)
		}
		for _, line := range ex {
			words := shellWords(line)
			if len(words) < 2 || words[1] != cmd {
				t.Errorf("%s --help: example %q is of another command", cmd, line)
				continue
			}
			for _, w := range words[2:] {
				if !strings.HasSuffix(w, ".nodal") || isOutputWord(words, w) {
					continue
				}
				if _, err := os.Stat(w); err != nil || !strings.HasPrefix(w, "testdata/examples/") {
					t.Errorf("%s --help: example %q names %s, not a file of testdata/examples", cmd, line, w)
				}
			}
			if serves(words) {
				continue // a server runs until stopped: its files are checked above
			}
			res := runNodal(t, "", words[1:]...)
			if res.code == exitInput {
				t.Errorf("example %q: exit %d\n%s", line, res.code, res.stderr)
			}
		}
	}
}

// serves reports whether an example starts a server that runs until it is
// stopped (nodal tune without --print).
func serves(words []string) bool {
	if words[1] != "tune" {
		return false
	}
	for _, w := range words {
		if w == "--print" || strings.HasPrefix(w, "--print=") {
			return false
		}
	}
	return true
}

// isOutputWord reports whether w follows -o or --output in words (a file
// the example writes).
func isOutputWord(words []string, w string) bool {
	for i := 1; i < len(words); i++ {
		if words[i] == w && (words[i-1] == "-o" || words[i-1] == "--output") {
			return true
		}
	}
	return false
}
