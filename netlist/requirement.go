package netlist

// RequireOp is the comparison of a requirement.
type RequireOp int

const (
	// Within passes when Lo ≤ value ≤ Hi.
	Within RequireOp = iota + 1
	// Below passes when value ≤ Hi.
	Below
	// Above passes when value ≥ Lo.
	Above
	// Holds passes when value is 1: a metric that is a yes/no property
	// (stable), with 1 for yes and 0 for no.
	Holds
)

// String returns the keyword of the comparison.
func (op RequireOp) String() string {
	switch op {
	case Within:
		return "within"
	case Below:
		return "below"
	case Above:
		return "above"
	case Holds:
		return "holds"
	}
	return "?"
}

// Requirement is a `require` statement: a metric (spelled as on the
// command line, e.g. "gain@1kHz", "f3db", "q"), the response it is taken
// on, and its limits.
//
// Limits are in the metric's own unit: dB for gain, peak and dc metrics
// (written with a "dB" suffix or bare), degrees for phase, Hz for
// frequencies, plain numbers for q.
type Requirement struct {
	Metric   string
	Response string // the named response it is taken on ("tweeter" in tweeter.f3db); "" means the first
	Op       RequireOp
	Lo, Hi   float64 // Lo unused for Below, Hi unused for Above
	Text     string  // the statement as written, for reports
	Pos      Pos
}

// Pass reports whether value meets the requirement.
func (r Requirement) Pass(value float64) bool {
	switch r.Op {
	case Within:
		return value >= r.Lo && value <= r.Hi
	case Below:
		return value <= r.Hi
	case Above:
		return value >= r.Lo
	case Holds:
		return value == 1
	}
	return false
}
