package netlist

import (
	"fmt"
	"sort"
	"strings"
)

// Pos is a position in a source file. Line and Col count from 1; Col
// counts characters (runes), not bytes. Offset is the byte offset.
type Pos struct {
	File   string
	Line   int
	Col    int
	Offset int
}

// String formats the position as FILE:LINE:COL.
func (p Pos) String() string {
	if p.Line == 0 {
		return p.File
	}
	return fmt.Sprintf("%s:%d:%d", p.File, p.Line, p.Col)
}

// Severity says whether a diagnostic stops elaboration.
type Severity int

const (
	// SevError makes Parse or Elaborate fail.
	SevError Severity = iota
	// SevWarning is reported but does not fail.
	SevWarning
)

// Diagnostic is one positioned message about the circuit text.
type Diagnostic struct {
	Pos      Pos
	Severity Severity
	Msg      string
	Hint     string // optional: `did you mean "capacitor"?`
	Line     string // the source line, for the caret display; may be empty
}

// Error formats the diagnostic as FILE:LINE:COL: message, followed by the
// source line and a caret under the column when the line is known.
func (d *Diagnostic) Error() string {
	var b strings.Builder
	b.WriteString(d.Pos.String())
	b.WriteString(": ")
	if d.Severity == SevWarning {
		b.WriteString("warning: ")
	}
	b.WriteString(d.Msg)
	if d.Hint != "" {
		b.WriteString(" (")
		b.WriteString(d.Hint)
		b.WriteString(")")
	}
	if d.Line != "" && d.Pos.Col > 0 {
		b.WriteString("\n    ")
		b.WriteString(d.Line)
		b.WriteString("\n    ")
		col := 0
		for _, r := range d.Line {
			col++
			if col >= d.Pos.Col {
				break
			}
			if r == '\t' {
				b.WriteByte('\t')
			} else {
				b.WriteByte(' ')
			}
		}
		b.WriteString("^")
	}
	return b.String()
}

// ErrorList is a list of diagnostics, like go/scanner.ErrorList. Its Error
// method reports up to MaxReported of them.
type ErrorList []*Diagnostic

// MaxReported is how many diagnostics ErrorList.Error prints at most.
const MaxReported = 20

// Error joins the diagnostics, one per paragraph, with a count of any left
// out.
func (l ErrorList) Error() string {
	var b strings.Builder
	for i, d := range l {
		if i == MaxReported {
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

// Sort orders the list by file, line and column.
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
