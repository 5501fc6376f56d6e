package main

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"nodal/analysis/check"
)

// diagnosis says in words what differs between a hand derivation and the
// circuit, and what slip may explain it, from the comparison res.
func diagnosis(res *check.CheckResult) []string {
	opt := res.Options
	var out []string
	if len(res.YoursCancelled) > 0 {
		out = append(out, fmt.Sprintf(
			"yours has %d common factor(s) in numerator and denominator (at s = %s); cancelled before comparing", len(res.YoursCancelled), rootList(res.YoursCancelled)))
	}
	if len(res.CircuitCancelled) > 0 {
		out = append(out, fmt.Sprintf(
			"the circuit has a pole/zero cancellation at s = %s (removed from its H(s)): its natural order is higher than its H(s) shows", rootList(res.CircuitCancelled)))
	}
	for _, side := range []string{"num", "den"} {
		var rows []check.CoefRow
		for _, r := range res.Coefficients {
			if r.Side == side {
				rows = append(rows, r)
			}
		}
		out = append(out, diagnoseSide(side, rows, opt)...)
	}
	if res.ResponsesDiffer() && res.CoefficientsAgree {
		out = append(out, fmt.Sprintf(
			"the coefficients agree within %g but the responses differ by %.3g dB / %.3g° (an ill-conditioned, sharply resonant H?)", opt.RelTol, res.MaxMagDiffDB, res.MaxPhaseDiffDeg))
	}
	if res.Agrees && opt.BandOnly {
		out = append(out, fmt.Sprintf(
			"the responses agree over the band: they differ by at most %.2g dB and %.2g°", math.Abs(res.MaxMagDiffDB), math.Abs(res.MaxPhaseDiffDeg)))
	} else if res.Agrees {
		within := fmt.Sprintf("within %g", opt.RelTol)
		for _, r := range res.Coefficients {
			if r.Precision != 0 {
				within = fmt.Sprintf("to the precision of the digits you wrote (and within %g)", opt.RelTol)
				break
			}
		}
		out = append(out, fmt.Sprintf(
			"every coefficient agrees %s after normalisation; the responses differ by at most %.2g dB and %.2g°", within, math.Abs(res.MaxMagDiffDB), math.Abs(res.MaxPhaseDiffDeg)))
	}
	return out
}

// diagnoseSide explains the rows of one side that do not agree.
func diagnoseSide(side string, rows []check.CoefRow, opt check.CompareOptions) []string {
	var out []string
	var missing, extra, differs []check.CoefRow
	for _, r := range rows {
		switch r.Status {
		case check.CoefMissing:
			missing = append(missing, r)
		case check.CoefExtra:
			extra = append(extra, r)
		case check.CoefDiffers:
			differs = append(differs, r)
		}
	}
	dc, dy := lastPresent(rows, false), lastPresent(rows, true)
	if dc != dy {
		what := "numerator"
		if side == "den" {
			what = "denominator"
		}
		out = append(out, fmt.Sprintf("%s order: yours is %d, the circuit's %d", what, dy, dc))
	}
	// A coefficient moved to another power: a derivative of the wrong order.
	used := map[int]bool{}
	for _, m := range missing {
		for _, e := range extra {
			if !used[e.Power] && math.Abs(e.Yours-m.Circuit) <= opt.RelTol*math.Abs(m.Circuit) {
				used[e.Power], used[-1-m.Power] = true, true
				out = append(out, fmt.Sprintf("%s: yours has the circuit's s^%d coefficient at s^%d — a derivative of the wrong order (%s where %s belongs)?",
					side, m.Power, e.Power, primes(e.Power), primes(m.Power)))
				break
			}
		}
	}
	for _, m := range missing {
		if !used[-1-m.Power] {
			out = append(out, fmt.Sprintf("%s s^%d: the circuit has %.4g, yours has none — a missing term?", side, m.Power, m.Circuit))
		}
	}
	for _, e := range extra {
		if !used[e.Power] {
			out = append(out, fmt.Sprintf("%s s^%d: yours has %.4g, the circuit has no such term — an extra term?", side, e.Power, e.Yours))
		}
	}
	// One factor throughout a numerator is a gain slip.
	if side == "num" && len(differs) > 1 && len(differs) == countPresent(rows) {
		same := true
		for _, d := range differs[1:] {
			same = same && math.Abs(d.Ratio-differs[0].Ratio) <= opt.RelTol*math.Abs(differs[0].Ratio)
		}
		if same {
			return append(out, fmt.Sprintf("num: every coefficient of yours is %s the circuit's — the gain is off%s",
				times(differs[0].Ratio), factorHint(differs[0].Ratio, opt)))
		}
	}
	for _, d := range differs {
		out = append(out, fmt.Sprintf("%s s^%d: yours is %s the circuit's%s", side, d.Power, times(d.Ratio), factorHint(d.Ratio, opt)))
	}
	return out
}

// lastPresent is the highest power whose coefficient is present on the
// circuit's side (yours false) or on yours.
func lastPresent(rows []check.CoefRow, yours bool) int {
	last := 0
	for _, r := range rows {
		present := r.Status == check.CoefAgrees && r.Circuit != 0 || r.Status == check.CoefDiffers ||
			(yours && r.Status == check.CoefExtra) || (!yours && r.Status == check.CoefMissing)
		if present {
			last = r.Power
		}
	}
	return last
}

func countPresent(rows []check.CoefRow) int {
	n := 0
	for _, r := range rows {
		if r.Status != check.CoefAgrees || r.Circuit != 0 {
			n++
		}
	}
	return n
}

// primes writes the k-th derivative of y for messages.
func primes(k int) string {
	switch k {
	case 0:
		return "y"
	case 1, 2, 3:
		return "y" + "'''"[:k]
	}
	return fmt.Sprintf("y^(%d)", k)
}

// times formats a ratio as "2.000×", with more decimals when a ratio
// other than 1 would print as 1.000× (it only ever stands beside a
// coefficient that differs).
func times(r float64) string {
	if a := math.Abs(r); a >= 1e-3 && a < 1e4 {
		for decimals := 3; decimals < 16; decimals++ {
			t := strconv.FormatFloat(r, 'f', decimals, 64)
			if v, _ := strconv.ParseFloat(t, 64); math.Abs(v) != 1 || math.Abs(r) == 1 {
				return t + "×"
			}
		}
		return strconv.FormatFloat(r, 'g', -1, 64) + "×"
	}
	return fmt.Sprintf("%.3e×", r)
}

// factorHint names a slip that explains the ratio r, or returns "".
func factorHint(r float64, opt check.CompareOptions) string {
	near := func(x float64) bool { return math.Abs(r-x) <= 1e-6*math.Abs(x) }
	switch {
	case near(-1):
		return " — a sign slip?"
	case near(2*math.Pi) || near(1/(2*math.Pi)):
		return " — Hz and rad/s mixed (a factor 2π)?"
	}
	for n := 2.0; n <= 10; n++ {
		if near(n) || near(1/n) || near(-n) || near(-1/n) {
			return fmt.Sprintf(" — a missing or extra factor %g?", n)
		}
	}
	for _, p := range []float64{1e3, 1e6, 1e9, 1e12} {
		if near(p) || near(1/p) {
			return fmt.Sprintf(" — an SI prefix slip (a factor %g)?", p)
		}
	}
	names := make([]string, 0, len(opt.Values))
	for n := range opt.Values {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, a := range names {
		for _, b := range names {
			va, vb := opt.Values[a], opt.Values[b]
			if a != b && va != vb && vb != 0 && near(va/vb) {
				return fmt.Sprintf(" = %s/%s — %s written where %s belongs?", a, b, a, b)
			}
		}
	}
	for _, a := range names {
		if v := opt.Values[a]; v != 0 && v != 1 {
			if near(v) {
				return fmt.Sprintf(" = %s — an extra factor %s?", a, a)
			}
			if near(1 / v) {
				return fmt.Sprintf(" = 1/%s — a missing factor %s?", a, a)
			}
		}
	}
	return ""
}

// rootList writes roots for a diagnosis, rad/s.
func rootList(zs []complex128) string {
	s := ""
	for i, z := range zs {
		if i > 0 {
			s += ", "
		}
		if imag(z) == 0 {
			s += fmt.Sprintf("%.4g", real(z))
		} else {
			s += fmt.Sprintf("%.4g%+.4gj", real(z), imag(z))
		}
	}
	return s + " rad/s"
}
