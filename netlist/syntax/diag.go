package syntax

import (
	"fmt"
	"regexp"
	"sort"
	"strings"
	"unicode/utf8"
)

// Severity says whether a diagnostic stops the work.
type Severity int

const (
	// SevError makes parsing or elaboration fail.
	SevError Severity = iota
	// SevWarning is reported but does not fail.
	SevWarning
)

// Diagnostic is one positioned message about a source text.
type Diagnostic struct {
	Pos      Pos
	Severity Severity
	Msg      string
	Hint     string // optional: `did you mean "capacitor"?`
	Line     string // the source line, for the caret display; may be empty
}

// MaxEcho is how many characters of a source line a diagnostic shows at
// most: a window around the column, with "…" where the line is cut.
const MaxEcho = 200

// Error formats the diagnostic as SOURCE:LINE:COL: message (hint), the
// message and hint escaped like the line in case they quote file text
// (and every quoted piece longer than MaxQuoted characters cut in its
// middle, so a 10 MB token is not repeated in full),
// followed, when the line is known, by the source line (at most MaxEcho
// characters around the column, control and bidirectional-override
// characters escaped) and a caret under the column.
func (d *Diagnostic) Error() string {
	var b strings.Builder
	b.WriteString(d.Pos.String())
	b.WriteString(": ")
	if d.Severity == SevWarning {
		b.WriteString("warning: ")
	}
	b.WriteString(shortenQuoted(EscapeText(d.Msg)))
	if d.Hint != "" {
		b.WriteString(" (")
		b.WriteString(shortenQuoted(EscapeText(d.Hint)))
		b.WriteString(")")
	}
	if d.Line != "" && d.Pos.Col > 0 {
		shown, pad := Echo(d.Line, d.Pos.Col)
		b.WriteString("\n    ")
		b.WriteString(shown)
		b.WriteString("\n    ")
		b.WriteString(pad)
		b.WriteString("^")
	}
	return b.String()
}

// Echo returns the part of line shown in a diagnostic for the 1-based
// rune column col: at most MaxEcho characters of the line around col, with
// "…" for a cut, and every control or bidirectional-formatting character
// escaped (EscapeText); pad is the blank run (tabs kept) that puts a caret
// under col.
func Echo(line string, col int) (shown, pad string) {
	runes := []rune(line)
	col = min(max(col, 1), len(runes)+1)
	start, end := 0, len(runes)
	if len(runes) > MaxEcho {
		start = max(0, col-1-MaxEcho/2)
		end = min(len(runes), start+MaxEcho)
		start = max(0, end-MaxEcho)
	}
	var s, p strings.Builder
	if start > 0 {
		s.WriteString("…")
		p.WriteByte(' ')
	}
	for i := start; i < end; i++ {
		e := escapeRune(runes[i])
		s.WriteString(e)
		if i < col-1 {
			if runes[i] == '\t' {
				p.WriteByte('\t')
			} else {
				p.WriteString(strings.Repeat(" ", utf8.RuneCountInString(e)))
			}
		}
	}
	if end < len(runes) {
		s.WriteString("…")
	}
	return s.String(), p.String()
}

// EscapeText returns s with every control character (other than tab) and
// every bidirectional-formatting character written as a Go escape (\x1b,
// \u202e), so that text from a file cannot move the cursor, recolour the
// terminal or reorder what is shown.
func EscapeText(s string) string {
	if !strings.ContainsFunc(s, needsEscape) {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		b.WriteString(escapeRune(r))
	}
	return b.String()
}

// needsEscape: C0 and C1 controls except tab, DEL, the invalid-UTF-8
// replacement, and the bidirectional marks, embeddings, overrides and
// isolates (Unicode UAX #9: U+061C, U+200E, U+200F, U+202A–U+202E,
// U+2066–U+2069).
func needsEscape(r rune) bool {
	switch {
	case r == '\t':
		return false
	case r < 0x20, r >= 0x7f && r <= 0x9f, r == utf8.RuneError:
		return true
	case r == 0x061c, r == 0x200e, r == 0x200f, r >= 0x202a && r <= 0x202e, r >= 0x2066 && r <= 0x2069:
		return true
	}
	return false
}

func escapeRune(r rune) string {
	if !needsEscape(r) {
		return string(r)
	}
	if r < 0x100 {
		return fmt.Sprintf(`\x%02x`, r)
	}
	return fmt.Sprintf(`\u%04x`, r)
}

// MaxQuoted is how many characters of a quoted piece of text ("name")
// a message shows at most.
const MaxQuoted = 60

// quotedRE is a double-quoted piece of a message, as %q writes it.
var quotedRE = regexp.MustCompile(`"(?:\\.|[^"\\])*"`)

// shortenQuoted cuts every quoted piece of msg longer than MaxQuoted
// characters to its first and last characters around "…".
func shortenQuoted(msg string) string {
	if utf8.RuneCountInString(msg) <= MaxQuoted {
		return msg
	}
	return quotedRE.ReplaceAllStringFunc(msg, func(q string) string {
		r := []rune(q)
		if len(r) <= MaxQuoted+2 {
			return q
		}
		return string(r[:MaxQuoted*2/3]) + "…" + string(r[len(r)-MaxQuoted/3:])
	})
}

// ErrorList is a list of diagnostics, like go/scanner.ErrorList. Its Error
// method reports up to MaxReported of them (all of them when one more
// would be left out: a parser's closing note after MaxReported errors is
// shown, not counted).
type ErrorList []*Diagnostic

// MaxReported is how many diagnostics ErrorList.Error prints at most.
const MaxReported = 20

// Error joins the diagnostics, one per paragraph, with a count of any left
// out.
func (l ErrorList) Error() string {
	var b strings.Builder
	for i, d := range l {
		if i == MaxReported && len(l) > MaxReported+1 {
			fmt.Fprintf(&b, "\n(and %d more errors)", len(l)-MaxReported)
			break
		}
		if i > 0 {
			b.WriteString("\n")
		}
		b.WriteString(d.Error())
	}
	return b.String()
}

// Sort orders the list by source, line and column.
func (l ErrorList) Sort() {
	sort.SliceStable(l, func(i, j int) bool {
		a, b := l[i].Pos, l[j].Pos
		if a.File != b.File {
			return a.File < b.File
		}
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Col < b.Col
	})
}

// Err returns l as an error, or nil when l has no errors (warnings alone
// do not count).
func (l ErrorList) Err() error {
	for _, d := range l {
		if d.Severity == SevError {
			return l
		}
	}
	return nil
}
