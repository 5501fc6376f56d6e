package steady

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

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
	FreqHz       float64
	OmegaRad     float64
	Function     string
	InAmplitude  float64
	InPhaseDeg   float64
	Gain         *float64
	ShiftDeg     *float64
	OutAmplitude *float64
	OutPhaseDeg  *float64
	Unbounded    bool
	// Input is the drive term as parsed, kept for printing in its style.
	Input signal.Term
}

// Steady is the sinusoidal steady state of y for a drive u(t) = DC + Σ
// terms, by superposition. DCOut = H(0)·DCIn; DCOut is nil and DCUnbounded
// set when H has a pole at s = 0 and DCIn ≠ 0.
type Steady struct {
	Terms       []SteadyTerm
	DCIn        float64
	DCOut       *float64
	DCUnbounded bool
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
