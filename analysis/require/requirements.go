package require

import (
	"fmt"
	"math"

	"nodal/netlist"
)

// z95 is the two-sided 95 % standard normal quantile Φ⁻¹(0.975).
const z95 = 1.959963984540054

// Proportion is an observed fraction Passed/Runs with its 95 % Wilson
// score interval [Lo, Hi]. Invariant: 0 ≤ Lo ≤ Fraction ≤ Hi ≤ 1 when
// Runs > 0; all three are NaN when Runs == 0.
type Proportion struct {
	Passed, Runs int
	Fraction     float64 // Passed/Runs, as a ratio (not %)
	Lo, Hi       float64 // 95 % Wilson score interval, ratios
}

// NewProportion returns passed/runs with its 95 % Wilson score interval.
func NewProportion(passed, runs int) Proportion {
	if runs <= 0 {
		nan := math.NaN()
		return Proportion{Passed: passed, Runs: runs, Fraction: nan, Lo: nan, Hi: nan}
	}
	lo, hi := Wilson(passed, runs, z95)
	return Proportion{Passed: passed, Runs: runs, Fraction: float64(passed) / float64(runs), Lo: lo, Hi: hi}
}

// Wilson returns the Wilson score interval for a binomial proportion
// (E. B. Wilson, "Probable inference, the law of succession, and
// statistical inference", JASA 22:209–212, 1927): with p̂ = k/n and the
// normal quantile z (1.96 for 95 %),
//
//	centre    = (p̂ + z²/(2n)) / (1 + z²/n)
//	halfwidth = z/(1 + z²/n) · √( p̂(1−p̂)/n + z²/(4n²) )
//
// the interval is centre ± halfwidth. Its ends are the two roots p of
// (p̂ − p)² = z²·p(1−p)/n. Unlike the normal approximation it stays inside
// [0, 1] and is not empty at k = 0 or k = n. n must be > 0.
func Wilson(k, n int, z float64) (lo, hi float64) {
	nf := float64(n)
	p := float64(k) / nf
	z2 := z * z
	den := 1 + z2/nf
	centre := (p + z2/(2*nf)) / den
	half := z / den * math.Sqrt(p*(1-p)/nf+z2/(4*nf*nf))
	lo, hi = centre-half, centre+half
	// Exact ends at k = 0 and k = n (the formula gives them up to rounding).
	if k == 0 {
		lo = 0
	}
	if k == n {
		hi = 1
	}
	return math.Max(0, lo), math.Min(1, hi)
}

// Verdict is the outcome of one requirement.
//
// Values are in the metric's unit (dB, deg, Hz or a plain number, as in
// netlist.Requirement). A metric that could not be evaluated (a run whose
// circuit has no -3 dB point, say) is NaN and fails.
type Verdict struct {
	Requirement netlist.Requirement
	Nominal     float64 // metric at nominal values
	NominalPass bool
	// WorstMin and WorstMax are the extremes of the metric over the nominal
	// point and every worst-case corner (NaN values left out); WorstPass is
	// true when the metric passes at all of them. Corners are vertices of
	// the tolerance box, so an extreme inside the box is not seen (common
	// practice for worst-case analysis of monotonic responses).
	WorstMin, WorstMax float64
	WorstPass          bool
	// Yield is the fraction of Monte Carlo runs in which this requirement
	// passes.
	Yield Proportion
}

// Verification is the outcome of all requirements of a circuit.
type Verification struct {
	Verdicts []Verdict
	// Yield is the fraction of Monte Carlo runs passing every requirement.
	Yield   Proportion
	Corners int // worst-case corners evaluated (besides nominal)
	Runs    int // Monte Carlo runs
}

// PassNominal reports whether every requirement passes at nominal values.
func (v *Verification) PassNominal() bool {
	for _, d := range v.Verdicts {
		if !d.NominalPass {
			return false
		}
	}
	return true
}

// PassWorst reports whether every requirement passes at every worst-case
// corner.
func (v *Verification) PassWorst() bool {
	for _, d := range v.Verdicts {
		if !d.WorstPass {
			return false
		}
	}
	return true
}

// Judge turns metric values into verdicts. nominal has one value per
// requirement; corners and runs have one such row per worst-case corner
// and per Monte Carlo run. NaN marks a value that could not be evaluated
// (it fails).
func Judge(reqs []netlist.Requirement, nominal []float64, corners, runs [][]float64) (*Verification, error) {
	n := len(reqs)
	if len(nominal) != n {
		return nil, fmt.Errorf("judge: %d nominal values for %d requirements", len(nominal), n)
	}
	for _, rows := range [][][]float64{corners, runs} {
		for i, r := range rows {
			if len(r) != n {
				return nil, fmt.Errorf("judge: row %d has %d values for %d requirements", i, len(r), n)
			}
		}
	}
	v := &Verification{Verdicts: make([]Verdict, n), Corners: len(corners), Runs: len(runs)}
	for j, req := range reqs {
		d := Verdict{Requirement: req, Nominal: nominal[j], NominalPass: req.Pass(nominal[j]), WorstPass: true}
		d.WorstMin, d.WorstMax = math.Inf(1), math.Inf(-1)
		for _, val := range append([]float64{nominal[j]}, column(corners, j)...) {
			d.WorstPass = d.WorstPass && req.Pass(val)
			if !math.IsNaN(val) {
				d.WorstMin, d.WorstMax = math.Min(d.WorstMin, val), math.Max(d.WorstMax, val)
			}
		}
		if d.WorstMin > d.WorstMax {
			d.WorstMin, d.WorstMax = math.NaN(), math.NaN()
		}
		passed := 0
		for _, r := range runs {
			if req.Pass(r[j]) {
				passed++
			}
		}
		d.Yield = NewProportion(passed, len(runs))
		v.Verdicts[j] = d
	}
	all := 0
	for _, r := range runs {
		ok := true
		for j, req := range reqs {
			ok = ok && req.Pass(r[j])
		}
		if ok {
			all++
		}
	}
	v.Yield = NewProportion(all, len(runs))
	return v, nil
}

func column(rows [][]float64, j int) []float64 {
	out := make([]float64, len(rows))
	for i, r := range rows {
		out[i] = r[j]
	}
	return out
}
