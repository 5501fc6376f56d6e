package steady

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"nodal/analysis/signal"
)

// SteadyTerm is the sinusoidal steady-state response to one term
// A·f(ωt + φ) of a drive: y = A·|H(jω)|·f(ωt + φ + arg H(jω)).
//
// Gain, ShiftDeg, OutAmplitude and OutPhaseDeg are nil when Unbounded: the
// term drives a pole on the jω axis, so no steady state exists. InAmplitude
// and OutAmplitude keep the sign written in the drive (-sin(...) gives a
// negative amplitude). Phases are in degrees; OutPhaseDeg is wrapped to
// (−180, 180]. When Gain is 0 (a zero of H at ω) ShiftDeg is 0 by convention.
type SteadyTerm struct {
	FreqHz       float64  `json:"freq_hz"`
	OmegaRad     float64  `json:"omega"`
	Function     string   `json:"function"`
	InAmplitude  float64  `json:"in_amplitude"`
	InPhaseDeg   float64  `json:"in_phase_deg"`
	Gain         *float64 `json:"gain"`
	ShiftDeg     *float64 `json:"shift_deg"`
	OutAmplitude *float64 `json:"out_amplitude"`
	OutPhaseDeg  *float64 `json:"out_phase_deg"`
	Unbounded    bool     `json:"unbounded,omitempty"`
	// Input is the drive term as parsed, kept for printing in its style.
	Input signal.Term `json:"-"`
}

// Steady is the sinusoidal steady state of y for a drive u(t) = DC + Σ
// terms, by superposition. DCOut = H(0)·DCIn; DCOut is nil and DCUnbounded
// set when H has a pole at s = 0 and DCIn ≠ 0.
type Steady struct {
	Terms       []SteadyTerm `json:"terms"`
	DCIn        float64      `json:"dc_in"`
	DCOut       *float64     `json:"dc_out"`
	DCUnbounded bool         `json:"dc_unbounded,omitempty"`
}

// Unbounded reports whether any part of the steady state is unbounded.
func (st *Steady) Unbounded() bool {
	if st.DCUnbounded {
		return true
	}
	for _, t := range st.Terms {
		if t.Unbounded {
			return true
		}
	}
	return false
}

// poleProbeRel and poleRatio decide "at a pole" for an evaluator that only
// returns finite numbers near a pole: |H(jω)| is compared with |H| at
// jω·(1+poleProbeRel). Near a pole p, |H| ∝ 1/|s−p|, so a ratio above
// poleRatio means |jω − p| < about poleProbeRel/poleRatio·ω = 1e-10·ω —
// closer than any physical resonance, i.e. the pole itself up to rounding.
const (
	poleProbeRel = 1e-4
	poleRatio    = 1e6
)

// finiteComplex reports whether v has no Inf or NaN part.
func finiteComplex(v complex128) bool { return !cmplx.IsInf(v) && !cmplx.IsNaN(v) }

// atPole evaluates h at jω and says whether jω is (numerically) a pole.
func atPole(h func(s complex128) complex128, omega float64) (complex128, bool) {
	v := h(complex(0, omega))
	if !finiteComplex(v) {
		return v, true
	}
	if omega == 0 {
		return v, false
	}
	probe := h(complex(0, omega*(1+poleProbeRel)))
	return v, finiteComplex(probe) && cmplx.Abs(v) > poleRatio*cmplx.Abs(probe)
}

// SteadyState returns the sinusoidal steady state of y = H·u for the drive
// sig. h evaluates H(s) at complex s in rad/s; it may be
// (*TransferFunction).Eval or a direct MNA solve. A term whose ω is
// (numerically) a pole on the jω axis is marked Unbounded.
func SteadyState(h func(s complex128) complex128, sig *signal.Signal) (*Steady, error) {
	if h == nil || sig == nil {
		return nil, errors.New("steady state: nil transfer function or signal")
	}
	st := &Steady{DCIn: sig.DC}
	if sig.DC != 0 {
		v := h(0)
		if finiteComplex(v) {
			out := real(v) * sig.DC
			st.DCOut = &out
		} else {
			st.DCUnbounded = true
		}
	} else {
		zero := 0.0
		st.DCOut = &zero
	}
	for _, term := range sig.Terms {
		if !(term.OmegaRad > 0) {
			return nil, fmt.Errorf("steady state: term at %s: angular frequency %g rad/s is not positive", term.Pos, term.OmegaRad)
		}
		r := SteadyTerm{
			FreqHz:      term.FreqHz(),
			OmegaRad:    term.OmegaRad,
			Function:    term.Func,
			InAmplitude: term.Amplitude,
			InPhaseDeg:  term.PhaseRad * 180 / math.Pi,
			Input:       term,
		}
		v, pole := atPole(h, term.OmegaRad)
		if pole {
			r.Unbounded = true
			st.Terms = append(st.Terms, r)
			continue
		}
		gain := cmplx.Abs(v)
		shift := 0.0
		if gain != 0 {
			shift = cmplx.Phase(v) * 180 / math.Pi
		}
		outAmp := term.Amplitude * gain
		outPh := wrapDeg(r.InPhaseDeg + shift)
		r.Gain, r.ShiftDeg, r.OutAmplitude, r.OutPhaseDeg = &gain, &shift, &outAmp, &outPh
		st.Terms = append(st.Terms, r)
	}
	return st, nil
}

// wrapDeg maps an angle in degrees to (−180, 180].
func wrapDeg(d float64) float64 {
	d = math.Mod(d, 360)
	if d > 180 {
		d -= 360
	}
	if d <= -180 {
		d += 360
	}
	return d
}

// FormatSteady renders the steady-state output as a closed form in the
// style of the drive, e.g.
//
//	y(t) = 0.5657*sin(2*pi*400*t - 45.0°) + 2
//
// Amplitudes have 4 significant digits, phases one decimal in degrees; the
// text parses again with signal.Parse. An unbounded part is named instead
// of given a number:
//
//	y(t) unbounded: sin(2*pi*50*t) drives a pole on the jω axis
func FormatSteady(st *Steady) string {
	var bad []string
	for _, t := range st.Terms {
		if t.Unbounded {
			bad = append(bad, t.Input.Func+"("+t.Input.OmegaText+")")
		}
	}
	if st.DCUnbounded {
		bad = append(bad, "the constant")
	}
	if len(bad) > 0 {
		verb := "drives a pole"
		if len(bad) > 1 {
			verb = "drive poles"
		}
		return "y(t) unbounded: " + strings.Join(bad, ", ") + " " + verb + " on the jω axis"
	}
	var b strings.Builder
	for _, t := range st.Terms {
		if *t.OutAmplitude == 0 {
			continue
		}
		signal.WriteTerm(&b, b.Len() == 0, t.Function, *t.OutAmplitude, t.Input.OmegaText, *t.OutPhaseDeg)
	}
	if *st.DCOut != 0 || b.Len() == 0 {
		signal.WriteConstant(&b, b.Len() == 0, *st.DCOut)
	}
	return "y(t) = " + b.String()
}
