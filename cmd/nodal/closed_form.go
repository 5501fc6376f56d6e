package main

import (
	"fmt"
	"math"

	"nodal/analysis/signal"
	"nodal/analysis/timeresp"
	"nodal/cmd/nodal/notation"
)

// closedFormText renders a step or impulse response as y(t) = ….
func closedFormText(r *timeresp.TimeResponse) string {
	if r.ClosedFormWithheld != "" {
		return "(not shown: " + r.ClosedFormWithheld + ")"
	}
	return closedForm(r.Dirac, r.Modes)
}

// piece is one signed term of a closed form: coef·body.
type piece struct {
	coef float64 // signed magnitude
	body string  // text after the coefficient, "" for a plain number
}

// closedForm renders y(t) = Dirac·δ(t) + Σ modes, grouped by pole, e.g.
//
//	y(t) = 1 − e^(−t/1ms)
//	y(t) = 1 − (1 + t/1ms)·e^(−t/1ms)
//	y(t) = 1 − 1.155·e^(−t/2ms)·sin(2π·500Hz·t + 60°)
//
// Time constants and frequencies use engineering notation, coefficients
// 4 significant digits; terms below 1e-9 of the largest are left out of the
// text (not out of At). A pair is written as M·sin(ωt + φ) with φ in
// (−90°, 90°]. Ramps from poles at s = 0 are written ±(t/T)^k.
func closedForm(dirac float64, ms []timeresp.Mode) string {
	var pieces []piece
	if dirac != 0 {
		pieces = append(pieces, piece{dirac, "δ(t)"})
	}
	// the constant and ramps (poles at s = 0) first, then by pole
	ordered := make([]timeresp.Mode, 0, len(ms))
	for _, m := range ms {
		if m.SigmaPerS == 0 && m.OmegaRad == 0 {
			ordered = append(ordered, m)
		}
	}
	for _, m := range ms {
		if m.SigmaPerS != 0 || m.OmegaRad != 0 {
			ordered = append(ordered, m)
		}
	}
	ms = ordered
	for i := 0; i < len(ms); {
		j := i
		for j < len(ms) && ms[j].SigmaPerS == ms[i].SigmaPerS && ms[j].OmegaRad == ms[i].OmegaRad {
			j++
		}
		pieces = append(pieces, groupPieces(ms[i:j])...)
		i = j
	}
	big := 0.0
	for _, p := range pieces {
		big = math.Max(big, math.Abs(p.coef))
	}
	var b []byte
	for _, p := range pieces {
		if p.coef == 0 || math.Abs(p.coef) < 1e-9*big {
			continue
		}
		neg := p.coef < 0
		switch {
		case len(b) == 0 && neg:
			b = append(b, "−"...)
		case neg:
			b = append(b, " − "...)
		case len(b) > 0:
			b = append(b, " + "...)
		}
		num := signal.FormatNumber(math.Abs(p.coef))
		switch {
		case p.body == "":
			b = append(b, num...)
		case num == "1":
			b = append(b, p.body...)
		default:
			b = append(b, num+"·"+p.body...)
		}
	}
	if len(b) == 0 {
		return "y(t) = 0"
	}
	return "y(t) = " + string(b)
}

// groupPieces renders the modes of one pole (all with the same σ and ω,
// ascending Power) as signed pieces.
func groupPieces(ms []timeresp.Mode) []piece {
	sigma, omega := ms[0].SigmaPerS, ms[0].OmegaRad
	var out []piece
	if sigma == 0 && omega == 0 {
		for _, m := range ms {
			if m.Power == 0 {
				out = append(out, piece{m.Cos, ""})
				continue
			}
			if m.Cos == 0 {
				continue // no such term: 0^(−1/k) would print t/+Inf
			}
			T := math.Pow(math.Abs(m.Cos), -1/float64(m.Power))
			out = append(out, piece{math.Copysign(1, m.Cos), powerText("t/"+notation.Compact(T, "s"), m.Power)})
		}
		return out
	}
	tau := 0.0
	exp := ""
	if sigma != 0 {
		tau = 1 / math.Abs(sigma)
		if sigma < 0 {
			exp = "e^(−t/" + notation.Compact(tau, "s") + ")"
		} else {
			exp = "e^(t/" + notation.Compact(tau, "s") + ")"
		}
	}
	// scale of t^k: (t/τ)^k for a decaying or growing pole, t^k on the axis
	scaled := func(k int) (float64, string) {
		if k == 0 {
			return 1, ""
		}
		if tau == 0 {
			return 1, powerText("t", k)
		}
		return math.Pow(tau, float64(k)), powerText("t/"+notation.Compact(tau, "s"), k)
	}
	join := func(parts ...string) string {
		s := ""
		for _, p := range parts {
			if p == "" {
				continue
			}
			if s != "" {
				s += "·"
			}
			s += p
		}
		return s
	}
	if omega == 0 {
		if len(ms) == 1 {
			return []piece{{ms[0].Cos, exp}}
		}
		// (b0 + b1·t/τ + …)·e^(σt), the sign of the first term factored out
		lead := 0.0
		for _, m := range ms {
			if m.Cos != 0 {
				lead = m.Cos
				break
			}
		}
		sign := math.Copysign(1, lead)
		poly := ""
		for _, m := range ms {
			f, txt := scaled(m.Power)
			c := sign * m.Cos * f
			if c == 0 {
				continue
			}
			num := signal.FormatNumber(math.Abs(c))
			term := join(num, txt)
			if num == "1" && txt != "" {
				term = txt
			}
			switch {
			case poly == "" && c < 0:
				poly = "−" + term
			case poly == "":
				poly = term
			case c < 0:
				poly += " − " + term
			default:
				poly += " + " + term
			}
		}
		return []piece{{sign, join("("+poly+")", exp)}}
	}
	freq := "sin(2π·" + notation.Compact(omega/(2*math.Pi), "Hz") + "·t"
	for _, m := range ms {
		f, txt := scaled(m.Power)
		amp := math.Hypot(m.Cos, m.Sin) * f
		phi := math.Atan2(m.Cos, m.Sin) * 180 / math.Pi
		if phi > 90 {
			amp, phi = -amp, phi-180
		} else if phi <= -90 {
			amp, phi = -amp, phi+180
		}
		ph := ")"
		if p := fmt.Sprintf("%.1f", math.Abs(phi)); p != "0.0" {
			if phi < 0 {
				ph = " − " + p + "°)"
			} else {
				ph = " + " + p + "°)"
			}
		}
		if m.Power == 1 && tau != 0 {
			txt = "(" + txt + ")"
		}
		out = append(out, piece{amp, join(txt, exp, freq+ph)})
	}
	return out
}

// powerText writes base^k as "base" (k = 1) or "(base)²" etc.
func powerText(base string, k int) string {
	if k == 1 {
		return base
	}
	if base != "t" {
		base = "(" + base + ")"
	}
	return base + notation.Superscript(k)
}
