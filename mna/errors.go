package mna

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"nodal/netlist"
)

// LookupError reports a name (node, source or part) that the circuit does
// not have, with the names it does have so the user can pick one.
type LookupError struct {
	What  string   // "node", "source" or "part"
	Name  string   // the name asked for; empty when the lookup was implicit
	Known []string // the names of that kind that exist, in circuit order
	Why   string   // optional explanation replacing "no such"
}

// Error formats the lookup failure: `no node "otu"; did you mean "out"?`
// when a known name is close to the one asked for, else the names that
// exist.
func (e *LookupError) Error() string {
	var b strings.Builder
	switch {
	case e.Why != "":
		b.WriteString(e.Why)
	default:
		fmt.Fprintf(&b, "no %s %q", e.What, e.Name)
	}
	if h := e.Hint(); h != "" {
		fmt.Fprintf(&b, "; did you mean %q?", h)
		return b.String()
	}
	if len(e.Known) == 0 {
		fmt.Fprintf(&b, " (the circuit has no %ss)", e.What)
	} else {
		fmt.Fprintf(&b, " (%ss: %s)", e.What, quoteList(e.Known))
	}
	return b.String()
}

// Hint returns the known name closest to Name (see netlist.Closest), or ""
// when none is close or no name was asked for.
func (e *LookupError) Hint() string {
	if e.Name == "" {
		return ""
	}
	if h := netlist.Closest(e.Name, e.Known); h != "" {
		return h
	}
	if e.What == "source" && len(e.Known) == 1 && e.Why == "" {
		// A circuit with one source: that one is the only sensible guess.
		return e.Known[0]
	}
	return ""
}

// PartError reports a part that cannot be stamped (bad terminal count, a
// value that is not finite or not positive, a sense naming a part without
// a current). Err, when set, is the underlying error (a *LookupError for a
// sense naming a missing node or part) and Msg is its text; errors.As
// reaches it through Unwrap.
type PartError struct {
	Part string
	Msg  string
	Err  error
}

// Error formats the part name and the problem.
func (e *PartError) Error() string { return fmt.Sprintf("part %q: %s", e.Part, e.Msg) }

// Unwrap returns the underlying error, nil when there is none.
func (e *PartError) Unwrap() error { return e.Err }

// partLookupError wraps a failed lookup made on behalf of part, keeping the
// lookup's text as the message.
func partLookupError(part string, le *LookupError) *PartError {
	return &PartError{Part: part, Msg: le.Error(), Err: le}
}

// Problem is one structural defect of a circuit found by Structure.
type Problem struct {
	Msg   string   // a sentence naming the nodes and parts involved
	Nodes []string // the nodes involved
	Parts []string // the parts involved
}

// StructureError lists every defect that makes G + sC singular for all s.
type StructureError struct {
	Problems []Problem
}

// Error joins the problems, one per line.
func (e *StructureError) Error() string {
	msgs := make([]string, len(e.Problems))
	for i, p := range e.Problems {
		msgs[i] = p.Msg
	}
	return strings.Join(msgs, "\n")
}

// SingularError reports that G + sC is numerically singular at one complex
// frequency: elimination found no usable pivot for unknown Unknown.
type SingularError struct {
	S       complex128 // the complex frequency, rad/s
	Unknown string     // the unknown whose pivot vanished, "v(NODE)" or "i(PART)"
	Index   int        // its row/column in x
}

// FreqHz returns Im(S)/2π, the frequency in Hz when S lies on the jω axis.
func (e *SingularError) FreqHz() float64 { return imag(e.S) / (2 * math.Pi) }

// Error names the unknown and the frequency.
func (e *SingularError) Error() string {
	if real(e.S) == 0 {
		return fmt.Sprintf("MNA system is singular at f = %.6g Hz: unknown %s lost its pivot", e.FreqHz(), e.Unknown)
	}
	return fmt.Sprintf("MNA system is singular at s = %.6g%+.6gj rad/s (|s| = %.6g): unknown %s lost its pivot",
		real(e.S), imag(e.S), cmplx.Abs(e.S), e.Unknown)
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = fmt.Sprintf("%q", n)
	}
	return strings.Join(q, ", ")
}
