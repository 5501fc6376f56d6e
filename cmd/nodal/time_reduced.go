package main

import (
	"context"
	"errors"
	"fmt"
	"io"

	"nodal/analysis/reduce"
	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
	"nodal/analysis/transient"
	"nodal/cmd/nodal/notation"
	"nodal/mna"
)

// reducedModelFor is the reduced model a time response (or a report) of
// a circuit above reducedAboveUnknowns is computed from: the one transfer
// verifies, over the same default range.
func reducedModelFor(e *env, l *loaded, sys *mna.System) (*reduce.Model, error) {
	from, to, err := exploreRange(e, l, sys, 0)
	if err != nil {
		return nil, err
	}
	m, err := reduce.Reduce(e.ctx, sys, reduce.Options{FromHz: from, ToHz: to})
	if err != nil {
		if errors.Is(err, reduce.ErrNotVerified) {
			return nil, fmt.Errorf("time response of %d unknowns: %w; no samples are printed that were not verified", sys.Size(), err)
		}
		return nil, fmt.Errorf("time response of %d unknowns (reduced model): %w", sys.Size(), err)
	}
	return m, nil
}

// checkTimeResponse holds the samples of r to the time-domain
// integration of the full circuit (analysis/transient) and refuses them,
// with the figures, when they disagree or cannot be checked.
func checkTimeResponse(ctx context.Context, sys *mna.System, r *timeresp.TimeResponse) (*transient.Result, error) {
	chk, err := transient.Check(ctx, sys, r, transient.Options{})
	if err != nil {
		return nil, fmt.Errorf("%s response of %d unknowns: %w; nothing is printed that nodal cannot stand behind", r.Kind, sys.Size(), err)
	}
	return chk, nil
}

// timeReducedStatement says where the samples come from and how they
// were checked (the reduced model may be nil: the full extraction).
func timeReducedStatement(w io.Writer, m *reduce.Model, chk *transient.Result) {
	if m != nil {
		dc := ""
		if m.TF.DirectDC != nil {
			dc = " (the final value is the circuit's DC gain from a direct solve)"
		}
		fmt.Fprintf(w, "from a reduced model of order %d (of %d unknowns: Krylov projection, PRIMA-style, at %d expansion points),\n"+
			"verified against direct solves at %d frequencies over %s–%s within %s dB and %s°, realized as a cascade and\n"+
			"exponentiated%s.\n",
			m.Order, m.Unknowns, len(m.Expansions), m.CheckPoints, notation.Eng(m.FromHz, "Hz"), notation.Eng(m.ToHz, "Hz"),
			trimFloat(m.MaxErrDB, 2), trimFloat(m.MaxErrDeg, 2), dc)
	}
	if chk != nil {
		fmt.Fprintf(w, "Samples checked at %d times against the integration of the full circuit (C·x′ + G·x = B·u, TR-BDF2 with\n"+
			"Richardson extrapolation, %d steps): largest difference %s of the response's scale %s (tolerance %s; the\n"+
			"integration's own error estimate %s).\n",
			chk.Checked, chk.Steps, trimFloat(chk.MaxDiff, 2), num(chk.Scale), trimFloat(chk.Tol, 2), trimFloat(chk.MaxIntErr, 2))
	}
}

// timeCheckJSON is, in a time document, how the samples were checked
// against the integration of the full circuit.
type timeCheckJSON struct {
	Method       string  `json:"method"`
	Checked      int     `json:"checked_times"`
	Steps        int     `json:"steps"`
	Scale        float64 `json:"scale"`
	MaxDiff      float64 `json:"max_difference"`
	AtS          float64 `json:"at_s"`
	Tol          float64 `json:"tolerance"`
	IntegrationE float64 `json:"integration_error_estimate"`
}

func newTimeCheckJSON(c *transient.Result) *timeCheckJSON {
	if c == nil {
		return nil
	}
	return &timeCheckJSON{Method: "TR-BDF2 with Richardson extrapolation on the full sparse system", Checked: c.Checked, Steps: c.Steps,
		Scale: c.Scale, MaxDiff: c.MaxDiff, AtS: c.AtS, Tol: c.Tol, IntegrationE: c.MaxIntErr}
}

// checkedStep is the step response of tf (the transfer function of sys,
// reduced when reduced is set) for report and tune: when its samples are
// a reduced model's or the matrix exponential's alone (no partial
// fractions to compare them with) they are held to the integration of
// the full circuit, and a disagreement is the error.
func checkedStep(ctx context.Context, sys *mna.System, tf *transfer.TransferFunction, opt timeresp.TimeOptions, reduced bool) (*timeresp.TimeResponse, error) {
	r, err := timeresp.Step(tf, opt)
	if err != nil || !r.IllConditioned && !reduced {
		return r, err
	}
	if _, err := checkTimeResponse(ctx, sys, r); err != nil {
		return nil, err
	}
	return r, nil
}

// timeSamples is the step or impulse response of tf.
func timeSamples(tf *transfer.TransferFunction, kind string, opt timeresp.TimeOptions) (*timeresp.TimeResponse, error) {
	var r *timeresp.TimeResponse
	var err error
	if kind == "step" {
		r, err = timeresp.Step(tf, opt)
	} else {
		r, err = timeresp.Impulse(tf, opt)
	}
	if errors.Is(err, timeresp.ErrNoTimeScale) {
		return nil, fmt.Errorf("%w with --until T", err)
	}
	return r, err
}

// fullTimeFallback is the response from the full extraction of the
// system (at most transfer.MaxExtractUnknowns unknowns), held to the
// integration of the full circuit like the reduced model's: ok is false
// when it cannot be made or fails the check too.
func fullTimeFallback(e *env, sys *mna.System, kind string, opt timeresp.TimeOptions) (*timeresp.TimeResponse, *transient.Result, bool) {
	if sys.Size() > transfer.MaxExtractUnknowns {
		return nil, nil, false
	}
	tf, err := transfer.Extract(sys)
	if err != nil {
		return nil, nil, false
	}
	r, err := timeSamples(tf, kind, opt)
	if err != nil {
		return nil, nil, false
	}
	chk, err := checkTimeResponse(e.ctx, sys, r)
	if err != nil {
		return nil, nil, false
	}
	return r, chk, true
}

// timeResponseOf is the response of sys to a unit step or impulse (kind)
// with the reduced model it came from (nil for the full extraction), the
// time-domain check of its samples (nil when they were not checked) and
// why a reduced model's response was not used (nil when it was, or when
// none was tried).
//
// Above reducedAboveUnknowns the response comes from the verified reduced
// model transfer gives; when none can be verified, gives no response
// (more zeros than poles) or its samples fail the check, from the full
// extraction where it can be made (fullTimeFallback). Samples that no
// independent computation confirmed (a reduced model's, or the matrix
// exponential's without partial fractions to compare with) are held to
// the integration of the full circuit.
func timeResponseOf(e *env, l *loaded, sys *mna.System, kind string, opt timeresp.TimeOptions) (r *timeresp.TimeResponse, model *reduce.Model, chk *transient.Result, refused error, err error) {
	var tf *transfer.TransferFunction
	switch {
	case sys.Size() <= reducedAboveUnknowns:
		if tf, err = transfer.Extract(sys); err != nil {
			return nil, nil, nil, nil, err
		}
	default:
		model, err = reducedModelFor(e, l, sys)
		if err == nil {
			tf = model.TF
			break
		}
		if !errors.Is(err, reduce.ErrNotVerified) || sys.Size() > transfer.MaxExtractUnknowns {
			return nil, nil, nil, nil, err
		}
		full, ferr := transfer.Extract(sys)
		if ferr != nil {
			return nil, nil, nil, nil, fmt.Errorf("%w; the full extraction: %w", err, ferr)
		}
		tf, refused = full, err
	}
	r, err = timeSamples(tf, kind, opt)
	if err != nil && (model == nil || errors.Is(err, timeresp.ErrNoTimeScale)) {
		return nil, nil, nil, nil, err
	}
	if err != nil {
		err = fmt.Errorf("%s response of %d unknowns: the reduced model of order %d gives none (%w)", kind, sys.Size(), model.Order, err)
	} else if model != nil || r.IllConditioned {
		chk, err = checkTimeResponse(e.ctx, sys, r)
	}
	if err != nil && model != nil && (r == nil || errors.Is(err, transient.ErrDisagree)) {
		if r2, chk2, ok := fullTimeFallback(e, sys, kind, opt); ok {
			why := err
			if errors.Is(err, transient.ErrDisagree) {
				why = errors.Unwrap(err) // the figures, without the refusal's wording
			}
			return r2, nil, chk2, why, nil
		}
	}
	if err != nil {
		if refused != nil {
			return nil, nil, nil, nil, fmt.Errorf("%w; the full extraction's samples were tried because %v", err, refused)
		}
		return nil, nil, nil, nil, err
	}
	return r, model, chk, refused, nil
}
