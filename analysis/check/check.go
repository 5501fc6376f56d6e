package check

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"nodal/analysis/transfer"
	"sort"
)

// CompareOptions tunes Compare. Zero fields take the defaults given.
type CompareOptions struct {
	// FromHz and ToHz bound the frequency sweep (Hz). Default: two decades
	// below the smallest and above the largest non-zero pole or zero
	// magnitude of either side; 1 Hz to 1 MHz when there is none.
	FromHz, ToHz float64
	// PointsPerDecade of the logarithmic sweep; default 50.
	PointsPerDecade int
	// RelTol is the largest relative coefficient difference
	// |yours − circuit| / max(|yours|, |circuit|) after normalisation that
	// still agrees; default 1e-6.
	RelTol float64
	// MagTolDB and PhaseTolDeg bound the response differences over the
	// sweep for a verdict of agreement; defaults 0.01 dB and 0.1°.
	MagTolDB, PhaseTolDeg float64
	// Values optionally maps part and parameter names to their SI values;
	// Compare then explains a coefficient ratio that equals one value or the
	// ratio of two (C1/C2: swapped C1 and C2?).
	Values map[string]float64
	// YoursNumTol and YoursDenTol optionally give, per coefficient of
	// numYours and denYours (same scale), the absolute precision they were
	// written to (derivation.Rational.Precision: half a unit in the last
	// digit of each literal). A coefficient then agrees when it differs by
	// no more than RelTol plus that precision, and the response by no more
	// than MagTolDB and PhaseTolDeg plus what the precision allows at each
	// frequency. Missing entries are exact.
	YoursNumTol, YoursDenTol []float64
	// BandOnly judges the responses only over FromHz..ToHz (both must be
	// set): the verdict is the response comparison within that band, and
	// the coefficient rows are shown but do not decide it.
	BandOnly bool
}

// zeroTol: a coefficient is negligible when |c_k|·ω0^k is at most zeroTol
// times the largest such term of the same polynomial on either side, with
// ω0 the geometric mean of the circuit's pole magnitudes (rad/s). This
// makes the test independent of the units of s.
const zeroTol = 1e-9

// CoefStatus is the verdict on one coefficient.
type CoefStatus string

// The coefficient verdicts.
const (
	CoefAgrees  CoefStatus = "agrees"  // equal within RelTol (or both negligible)
	CoefDiffers CoefStatus = "differs" // both present, not equal
	CoefMissing CoefStatus = "missing" // the circuit has it, yours is zero
	CoefExtra   CoefStatus = "extra"   // yours has it, the circuit's is zero
)

// CoefRow compares the coefficient of s^Power on one Side ("num" or "den")
// after normalisation. Ratio is Yours/Circuit, 0 when Circuit is zero.
// Precision is the absolute precision of Yours from the digits written
// (normalised like Yours; 0 when exact).
type CoefRow struct {
	Side      string
	Power     int
	Circuit   float64
	Yours     float64
	Ratio     float64
	Precision float64
	Status    CoefStatus
}

// RootMatch sets a circuit pole or zero beside the nearest one of yours.
// Circuit or Yours is nil when that side has no counterpart (a root
// missing from yours, or an extra one). RelDiff is |yours − circuit| /
// |circuit| (absolute in rad/s for a root at 0), and +Inf when a side is
// missing.
type RootMatch struct {
	Circuit *complex128
	Yours   *complex128
	RelDiff float64
}

// CheckResult is the outcome of Compare: plain data, roots in rad/s.
type CheckResult struct {
	// Agrees is the verdict: every coefficient agrees within RelTol after
	// normalisation (after cancelling common factors in yours) and the
	// response differences stay within MagTolDB and PhaseTolDeg.
	Agrees bool
	// The four lists are ascending and normalised so that the lowest-order
	// non-zero denominator coefficient is 1.
	CircuitNum []float64
	CircuitDen []float64
	YoursNum   []float64
	YoursDen   []float64
	// Coefficients has a row for every power present on either side:
	// numerator rows first, each side ascending.
	Coefficients []CoefRow
	// Poles and Zeros pair roots by nearest distance (rad/s).
	Poles []RootMatch
	Zeros []RootMatch
	// The sweep range (Hz) and the largest differences of yours against
	// the circuit's response: 20·log10|H_yours/H_circuit| in dB and
	// arg(H_yours/H_circuit) in degrees (signed), with their frequencies.
	FromHz           float64
	ToHz             float64
	MaxMagDiffDB     float64
	MaxMagDiffHz     float64
	MaxPhaseDiffDeg  float64
	MaxPhaseDiffHz   float64
	YoursCancelled   []complex128
	CircuitCancelled []complex128
	// MagAllowanceDB and PhaseAllowanceDeg are what the precision of
	// your coefficients allows at MaxMagDiffHz and MaxPhaseDiffHz (0 when
	// every coefficient is exact); the tolerances come on top.
	MagAllowanceDB    float64
	PhaseAllowanceDeg float64
	// CoefficientsAgree: every coefficient row agrees (Agrees also needs
	// the responses to agree).
	CoefficientsAgree bool
	// responsesDiffer: some frequency's difference exceeds its tolerance
	// plus allowance.
	responsesDiffer bool
	// Options are the options the comparison ran with, defaults filled in.
	Options CompareOptions
}

// ResponsesDiffer reports whether the response difference at some
// frequency exceeds MagTolDB or PhaseTolDeg plus what the written
// precision of your coefficients allows there.
func (res *CheckResult) ResponsesDiffer() bool { return res.responsesDiffer }

// Compare checks a hand derivation H_yours = numYours/denYours (ascending
// coefficients, any overall scale) against the circuit's transfer
// function. It never fails on a mismatch — that is the result — only on
// unusable input (empty or all-zero denominator, non-finite values).
func Compare(circuit *transfer.TransferFunction, numYours, denYours []float64, opt CompareOptions) (*CheckResult, error) {
	if circuit == nil {
		return nil, errors.New("compare: no circuit transfer function")
	}
	opt = opt.withDefaults()
	if opt.BandOnly && (opt.FromHz <= 0 || opt.ToHz <= opt.FromHz) {
		return nil, fmt.Errorf("compare: a band needs 0 < FromHz < ToHz (got %g..%g)", opt.FromHz, opt.ToHz)
	}
	cn, cd, err := normalise("circuit", circuit.Num, circuit.Den)
	if err != nil {
		return nil, err
	}
	yn, yd, err := normalise("your", numYours, denYours)
	if err != nil {
		return nil, err
	}
	tn, td := normaliseTol(numYours, denYours, opt.YoursNumTol, opt.YoursDenTol)
	res := &CheckResult{CircuitCancelled: plainRoots(circuit.Cancelled), Options: opt}
	w0 := scaleOmega(cd)

	// Cancel common factors in yours, so an unreduced but equal H agrees.
	yz, yp := polyRoots(yn), polyRoots(yd)
	worst := max(worstRel(yn, tn), worstRel(yd, td))
	if common, zs, ps := cancelCommon(yz, yp, w0, opt.RelTol); len(common) > 0 {
		res.YoursCancelled = plainRoots(common)
		yn = polyFromRoots(zs, yn[len(yn)-1])
		yd = polyFromRoots(ps, yd[len(yd)-1])
		if yn, yd, err = normalise("your", yn, yd); err != nil {
			return nil, err
		}
		yz, yp = zs, ps
		// The coefficients are rebuilt from the roots: give each the
		// largest relative precision of the written ones.
		tn, td = scaledTol(yn, worst), scaledTol(yd, worst)
	}
	res.CircuitNum, res.CircuitDen, res.YoursNum, res.YoursDen = cn, cd, yn, yd

	agrees := true
	for _, side := range []struct {
		name    string
		c, y, t []float64
	}{{"num", cn, yn, tn}, {"den", cd, yd, td}} {
		rows := compareCoefs(side.name, side.c, side.y, side.t, w0, opt.RelTol)
		res.Coefficients = append(res.Coefficients, rows...)
		for _, r := range rows {
			agrees = agrees && r.Status == CoefAgrees
		}
	}

	cz, cp := circuit.Zeros, circuit.Poles
	if len(cp) != degree(cd) || len(cz) != degree(cn) {
		cz, cp = polyRoots(cn), polyRoots(cd)
	}
	res.Zeros = pairRoots(cz, yz)
	res.Poles = pairRoots(cp, yp)

	res.sweep(cn, cd, yn, yd, tn, td, append(append(append(cz, cp...), yz...), yp...), opt)
	res.CoefficientsAgree = agrees
	if opt.BandOnly {
		agrees = true
	}
	if res.ResponsesDiffer() {
		agrees = false
	}
	res.Agrees = agrees
	return res, nil
}

func (o CompareOptions) withDefaults() CompareOptions {
	if o.PointsPerDecade <= 0 {
		o.PointsPerDecade = 50
	}
	if o.RelTol <= 0 {
		o.RelTol = 1e-6
	}
	if o.MagTolDB <= 0 {
		o.MagTolDB = 0.01
	}
	if o.PhaseTolDeg <= 0 {
		o.PhaseTolDeg = 0.1
	}
	return o
}

// normalise trims trailing zeros and divides both lists by the lowest-order
// non-zero denominator coefficient.
func normalise(who string, num, den []float64) ([]float64, []float64, error) {
	for _, c := range append(append([]float64(nil), num...), den...) {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return nil, nil, fmt.Errorf("compare: %s coefficients are not finite", who)
		}
	}
	lo := lowestNonZero(den)
	if lo < 0 {
		return nil, nil, fmt.Errorf("compare: %s denominator is zero", who)
	}
	if len(num) == 0 {
		num = []float64{0}
	}
	scale := func(c []float64) []float64 {
		out := make([]float64, len(c))
		for k, v := range c {
			out[k] = v / den[lo]
		}
		return trimTrailingZeros(out)
	}
	return scale(num), scale(den), nil
}

func trimTrailingZeros(c []float64) []float64 {
	for len(c) > 1 && c[len(c)-1] == 0 {
		c = c[:len(c)-1]
	}
	return c
}

func degree(c []float64) int { return len(trimTrailingZeros(c)) - 1 }

// scaleOmega is the geometric mean root magnitude of den (rad/s), 1 when
// it has no non-zero root.
func scaleOmega(den []float64) float64 {
	lo, hi := lowestNonZero(den), degree(den)
	if lo < 0 || hi <= lo {
		return 1
	}
	w := math.Pow(math.Abs(den[lo]/den[hi]), 1/float64(hi-lo))
	if w == 0 || math.IsInf(w, 0) || math.IsNaN(w) {
		return 1
	}
	return w
}

// normaliseTol scales the written precisions of yours like normalise
// scales the coefficients (first order: the lowest-order denominator
// coefficient's own precision adds its relative part to every entry).
func normaliseTol(num, den, tn, td []float64) ([]float64, []float64) {
	lo := lowestNonZero(den)
	if lo < 0 {
		return nil, nil
	}
	rel := at(td, lo) / math.Abs(den[lo])
	scale := func(c, t []float64) []float64 {
		out := make([]float64, len(c))
		for k, v := range c {
			out[k] = at(t, k)/math.Abs(den[lo]) + math.Abs(v/den[lo])*rel
		}
		return out
	}
	n, d := scale(num, tn), scale(den, td)
	d[lo] = 0 // normalised to exactly 1; its precision is in the others
	return n, d
}

// lowestNonZero is the index of the first non-zero entry of c, -1 when
// there is none.
func lowestNonZero(c []float64) int {
	for k, v := range c {
		if v != 0 {
			return k
		}
	}
	return -1
}

// worstRel is the largest relative precision t_k/|c_k| of a list.
func worstRel(c, t []float64) float64 {
	w := 0.0
	for k, v := range c {
		if v != 0 {
			w = math.Max(w, at(t, k)/math.Abs(v))
		}
	}
	return w
}

// scaledTol gives every coefficient of c the relative precision rel (for
// coefficients rebuilt from roots after a cancellation).
func scaledTol(c []float64, rel float64) []float64 {
	out := make([]float64, len(c))
	for k, v := range c {
		out[k] = math.Abs(v) * rel
	}
	return out
}

// at is p[k], 0 past its end.
func at(p []float64, k int) float64 {
	if k < len(p) {
		return p[k]
	}
	return 0
}

// compareCoefs builds the rows of one side. tol is the written precision
// of y (absolute, normalised).
func compareCoefs(side string, c, y, tol []float64, w0, relTol float64) []CoefRow {
	n := max(len(c), len(y))
	largest := 0.0
	for k := range n {
		largest = math.Max(largest, math.Max(math.Abs(at(c, k)), math.Abs(at(y, k)))*math.Pow(w0, float64(k)))
	}
	negligible := func(v float64, k int) bool {
		return math.Abs(v)*math.Pow(w0, float64(k)) <= zeroTol*largest
	}
	rows := make([]CoefRow, 0, n)
	for k := range n {
		r := CoefRow{Side: side, Power: k, Circuit: at(c, k), Yours: at(y, k), Precision: at(tol, k)}
		if r.Circuit != 0 {
			r.Ratio = r.Yours / r.Circuit
		}
		// Equal within the tolerance and the written precision agrees
		// whatever the size of the term; only a term that is not equal
		// is called missing or extra, and only when it is negligible on
		// one side with s scaled by w0.
		cz, yz := negligible(r.Circuit, k), negligible(r.Yours, k)
		switch {
		case cz && yz:
			r.Status = CoefAgrees
		case math.Abs(r.Yours-r.Circuit) <= relTol*math.Max(math.Abs(r.Yours), math.Abs(r.Circuit))+r.Precision:
			r.Status = CoefAgrees
		case cz:
			r.Status = CoefExtra
		case yz:
			r.Status = CoefMissing
		default:
			r.Status = CoefDiffers
		}
		rows = append(rows, r)
	}
	return rows
}

// cancelCommon removes zero-pole pairs closer than relTol·max(|p|, w0)
// and returns the common roots and the remaining zeros and poles.
func cancelCommon(zeros, poles []complex128, w0, relTol float64) (common, zs, ps []complex128) {
	ps = append([]complex128(nil), poles...)
	for _, z := range zeros {
		j := -1
		for i, p := range ps {
			if cmplx.Abs(z-p) <= relTol*math.Max(cmplx.Abs(p), w0) {
				j = i
				break
			}
		}
		if j < 0 {
			zs = append(zs, z)
			continue
		}
		common = append(common, ps[j])
		ps = append(ps[:j], ps[j+1:]...)
	}
	return common, zs, ps
}

// pairRoots matches circuit roots with yours, globally nearest first.
func pairRoots(c, y []complex128) []RootMatch {
	type cand struct {
		i, j int
		d    float64
	}
	var cs []cand
	for i := range c {
		for j := range y {
			cs = append(cs, cand{i, j, cmplx.Abs(c[i] - y[j])})
		}
	}
	sort.SliceStable(cs, func(a, b int) bool { return cs[a].d < cs[b].d })
	ci, yi := map[int]bool{}, map[int]bool{}
	var out []RootMatch
	for _, k := range cs {
		if ci[k.i] || yi[k.j] {
			continue
		}
		ci[k.i], yi[k.j] = true, true
		rel := k.d
		if a := cmplx.Abs(c[k.i]); a != 0 {
			rel /= a
		}
		out = append(out, RootMatch{Circuit: plain(c[k.i]), Yours: plain(y[k.j]), RelDiff: rel})
	}
	for i := range c {
		if !ci[i] {
			out = append(out, RootMatch{Circuit: plain(c[i]), RelDiff: math.Inf(1)})
		}
	}
	for j := range y {
		if !yi[j] {
			out = append(out, RootMatch{Yours: plain(y[j]), RelDiff: math.Inf(1)})
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return rootKey(out[a]) < rootKey(out[b]) })
	return out
}

func rootKey(p RootMatch) float64 {
	r := p.Circuit
	if r == nil {
		r = p.Yours
	}
	return cmplx.Abs(*r)
}

func plain(z complex128) *complex128 { return &z }

func plainRoots(zs []complex128) []complex128 {
	var out []complex128
	for _, z := range zs {
		out = append(out, *plain(z))
	}
	return out
}

// sweep fills the range and the largest response differences, and
// whether any point exceeds its tolerance plus the allowance of the
// written precision tn, td of yours (first order: the relative error of
// H_yours is at most Σ tn_k·ω^k/|N(jω)| + Σ td_k·ω^k/|D(jω)|).
func (res *CheckResult) sweep(cn, cd, yn, yd, tn, td []float64, roots []complex128, opt CompareOptions) {
	from, to := opt.FromHz, opt.ToHz
	if from <= 0 || to <= from {
		lo, hi := math.Inf(1), 0.0
		for _, r := range roots {
			if a := cmplx.Abs(r) / (2 * math.Pi); a > 0 && !math.IsNaN(a) && !math.IsInf(a, 0) {
				lo, hi = math.Min(lo, a), math.Max(hi, a)
			}
		}
		if hi == 0 {
			lo, hi = 100, 1e4 // 1 Hz .. 1 MHz after the two decades
		}
		from, to = lo/100, hi*100
	}
	res.FromHz, res.ToHz = from, to
	n := int(math.Ceil(math.Log10(to/from)*float64(opt.PointsPerDecade))) + 1
	for i := 0; i < n; i++ {
		f := from * math.Pow(to/from, float64(i)/float64(max(n-1, 1)))
		s := complex(0, 2*math.Pi*f)
		hc := transfer.Horner(cn, s) / transfer.Horner(cd, s)
		hy := transfer.Horner(yn, s) / transfer.Horner(yd, s)
		q := hy / hc
		if hc == 0 || hy == 0 || cmplx.IsInf(q) || cmplx.IsNaN(q) || q == 0 {
			continue
		}
		w := 2 * math.Pi * f
		bound := spread(tn, w)/cmplx.Abs(transfer.Horner(yn, s)) + spread(td, w)/cmplx.Abs(transfer.Horner(yd, s))
		if bound >= 1 {
			// Beside a zero of yours the digits written do not fix H
			// at all: the point cannot be judged.
			continue
		}
		// |q| lies within 1 ± bound and arg q within asin(bound).
		allowDB := -20 * math.Log10(1-bound)
		allowDeg := math.Asin(bound) * 180 / math.Pi
		db := 20 * math.Log10(cmplx.Abs(q))
		if math.Abs(db) > math.Abs(res.MaxMagDiffDB) {
			res.MaxMagDiffDB, res.MaxMagDiffHz, res.MagAllowanceDB = db, f, allowDB
		}
		deg := cmplx.Phase(q) * 180 / math.Pi
		if math.Abs(deg) > math.Abs(res.MaxPhaseDiffDeg) {
			res.MaxPhaseDiffDeg, res.MaxPhaseDiffHz, res.PhaseAllowanceDeg = deg, f, allowDeg
		}
		if math.Abs(db) > opt.MagTolDB+allowDB || math.Abs(deg) > opt.PhaseTolDeg+allowDeg {
			res.responsesDiffer = true
		}
	}
}

// spread is Σ t_k·ω^k, the largest change of a polynomial on |s| = ω
// when each coefficient moves by at most t_k.
func spread(t []float64, w float64) float64 {
	sum := 0.0
	for k, v := range t {
		if v != 0 {
			sum += v * math.Pow(w, float64(k))
		}
	}
	return sum
}
