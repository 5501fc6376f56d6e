package main

import (
	"fmt"
	"math"

	"nodal/analysis/response"
	"nodal/cmd/nodal/notation"
	"nodal/netlist"
	"nodal/netlist/syntax"
)

// maxPoints bounds every sampled output (sweep and time points): a million
// points is far beyond any plot or table and still fits in memory.
const maxPoints = 1_000_000

// maxPartPoints bounds the work of a frequency analysis: parts × points ×
// repeats (outputs of a sweep, runs of an envelope). Each part-point is a
// few sparse-matrix operations, so 10⁹ is minutes of work.
const maxPartPoints = 1_000_000_000

// checkWork refuses an analysis of parts × points × repeats above
// maxPartPoints, saying what to reduce.
func checkWork(what string, parts, points, repeats int, repeatName string) error {
	w := float64(parts) * float64(points) * float64(repeats)
	if w <= maxPartPoints {
		return nil
	}
	return fmt.Errorf("%s: %d parts × %d points × %d %s is %.3g part-points, more than the maximum of %.0e: use fewer points (--per-decade, --points, a narrower range) or fewer %s",
		what, parts, points, repeats, repeatName, w, float64(maxPartPoints), repeatName)
}

// maxFrequencyHz is the highest frequency a flag may give.
const maxFrequencyHz = netlist.MaxFrequencyHz

// pointCount writes a point count, "more than 10^18" when it saturated.
func pointCount(n int) string {
	if n == math.MaxInt {
		return "more than 10^18"
	}
	return fmt.Sprint(n)
}

// freqArgs choose the frequencies of a sweep. With none given the range
// covers, by a decade either side, the poles and zeros that shape the
// response within 100 dB of its largest gain (autoRange).
type freqArgs struct {
	From      string `help:"Start frequency, e.g. 10Hz or 1k." placeholder:"F"`
	To        string `help:"Stop frequency, e.g. 1MHz." placeholder:"F"`
	PerDecade int    `help:"Points per decade on a log scale." default:"50"`
	Points    int    `help:"Number of points with --linear (default 201)." placeholder:"N"`
	Linear    bool   `help:"Space points linearly from --from to --to."`
	At        string `help:"Explicit frequencies, comma-separated, e.g. 50Hz,1k,10k." placeholder:"F1,F2,..."`
}

// frequencies returns the sweep frequencies in Hz. auto gives the default
// range when --from/--to are missing.
func (f *freqArgs) frequencies(auto func() (float64, float64)) ([]float64, error) {
	if f.At != "" {
		if f.From != "" || f.To != "" || f.Linear {
			return nil, fmt.Errorf("--at cannot be combined with --from, --to or --linear")
		}
		out, err := syntax.ParseFlagList("--at", f.At, "Hz")
		if err != nil {
			return nil, err
		}
		for _, v := range out {
			if v < 0 {
				return nil, fmt.Errorf("--at %s: frequency must be ≥ 0", notation.Eng(v, "Hz"))
			}
			if v > maxFrequencyHz || math.IsInf(v, 0) {
				return nil, fmt.Errorf("--at %s: the frequency is out of range: frequencies go up to %s", notation.Eng(v, "Hz"), notation.Eng(maxFrequencyHz, "Hz"))
			}
		}
		return out, nil
	}
	// The automatic range (a transfer-function extraction) only when an
	// end is missing.
	var from, to float64
	if f.From == "" || f.To == "" {
		from, to = auto()
	}
	var err error
	if f.From != "" {
		if from, err = syntax.ParseFlag("--from", f.From, "Hz"); err != nil {
			return nil, err
		}
	}
	if f.To != "" {
		if to, err = syntax.ParseFlag("--to", f.To, "Hz"); err != nil {
			return nil, err
		}
	}
	for _, v := range []struct {
		flag string
		hz   float64
	}{{"--from", from}, {"--to", to}} {
		if math.IsInf(v.hz, 0) || math.IsNaN(v.hz) || v.hz > maxFrequencyHz {
			return nil, fmt.Errorf("%s: %s is out of range: frequencies go up to %s", v.flag, notation.Eng(v.hz, "Hz"), notation.Eng(maxFrequencyHz, "Hz"))
		}
	}
	if !(to > from) {
		return nil, fmt.Errorf("--to (%s) must be above --from (%s)", notation.Eng(to, "Hz"), notation.Eng(from, "Hz"))
	}
	if f.Linear {
		n := f.Points
		if n == 0 {
			n = 201
		}
		if n < 2 || n > maxPoints {
			return nil, fmt.Errorf("--points must be between 2 and %d", maxPoints)
		}
		if from < 0 {
			return nil, fmt.Errorf("--from must be ≥ 0")
		}
		return response.LinearGrid(from, to, n), nil
	}
	if f.Points != 0 {
		return nil, fmt.Errorf("--points goes with --linear; use --per-decade for a log sweep")
	}
	if from <= 0 {
		return nil, fmt.Errorf("a log sweep needs --from > 0 (got %s); use --linear to start at 0 Hz", notation.Eng(from, "Hz"))
	}
	if f.PerDecade < 1 || f.PerDecade > 10000 {
		return nil, fmt.Errorf("--per-decade must be between 1 and 10000")
	}
	if n := response.LogGridSize(from, to, f.PerDecade); n > maxPoints {
		return nil, fmt.Errorf("%s to %s at %d points per decade is %s points, more than the maximum of %d: narrow the range or lower --per-decade",
			notation.Eng(from, "Hz"), notation.Eng(to, "Hz"), f.PerDecade, pointCount(n), maxPoints)
	}
	return response.LogGrid(from, to, f.PerDecade), nil
}
