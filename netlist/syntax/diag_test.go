package syntax

import (
	"strings"
	"testing"
	"unicode/utf8"
)

// TestDiagnosticForm: one message form for every source, SOURCE:LINE:COL:
// message (hint), then the line and a caret under the column (the
// go/scanner convention; common practice). Tabs before the column are
// kept so the caret lines up.
func TestDiagnosticForm(t *testing.T) {
	src := "let a = 1\n\tR1: resistor (in, out) 4k7x\n"
	text := NewText("tone.nodal", []byte(src))
	off := strings.Index(src, "4k7x")
	for _, tc := range []struct {
		name string
		d    *Diagnostic
		want string
	}{
		{"error", text.Diag(off, SevError, "bad value", "write 4k7"), "tone.nodal:2:25: bad value (write 4k7)\n    \tR1: resistor (in, out) 4k7x\n    \t                       ^"},
		{"warning", text.Diag(0, SevWarning, "unused", ""), "tone.nodal:1:1: warning: unused\n    let a = 1\n    ^"},
		{"flag", NewText("--at", []byte("1k,2x")).Errorf(3, "bad value"), "--at:1:4: bad value\n    1k,2x\n       ^"},
		{"end of text", NewText("--ode", []byte("y' =")).Errorf(4, "expected a term"), "--ode:1:5: expected a term\n    y' =\n        ^"},
		{"no line", &Diagnostic{Pos: Pos{File: "f", Line: 3, Col: 2}, Msg: "m"}, "f:3:2: m"},
		{"raw text in the message", &Diagnostic{Pos: Pos{File: "f", Line: 1, Col: 1}, Msg: "name \x1b[2J", Hint: "did you mean \u202ex"}, `f:1:1: name \x1b[2J (did you mean \u202ex)`},
	} {
		if got := tc.d.Error(); got != tc.want {
			t.Errorf("%s:\n got %q\nwant %q", tc.name, got, tc.want)
		}
	}
	if l := NewText("bin", []byte("a\x00b")).Line(0); l != "" {
		t.Errorf("a text with a NUL byte echoes %q", l)
	}
}

// TestEchoWindow: a long line is shown as at most MaxEcho characters
// around the column, cut with "…", and the caret still sits under the
// character the column names.
func TestEchoWindow(t *testing.T) {
	long := strings.Repeat("a", 5000) + "X" + strings.Repeat("b", 5000)
	for _, tc := range []struct {
		name       string
		line       string
		col        int
		cutL, cutR bool
	}{
		{"middle", long, 5001, true, true},
		{"start", long, 1, false, true},
		{"end", long, 10001, true, false},
		{"past the end", long, 10002, true, false},
		{"short", "R1: resistor (a, b) 1k", 5, false, false},
		{"exactly MaxEcho", strings.Repeat("c", MaxEcho), MaxEcho, false, false},
	} {
		shown, pad := Echo(tc.line, tc.col)
		n := utf8.RuneCountInString(strings.TrimSuffix(strings.TrimPrefix(shown, "…"), "…"))
		if n > MaxEcho || n != min(MaxEcho, utf8.RuneCountInString(tc.line)) {
			t.Errorf("%s: %d characters of the line shown, want at most %d", tc.name, n, MaxEcho)
		}
		if strings.HasPrefix(shown, "…") != tc.cutL || strings.HasSuffix(shown, "…") != tc.cutR {
			t.Errorf("%s: cut marks on %q...%q", tc.name, shown[:10], shown[len(shown)-10:])
		}
		runes := []rune(shown)
		at := utf8.RuneCountInString(pad)
		lineRunes := []rune(tc.line)
		switch {
		case tc.col <= len(lineRunes):
			if at >= len(runes) || runes[at] != lineRunes[tc.col-1] {
				t.Errorf("%s: caret at %d is not under column %d", tc.name, at, tc.col)
			}
		default:
			if at != len(runes) {
				t.Errorf("%s: caret at %d, want just past the shown line (%d)", tc.name, at, len(runes))
			}
		}
	}
	if shown, _ := Echo(long, 5001); !strings.Contains(shown, "X") {
		t.Errorf("the window around column 5001 misses it")
	}
	d := NewText("big.nodal", []byte(long)).Errorf(5000, "undefined parameter %q (or %q)", long, "short")
	if got := d.Error(); len(got) > 3*MaxEcho+100 {
		t.Errorf("a 10001-character line gives a %d-byte message", len(got))
	}
	if first := strings.SplitN(d.Error(), "\n", 2)[0]; !strings.HasPrefix(first, `big.nodal:1:5001: undefined parameter "aaa`) || !strings.Contains(first, `…bbb`) || !strings.HasSuffix(first, `b" (or "short")`) || utf8.RuneCountInString(first) > 60+MaxQuoted+20 {
		t.Errorf("quoted token not shortened: %q", first)
	}
}

// TestEscapeText: control characters (C0 except tab, DEL, C1) and the
// bidirectional formatting characters of Unicode UAX #9 (marks U+200E,
// U+200F, U+061C; embeddings and overrides U+202A–U+202E; isolates
// U+2066–U+2069) are shown as escapes, and the caret counts the escape's
// width.
func TestEscapeText(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"plain Ω µ 4k7", "plain Ω µ 4k7"},
		{"a\tb", "a\tb"},
		{"\x1b[2Jx", `\x1b[2Jx`},
		{"a\rb\x07\x7f", `a\x0db\x07\x7f`},
		{"\u0085", `\x85`},
		{"R1\u202e: lanoitan", `R1\u202e: lanoitan`},
		{"\u2066\u2067\u2068\u2069\u202a\u202b\u202c\u202d\u200e\u200f\u061c", `\u2066\u2067\u2068\u2069\u202a\u202b\u202c\u202d\u200e\u200f\u061c`},
	} {
		if got := EscapeText(tc.in); got != tc.want {
			t.Errorf("EscapeText(%q) = %q; want %q", tc.in, got, tc.want)
		}
	}
	src := "let \x1b[31m = 1 $"
	d := NewText("t", []byte(src)).Errorf(strings.Index(src, "$"), "unexpected")
	want := "t:1:15: unexpected\n    let \\x1b[31m = 1 $\n" + strings.Repeat(" ", 4+17) + "^"
	if got := d.Error(); got != want {
		t.Errorf("escaped line:\n got %q\nwant %q", got, want)
	}
	if strings.ContainsAny(d.Error(), "\x1b\u202e") {
		t.Errorf("raw control character reaches the message")
	}
}

// TestErrorList: sorted by source, line and column; at most MaxReported
// shown with a count of the rest; warnings alone are not an error.
func TestErrorList(t *testing.T) {
	text := NewText("f", []byte("a\nb\nc\n"))
	l := ErrorList{text.Errorf(4, "third"), text.Errorf(0, "first"), text.Errorf(2, "second")}
	l.Sort()
	if l[0].Msg != "first" || l[1].Msg != "second" || l[2].Msg != "third" {
		t.Errorf("sorted: %v", l)
	}
	var many ErrorList
	for range MaxReported + 5 {
		many = append(many, text.Errorf(0, "x"))
	}
	if got := many.Error(); strings.Count(got, "f:1:1: x") != MaxReported || !strings.HasSuffix(got, "(and 5 more errors)") {
		t.Errorf("long list: %q", got)
	}
	if (ErrorList{text.Diag(0, SevWarning, "w", "")}).Err() != nil {
		t.Errorf("warnings alone are an error")
	}
	if l.Err() == nil {
		t.Errorf("errors are not an error")
	}
}
