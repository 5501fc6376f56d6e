package analysis_test

// Reference check of nodal's numeric pipeline on the eleven circuits of
// testdata/reference: netlist.Load → mna.Build → transfer.Extract / Sweep /
// Step / Impulse against the goldens in testdata/reference/golden/*.json.
//
// Source of every expected number: testdata/reference/gen_reference.py
// (Debian python3-sympy 1.11.1 and python3-scipy 1.10.1; versions in each
// golden's "generator" field), which solves one hand-written nodal
// formulation per circuit in exact rational arithmetic (sympy) — it shares
// no code with nodal. The fields used and who computed them:
//
//	num, den, cancelled, poles, zeros, gain_dc   sympy (exact, roots by nroots at 30 digits)
//	freq                                         scipy.signal.freqs (checked there against mpmath, 1e-9)
//	step, impulse                                scipy.signal.step / scipy.signal.impulse
//	                                             (checked there against a 50-digit matrix exponential;
//	                                             the achieved difference is stored in *_check_max_abs_diff)
//
// Tolerances follow testdata/reference/README.md ("Suggested tolerances").

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"nodal/analysis/internal/reference"
	"sort"
	"testing"

	"nodal/analysis/response"
	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// refDir is the reference directory relative to this package.
const refDir = "../testdata/reference"

// Tolerances of the reference comparison. Each is relative unless noted.
const (
	// refCoefTol bounds each coefficient difference in the ω0-scaled
	// metric of coefDiffs (README: relative 1e-10 per coefficient).
	refCoefTol = 1e-10
	// refRootTol bounds |p_nodal − p_ref|/|p_ref| for a simple root
	// (README: relative 1e-8).
	refRootTol = 1e-8
	// refRepeatedRootTol bounds each member of a repeated root. A root of
	// multiplicity m of a polynomial whose coefficients carry a relative
	// error δ moves by about δ^(1/m)·|p|: for a double root and δ ≈ ε =
	// 2.2e-16 that is √ε ≈ 1.5e-8, above refRootTol, so a double pole is
	// only determined to ~1e-8 in float64 whatever the algorithm
	// (Wilkinson, Rounding Errors in Algebraic Processes, on multiple
	// roots; from memory). 1e-6 leaves room for that split; the mean of the
	// cluster (a symmetric function, as well conditioned as the
	// coefficients) is still held to refRootTol.
	refRepeatedRootTol = 1e-6
	// refMagTol bounds |Δ|H||/|H| (README: 1e-9); refMagDBTol is the same
	// bound in dB: 20·log10(1+1e-9) ≈ 8.7e-9 dB.
	refMagTol   = 1e-9
	refMagDBTol = 1e-8
	// refPhaseTolDeg bounds the phase difference modulo 360° (README: 1e-7°).
	refPhaseTolDeg = 1e-7
	// refTimeMargin is added, relative to the largest |y| of the golden
	// list, to the golden's own achieved accuracy (*_check_max_abs_diff):
	// README suggests absolute 1e-9 of the largest |y|.
	refTimeMargin = 1e-9
)

// refRoot is a root in rad/s as the goldens write it.
type refRoot struct{ Re, Im float64 }

func (r refRoot) c() complex128 { return complex(r.Re, r.Im) }

// refPoint is one time sample of a golden.
type refPoint struct {
	TS float64 `json:"t_s"`
	Y  float64 `json:"y"`
}

// refFreq is one frequency point of a golden (Hz, ratio, dB, degrees).
type refFreq struct {
	FreqHz   float64 `json:"freq_hz"`
	Mag      float64 `json:"mag"`
	MagDB    float64 `json:"mag_db"`
	PhaseDeg float64 `json:"phase_deg"`
}

// refGolden is one golden file of testdata/reference/golden (schema in
// testdata/reference/README.md).
type refGolden struct {
	Circuit   string `json:"circuit"`
	Input     string `json:"input"`
	Output    string `json:"output"`
	Generator string `json:"generator"`
	Order     int    `json:"order"`
	Symbolic  struct {
		Num []string `json:"num"`
		Den []string `json:"den"`
	} `json:"symbolic"`
	Symbols      map[string]string  `json:"symbols"`
	Derived      map[string]string  `json:"derived"`
	Values       map[string]float64 `json:"values"`
	Num          []float64          `json:"num"`
	Den          []float64          `json:"den"`
	Cancelled    []refRoot          `json:"cancelled"`
	Poles        []refRoot          `json:"poles"`
	Zeros        []refRoot          `json:"zeros"`
	GainDC       *float64           `json:"gain_dc"`
	Freq         []refFreq          `json:"freq"`
	Step         []refPoint         `json:"step"`
	StepCheck    float64            `json:"step_check_max_abs_diff"`
	Impulse      []refPoint         `json:"impulse"` // nil when the golden has null
	ImpulseCheck float64            `json:"impulse_check_max_abs_diff"`
	ImpulseNote  string             `json:"impulse_note"`
}

// refCase is a golden with its circuit file.
type refCase struct {
	name string
	g    refGolden
	src  []byte
}

// loadRefCases reads every golden and its circuit (see package reference).
func loadRefCases(t *testing.T) []refCase {
	t.Helper()
	all, err := reference.Load(refDir)
	if err != nil {
		t.Fatal(err)
	}
	var cases []refCase
	for _, rc := range all {
		var g refGolden
		if err := json.Unmarshal(rc.Raw, &g); err != nil {
			t.Fatalf("%s: %v", rc.Name, err)
		}
		cases = append(cases, refCase{name: rc.Name, g: g, src: rc.Src})
	}
	return cases
}

// refFinding is one disagreement with a golden; Check names the group
// ("coef", "roots", "cancelled", "freq", "step", "impulse", "dc").
type refFinding struct {
	Check, Msg string
}

// refFindings collects findings and, per check, the worst ratio of an
// error to its tolerance (for the verbose log of margins).
type refFindings struct {
	list  []refFinding
	worst map[string]float64
}

// add records a finding that has no numeric error (a count, an order).
func (fs *refFindings) add(check, format string, args ...any) {
	fs.list = append(fs.list, refFinding{check, fmt.Sprintf(format, args...)})
}

// within records err against tol for check and adds a finding (the message
// formatted, then the error and tolerance) unless err ≤ tol; NaN fails.
func (fs *refFindings) within(check string, err, tol float64, format string, args ...any) {
	if fs.worst == nil {
		fs.worst = map[string]float64{}
	}
	ratio := err / tol
	if tol == 0 && err == 0 {
		ratio = 0
	}
	if old, ok := fs.worst[check]; !ok || math.IsNaN(ratio) || ratio > old {
		fs.worst[check] = ratio
	}
	if !(err <= tol) {
		fs.add(check, "%s: error %.3g > tolerance %.3g", fmt.Sprintf(format, args...), err, tol)
	}
}

// has reports whether some finding belongs to check.
func (fs *refFindings) has(check string) bool {
	for _, f := range fs.list {
		if f.Check == check {
			return true
		}
	}
	return false
}

// refResult is what nodal computes for one reference circuit.
type refResult struct {
	tf      *transfer.TransferFunction
	resp    *response.Response // at the golden's frequencies
	dc      *response.Response // at 0 Hz, the direct MNA solve
	step    *timeresp.TimeResponse
	impulse *timeresp.TimeResponse
}

// runNodal runs the pipeline on c for the golden's input, output, grid and
// time span.
func runNodal(c *netlist.Circuit, g *refGolden) (*refResult, error) {
	sys, err := mna.Build(c, mna.Input{Source: g.Input}, mna.Output{Kind: mna.NodeVoltage, Node: g.Output})
	if err != nil {
		return nil, fmt.Errorf("build: %w", err)
	}
	var r refResult
	if r.tf, err = transfer.Extract(sys); err != nil {
		return nil, fmt.Errorf("extract: %w", err)
	}
	freqs := make([]float64, len(g.Freq))
	for i, p := range g.Freq {
		freqs[i] = p.FreqHz
	}
	ctx := context.Background()
	if r.resp, err = response.Sweep(ctx, sys, freqs, 1); err != nil {
		return nil, fmt.Errorf("sweep: %w", err)
	}
	if r.dc, err = response.Sweep(ctx, sys, []float64{0}, 1); err != nil {
		return nil, fmt.Errorf("sweep at 0 Hz: %w", err)
	}
	opt := timeresp.TimeOptions{UntilS: g.Step[len(g.Step)-1].TS, Points: len(g.Step)}
	if r.step, err = timeresp.Step(r.tf, opt); err != nil {
		return nil, fmt.Errorf("step: %w", err)
	}
	if r.impulse, err = timeresp.Impulse(r.tf, opt); err != nil {
		return nil, fmt.Errorf("impulse: %w", err)
	}
	return &r, nil
}

// compareRef compares nodal's results with the golden and returns every
// disagreement beyond the tolerances above.
func compareRef(r *refResult, g *refGolden) *refFindings {
	fs := &refFindings{}
	w0 := refOmega0(g.Den)

	// (1) Coefficients — sympy, exact rational solution.
	if r.tf.Order() != g.Order {
		fs.add("coef", "order %d, golden %d", r.tf.Order(), g.Order)
	}
	coefDiffs(fs, "num", r.tf.Num, g.Num, w0)
	coefDiffs(fs, "den", r.tf.Den, g.Den, w0)

	// (2) Poles and zeros — sympy nroots at 30 digits, exact multiplicities.
	rootDiffs(fs, "roots", "poles", r.tf.Poles, g.Poles, w0)
	rootDiffs(fs, "roots", "zeros", r.tf.Zeros, g.Zeros, w0)

	// (3) Cancellations — sympy gcd of N and D after substitution.
	rootDiffs(fs, "cancelled", "cancelled", r.tf.Cancelled, g.Cancelled, w0)

	// (4) Frequency response — scipy.signal.freqs.
	freqDiffs(fs, r.resp, g.Freq)

	// (5) Step and impulse — scipy.signal.step / scipy.signal.impulse.
	timeDiffs(fs, "step", r.step, g.Step, g.StepCheck)
	if r.step.Dirac != 0 {
		fs.add("step", "step response has a Dirac term %g", r.step.Dirac)
	}
	if g.Impulse != nil {
		timeDiffs(fs, "impulse", r.impulse, g.Impulse, g.ImpulseCheck)
		if r.impulse.Dirac != 0 {
			fs.add("impulse", "Dirac weight %g for a strictly proper golden H", r.impulse.Dirac)
		}
	} else {
		// Not strictly proper: the golden's impulse_note gives the weight
		// of δ(t), which is H(∞) = num[n]/den[n] of the sympy num/den.
		n := len(g.Den) - 1
		var want float64
		if len(g.Num) == len(g.Den) {
			want = g.Num[n] / g.Den[n]
		}
		fs.within("impulse", math.Abs(r.impulse.Dirac-want), refCoefTol*math.Abs(want),
			"Dirac weight %.17g, golden H(∞) %.17g (%s)", r.impulse.Dirac, want, g.ImpulseNote)
	}

	// (6) DC gain — sympy H(0).
	if g.GainDC == nil {
		if r.tf.Den[0] != 0 {
			fs.add("dc", "golden has a pole at s = 0 but den[0] = %g", r.tf.Den[0])
		}
	} else {
		want := *g.GainDC
		// A golden DC gain of exactly 0 has no relative scale: it is
		// compared on the scale of the response, max|H| over the golden
		// grid (times refCoefTol for Extract's H(0), refMagTol for the
		// direct solve at 0 Hz).
		scale := math.Abs(want)
		for _, p := range g.Freq {
			scale = math.Max(scale, p.Mag)
		}
		if want != 0 {
			scale = math.Abs(want)
		}
		got := r.tf.Eval(0)
		fs.within("dc", cmplx.Abs(got-complex(want, 0)), refCoefTol*scale, "Extract: H(0) = %v, golden %.17g", got, want)
		got = r.dc.H[0]
		fs.within("dc", cmplx.Abs(got-complex(want, 0)), refMagTol*scale, "Sweep at 0 Hz: H = %v, golden %.17g", got, want)
	}
	return fs
}

// refOmega0 is the characteristic frequency of an ascending denominator in
// rad/s: ω0 = (|d_lo|/|d_n|)^(1/(n−lo)) with lo its lowest non-zero power,
// the geometric mean of the pole magnitudes off s = 0. 1 if there is none.
func refOmega0(den []float64) float64 {
	lo := 0
	for lo < len(den) && den[lo] == 0 {
		lo++
	}
	n := len(den) - 1
	if lo >= n {
		return 1
	}
	return math.Pow(math.Abs(den[lo])/math.Abs(den[n]), 1/float64(n-lo))
}

// coefDiffs compares ascending coefficient lists. A non-zero golden
// coefficient a_k is compared relatively, |Δa_k|/|a_k| ≤ refCoefTol
// (README; a relative error is the same whatever the scaling of s). A
// golden exact zero has no relative scale: it is compared on the scale of
// the whole polynomial in s/ω0, with c_k = a_k·ω0^k (so that a 1e-20 s³ term
// of a kHz filter weighs the same as its 1):
//
//	|c_k(nodal)| / max_j |c_j(golden)| ≤ refCoefTol.
//
// Both sides are already normalised to den's lowest non-zero coefficient 1
// (nodal's invariant; the golden's by construction), so no rescaling is done
// and a wrong normalisation shows. A different length is a finding.
// Whether nodal's coefficient is exactly zero where the golden's is, is
// only logged by the caller (it depends on rounding in the product of the
// roots).
func coefDiffs(fs *refFindings, what string, got, want []float64, w0 float64) {
	if len(got) != len(want) {
		fs.add("coef", "%s has %d coefficients %v, golden %d %v", what, len(got), got, len(want), want)
	}
	norm := 0.0
	for k, a := range want {
		norm = math.Max(norm, math.Abs(a)*math.Pow(w0, float64(k)))
	}
	for k := 0; k < max(len(got), len(want)); k++ {
		var a, b float64
		if k < len(got) {
			a = got[k]
		}
		if k < len(want) {
			b = want[k]
		}
		if b != 0 {
			fs.within("coef", math.Abs(a-b)/math.Abs(b), refCoefTol, "%s[%d] = %.17g, golden %.17g (relative)", what, k, a, b)
		} else {
			fs.within("coef", math.Abs(a)*math.Pow(w0, float64(k))/norm, refCoefTol,
				"%s[%d] = %.17g, golden exactly 0 (scaled by ω0^k/max, ω0 = %.6g rad/s)", what, k, a, w0)
		}
	}
}

// rootDiffs matches got and want as multisets: the assignment minimising
// the largest relative distance (all permutations; the goldens have at most
// four roots), distance relative to |want|, or to ω0 for a root at 0. A
// golden root listed m > 1 times (sympy's exact multiplicity) is a cluster:
// each member within refRepeatedRootTol, their mean within refRootTol.
func rootDiffs(fs *refFindings, check, what string, got []complex128, want []refRoot, w0 float64) {
	if len(got) != len(want) {
		fs.add(check, "%s: nodal %d %v, golden %d %v", what, len(got), got, len(want), want)
		return
	}
	// Roots at s = 0 are structural (a series capacitor, a coupling): the
	// golden lists them exactly, and nodal promises exact zeros for them
	// (Extract's doc), so their count must agree exactly.
	if ng, nw := countOrigin(got), countOrigin(refRoots(want)); ng != nw {
		fs.add("exact", "%s: %d roots exactly at s = 0, golden %d (nodal %v)", what, ng, nw, got)
	}
	ref := func(w complex128) float64 {
		if a := cmplx.Abs(w); a > 0 {
			return a
		}
		return w0
	}
	perm := bestAssignment(got, want, ref)
	// Group equal golden roots.
	type cluster struct {
		w   complex128
		idx []int
	}
	var cl []cluster
	for i, w := range want {
		found := false
		for j := range cl {
			if cl[j].w == w.c() {
				cl[j].idx = append(cl[j].idx, i)
				found = true
			}
		}
		if !found {
			cl = append(cl, cluster{w.c(), []int{i}})
		}
	}
	for _, c := range cl {
		tol := refRootTol
		if len(c.idx) > 1 {
			tol = refRepeatedRootTol
		}
		var mean complex128
		for _, i := range c.idx {
			g := got[perm[i]]
			mean += g
			fs.within(check, cmplx.Abs(g-c.w)/ref(c.w), tol, "%s: golden %v (multiplicity %d): nodal %v (relative)", what, c.w, len(c.idx), g)
		}
		mean /= complex(float64(len(c.idx)), 0)
		if len(c.idx) > 1 {
			fs.within(check, cmplx.Abs(mean-c.w)/ref(c.w), refRootTol, "%s: golden %v (multiplicity %d): nodal cluster mean %v (relative)", what, c.w, len(c.idx), mean)
		}
	}
}

// countOrigin counts the roots exactly at s = 0.
func countOrigin(roots []complex128) int {
	n := 0
	for _, r := range roots {
		if r == 0 {
			n++
		}
	}
	return n
}

// refRoots converts golden roots to complex128.
func refRoots(rs []refRoot) []complex128 {
	out := make([]complex128, len(rs))
	for i, r := range rs {
		out[i] = r.c()
	}
	return out
}

// bestAssignment returns perm with want[i] ↔ got[perm[i]] minimising the
// largest relative distance, by trying every permutation.
func bestAssignment(got []complex128, want []refRoot, ref func(complex128) float64) []int {
	n := len(want)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	best := append([]int(nil), idx...)
	bestCost := math.Inf(1)
	var rec func(k int)
	rec = func(k int) {
		if k == n {
			cost := 0.0
			for i, j := range idx {
				cost = math.Max(cost, cmplx.Abs(got[j]-want[i].c())/ref(want[i].c()))
			}
			if cost < bestCost {
				bestCost = cost
				copy(best, idx)
			}
			return
		}
		for i := k; i < n; i++ {
			idx[k], idx[i] = idx[i], idx[k]
			rec(k + 1)
			idx[k], idx[i] = idx[i], idx[k]
		}
	}
	rec(0)
	return best
}

// freqDiffs compares |H|, dB and phase (modulo 360°) point by point.
func freqDiffs(fs *refFindings, resp *response.Response, want []refFreq) {
	if len(resp.Mag) != len(want) {
		fs.add("freq", "%d points, golden %d", len(resp.Mag), len(want))
		return
	}
	for i, w := range want {
		fs.within("freq", math.Abs(resp.Mag[i]-w.Mag)/w.Mag, refMagTol, "%.6g Hz: |H| = %.17g, golden %.17g (relative)", w.FreqHz, resp.Mag[i], w.Mag)
		fs.within("freq", math.Abs(resp.MagDB[i]-w.MagDB), refMagDBTol, "%.6g Hz: %.12g dB, golden %.12g dB", w.FreqHz, resp.MagDB[i], w.MagDB)
		fs.within("freq", math.Abs(response.WrapDeg(resp.PhaseDeg[i]-w.PhaseDeg)), refPhaseTolDeg,
			"%.6g Hz: phase %.12g°, golden %.12g° (modulo 360°)", w.FreqHz, resp.PhaseDeg[i], w.PhaseDeg)
	}
}

// timeDiffs compares tr.At(t) with the golden samples: absolute tolerance
// the golden's achieved accuracy plus refTimeMargin·max|y|.
func timeDiffs(fs *refFindings, what string, tr *timeresp.TimeResponse, want []refPoint, check float64) {
	tol := timeTol(want, check)
	worst, at := 0.0, 0.0
	for _, p := range want {
		if d := math.Abs(tr.At(p.TS) - p.Y); !(d <= worst) {
			worst, at = d, p.TS
		}
	}
	fs.within(what, worst, tol, "largest |Δy| at t = %.6g s (y = %.12g, golden %.12g; tolerance = golden accuracy %.3g + %g·max|y|)",
		at, tr.At(at), refYAt(want, at), check, refTimeMargin)
}

// timeTol is the absolute tolerance on a golden time response: its achieved
// accuracy check plus refTimeMargin times its largest |y|.
func timeTol(want []refPoint, check float64) float64 {
	peak := 0.0
	for _, p := range want {
		peak = math.Max(peak, math.Abs(p.Y))
	}
	return check + refTimeMargin*peak
}

// refYAt is the golden sample at time t.
func refYAt(ps []refPoint, t float64) float64 {
	i := sort.Search(len(ps), func(i int) bool { return ps[i].TS >= t })
	if i < len(ps) {
		return ps[i].Y
	}
	return math.NaN()
}

// mustRunRef loads the case's circuit, applies slip (if not nil) to it and
// runs nodal on it.
func mustRunRef(t *testing.T, rc *refCase, slip func(c *netlist.Circuit) string) *refResult {
	t.Helper()
	c, err := netlist.Load(rc.g.Circuit, rc.src, nil)
	if err != nil {
		t.Fatal(err)
	}
	if slip != nil {
		t.Logf("slip: %s", slip(c))
	}
	r, err := runNodal(c, &rc.g)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// TestReferenceGoldens runs nodal on every reference circuit and compares
// coefficients, roots, cancellations, frequency response, step and impulse
// samples and DC gain with the goldens of testdata/reference/gen_reference.py
// (sympy + scipy; see the header of this file).
func TestReferenceGoldens(t *testing.T) {
	for _, rc := range loadRefCases(t) {
		t.Run(rc.name, func(t *testing.T) {
			r := mustRunRef(t, &rc, nil)
			fs := compareRef(r, &rc.g)
			for _, f := range fs.list {
				t.Errorf("%s: %s", f.Check, f.Msg)
			}
			if testing.Verbose() {
				t.Logf("worst error/tolerance per check: %v", fs.worst)
				t.Logf("num %v\nden %v", r.tf.Num, r.tf.Den)
			}
		})
	}
}

// perturbFirstPassive multiplies the value of the first resistor,
// capacitor or inductor of c by 1.01 and names it.
func perturbFirstPassive(c *netlist.Circuit) string {
	for i := range c.Parts {
		if k := c.Parts[i].Kind; k == netlist.Resistor || k == netlist.Capacitor || k == netlist.Inductor {
			c.Parts[i].Value *= 1.01
			return c.Parts[i].Name + " +1 %"
		}
	}
	return "no passive part to perturb"
}

// TestReferenceComparisonCanFail is the deliberate-slip check: the same
// comparison must report differences when one part of each circuit is off by
// 1 %, and when a golden number is moved by ten times its tolerance —
// so the checks above demonstrably can fail and are not too loose.
func TestReferenceComparisonCanFail(t *testing.T) {
	for _, rc := range loadRefCases(t) {
		t.Run(rc.name, func(t *testing.T) {
			fs := compareRef(mustRunRef(t, &rc, perturbFirstPassive), &rc.g)
			want := []string{"coef", "roots", "freq", "step"}
			if rc.g.Impulse != nil {
				// Without samples only the Dirac weight H(∞) is compared,
				// which a part slip need not change (twin-T: H(∞) = 1 for
				// any R).
				want = append(want, "impulse")
			}
			if len(rc.g.Cancelled) > 0 {
				// The cancellation is exact only for balanced values.
				want = append(want, "cancelled")
			}
			for _, check := range want {
				if !fs.has(check) {
					t.Errorf("part +1 %%: %q comparison reports no difference", check)
				}
			}

			// The unperturbed result against goldens moved by 10× tolerance.
			r0 := mustRunRef(t, &rc, nil)
			mid := func(n int) int { return n / 2 }
			slips := []struct {
				check string
				move  func(g *refGolden)
			}{
				{"coef", func(g *refGolden) { g.Den[len(g.Den)-1] *= 1 + 10*refCoefTol }},
				{"roots", func(g *refGolden) { g.Poles[0].Re *= 1 + 10*refRepeatedRootTol }},
				{"freq", func(g *refGolden) { g.Freq[mid(len(g.Freq))].Mag *= 1 + 10*refMagTol }},
				{"freq", func(g *refGolden) { g.Freq[mid(len(g.Freq))].PhaseDeg += 10 * refPhaseTolDeg }},
				{"step", func(g *refGolden) { g.Step[mid(len(g.Step))].Y += 10 * timeTol(g.Step, g.StepCheck) }},
				{"impulse", func(g *refGolden) {
					if g.Impulse == nil { // the check is then on the Dirac weight
						g.Num[len(g.Num)-1] *= 1 + 10*refCoefTol
						return
					}
					g.Impulse[mid(len(g.Impulse))].Y += 10 * timeTol(g.Impulse, g.ImpulseCheck)
				}},
				{"dc", func(g *refGolden) {
					if g.GainDC == nil { // a pole at s = 0: claim a finite DC gain instead
						one := 1.0
						g.GainDC = &one
						return
					}
					*g.GainDC += 10 * refMagTol * math.Max(math.Abs(*g.GainDC), 1)
				}},
			}
			if len(rc.g.Cancelled) > 0 {
				slips = append(slips, struct {
					check string
					move  func(g *refGolden)
				}{"cancelled", func(g *refGolden) { g.Cancelled[0].Re *= 1 + 10*refRootTol }})
			}
			for i, s := range slips {
				g := cloneGolden(t, &rc.g)
				s.move(g)
				if !compareRef(r0, g).has(s.check) {
					t.Errorf("slip %d: %q comparison reports no difference", i, s.check)
				}
			}
		})
	}
}

// cloneGolden deep-copies a golden through JSON.
func cloneGolden(t *testing.T, g *refGolden) *refGolden {
	t.Helper()
	raw, err := json.Marshal(g)
	if err != nil {
		t.Fatal(err)
	}
	var c refGolden
	if err := json.Unmarshal(raw, &c); err != nil {
		t.Fatal(err)
	}
	return &c
}
