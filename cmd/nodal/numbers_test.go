package main

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"nodal/analysis/derivation"
	"nodal/analysis/signal"
	"nodal/netlist"
)

// firstNumber is the value of the first number literal of a derivation.
func firstNumber(t *testing.T, n derivation.Node) float64 {
	t.Helper()
	v := math.NaN()
	derivation.Walk(n, func(x derivation.Node) bool {
		if num, ok := x.(*derivation.Number); ok && math.IsNaN(v) {
			v = num.Value
		}
		return true
	})
	return v
}

// TestNumbersReadAlike: the same number text gives the same value (to the
// bit) in a circuit file, --set, --at, --ode, --tf and --signal, and that
// value is the one the standards give. SI prefixes: BIPM, The
// International System of Units (SI Brochure), 9th edition 2019, table 7.
// Value codes, the letter standing for the decimal point and the
// multiplier (4k7 = 4.7 kΩ, 4n7 = 4.7 nF): IEC 60062:2016, clause 5 (from
// memory). --at takes frequencies, so a value with another unit is
// refused there and not compared.
func TestNumbersReadAlike(t *testing.T) {
	for _, tc := range []struct {
		text string
		want float64
		hz   bool // acceptable as a frequency
	}{
		{"1k5", 1500, true}, {"4n7", 4.7e-9, true}, {"2kHz", 2000, true}, {"10kΩ", 1e4, false},
		{"4.7u", 4.7e-6, true}, {"1e3", 1000, true}, {"1.5e-3", 1.5e-3, true},
		{"4k7", 4700, true}, {"2R2", 2.2, false}, {"100nF", 100e-9, false}, {"2.5MHz", 2.5e6, true},
		{"10kohm", 1e4, false}, {"4µ7", 4.7e-6, true}, {"1G2", 1.2e9, true},
	} {
		src := "let x = " + tc.text + "\nV1: voltage source (in, gnd) 1\nR1: resistor (in, gnd) 1k\n"
		c, err := netlist.Load("t.nodal", []byte(src), nil)
		if err != nil {
			t.Fatalf("%s in a file: %v", tc.text, err)
		}
		file, _ := c.Lookup("x")
		if d := math.Abs(file - tc.want); d > 1e-12*tc.want {
			t.Errorf("%s in a file = %v, want %v", tc.text, file, tc.want)
		}
		got := map[string]float64{}
		ov, err := parseOverrides([]string{"x=" + tc.text})
		if err != nil {
			t.Errorf("--set x=%s: %v", tc.text, err)
		}
		got["--set"] = ov["x"]
		at, err := (&freqArgs{At: tc.text}).frequencies(nil)
		switch {
		case tc.hz && err != nil:
			t.Errorf("--at %s: %v", tc.text, err)
		case tc.hz:
			got["--at"] = at[0]
		case err == nil || !strings.Contains(err.Error(), "where Hz is expected"):
			t.Errorf("--at %s: %v; want a unit error", tc.text, err)
		}
		if eq, err := derivation.ParseODE("--ode", "y = "+tc.text+"*u"); err != nil {
			t.Errorf("--ode with %s: %v", tc.text, err)
		} else {
			got["--ode"] = firstNumber(t, eq)
		}
		if tf, err := derivation.ParseTF("--tf", tc.text+"/(1 + s)"); err != nil {
			t.Errorf("--tf with %s: %v", tc.text, err)
		} else {
			got["--tf"] = firstNumber(t, tf)
		}
		if sig, err := signal.Parse("--signal", tc.text); err != nil {
			t.Errorf("--signal %s: %v", tc.text, err)
		} else {
			got["--signal"] = sig.DC
		}
		for where, v := range got {
			if v != file {
				t.Errorf("%s: %s reads %v, a circuit file %v", tc.text, where, v, file)
			}
		}
	}
}

// TestMessageForm: every grammar reports a mistake in one form, on stderr
// with exit status 2: "nodal: SOURCE:LINE:COL: message", the source line
// and a caret under the column (the go/scanner convention; common
// practice).
func TestMessageForm(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "tone.nodal")
	fileSrc := "V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 4k7x\nC1: capacitor (out, gnd) 1n\n"
	if err := os.WriteFile(bad, []byte(fileSrc), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		args   []string
		source string // as it appears before :LINE:COL
		line   int
		col    int
		shown  string // the echoed source line
		msg    string
	}{
		{"circuit file", []string{"transfer", bad, "--out", "out"}, bad, 2, 24, "R1: resistor (in, out) 4k7x", `unknown unit "x" after a value code`},
		{"--ode", []string{"check", rcFile, "--out", "out", "--ode", "R1*C1*y' + = u"}, "--ode", 1, 12, "R1*C1*y' + = u", `expected a term after "+"`},
		{"--tf", []string{"check", rcFile, "--out", "out", "--tf", "1/(1 + 2s)"}, "--tf", 1, 8, "1/(1 + 2s)", `write 2*s`},
		{"--tf number", []string{"check", rcFile, "--out", "out", "--tf", "1/(1 + s*1k5x)"}, "--tf", 1, 10, "1/(1 + s*1k5x)", `unknown unit "x" after a value code`},
		{"--signal", []string{"drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1kHz*t) + 3x"}, "--signal", 1, 20, "sin(2*pi*1kHz*t) + 3x", `unknown unit or prefix "x"`},
		{"--signal syntax", []string{"drive", rcFile, "--out", "out", "--signal", "0.8*sin(2*pi*400*t)^2"}, "--signal", 1, 20, "0.8*sin(2*pi*400*t)^2", `unexpected character '^'`},
		{"--at", []string{"sweep", rcFile, "--out", "out", "--at", "1k5, 2x"}, "--at", 1, 6, "1k5, 2x", `unknown unit or prefix "x"`},
		{"--from", []string{"sweep", rcFile, "--out", "out", "--from", "10QHz"}, "--from", 1, 1, "10QHz", `unknown unit or prefix "QHz"`},
		{"--set", []string{"transfer", rcFile, "--out", "out", "--set", "R=4k7q"}, "--set", 1, 3, "R=4k7q", `unknown unit "q" after a value code`},
	} {
		r := runNodal(t, "", tc.args...)
		if r.code != exitInput {
			t.Errorf("%s: exit %d, want %d (stderr %q)", tc.name, r.code, exitInput, r.stderr)
			continue
		}
		lines := strings.Split(strings.TrimRight(r.stderr, "\n"), "\n")
		head := "nodal: " + tc.source + ":" + strconv.Itoa(tc.line) + ":" + strconv.Itoa(tc.col) + ": "
		if len(lines) != 3 || !strings.HasPrefix(lines[0], head) || !strings.Contains(lines[0], tc.msg) {
			t.Errorf("%s: stderr %q; want %q... %q and two more lines", tc.name, r.stderr, head, tc.msg)
			continue
		}
		if lines[1] != "    "+tc.shown {
			t.Errorf("%s: echoed %q, want %q", tc.name, lines[1], tc.shown)
		}
		if caret := utf8.RuneCountInString(lines[2]) - 1; !strings.HasSuffix(lines[2], "^") || caret != 4+tc.col-1 {
			t.Errorf("%s: caret line %q, want the caret under column %d", tc.name, lines[2], tc.col)
		}
	}
}

// TestMessageEcho: a message shows at most 200 characters of a long line
// (around the column) and escapes terminal control and bidirectional
// override characters from the file (issue 19).
func TestMessageEcho(t *testing.T) {
	dir := t.TempDir()
	long := filepath.Join(dir, "long.nodal")
	pad := strings.Repeat("x", 100000)
	if err := os.WriteFile(long, []byte("V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k "+pad+" $\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "transfer", long, "--out", "out")
	lines := strings.Split(strings.TrimRight(r.stderr, "\n"), "\n")
	if r.code != exitInput || len(lines) != 3 || !strings.Contains(lines[0], `unexpected character "$"`) {
		t.Fatalf("long line: exit %d, stderr of %d bytes: %.300q", r.code, len(r.stderr), r.stderr)
	}
	if n := utf8.RuneCountInString(strings.Trim(strings.TrimPrefix(lines[1], "    "), "…")); n > 200 || !strings.HasSuffix(lines[1], "x $") || !strings.HasPrefix(lines[1], "    …x") {
		t.Errorf("long line echoed as %d characters: %.80q...", n, lines[1])
	}
	if caret := utf8.RuneCountInString(lines[2]) - 1; []rune(lines[1])[caret] != '$' {
		t.Errorf("caret not under the $")
	}
	name := filepath.Join(dir, "name.nodal")
	if err := os.WriteFile(name, []byte("V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) C"+pad+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r = runNodal(t, "", "transfer", name, "--out", "out")
	if r.code != exitInput || !strings.Contains(r.stderr, `undefined parameter "Cxxx`) || len(r.stderr) > 1000 {
		t.Errorf("100000-character name: exit %d, %d bytes of message: %.200q", r.code, len(r.stderr), r.stderr)
	}
	ctl := filepath.Join(dir, "ctl.nodal")
	if err := os.WriteFile(ctl, []byte("V1: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k $ # \x1b[2J\u202egnp.exe\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r = runNodal(t, "", "transfer", ctl, "--out", "out")
	if r.code != exitInput || strings.ContainsAny(r.stderr, "\x1b\u202e") || !strings.Contains(r.stderr, `# \x1b[2J\u202egnp.exe`) {
		t.Errorf("control characters: exit %d, stderr %q", r.code, r.stderr)
	}
	titled := filepath.Join(dir, "title.nodal")
	if err := os.WriteFile(titled, []byte(`title "logger \x1b[2J\u202efront end"`+"\nV1: voltage source (in, gnd) 1\nR1: resistor (in, gnd) 1k\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r = runNodal(t, "", "parts", titled)
	if r.code != 0 || strings.ContainsAny(r.stdout, "\x1b\u202e") || !strings.HasPrefix(r.stdout, `logger \x1b[2J\u202efront end`) {
		t.Errorf("title with control characters: exit %d, stdout %.80q", r.code, r.stdout)
	}
}
