package variation

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"nodal/analysis/response"
	"slices"

	"nodal/mna"
	"nodal/netlist"
)

// EnvelopeResult is the band of the frequency response over Monte Carlo
// runs: per frequency (FreqHz, Hz) the nominal, smallest and largest
// 20·log10|H| (dB) and phase (degrees).
//
// Phases are unwrapped along the sweep and each run's curve is shifted by
// a whole number of turns so that its first point lies within 180° of the
// nominal's, so runs compare on one branch. Runs, Seed, Finished, Failed
// and Cancelled mean what they do in MonteCarloResult; the runs are the
// same draws MonteCarlo makes for the same seed, so the band and the
// statistics come from the same boards. With no successful run the min
// and max curves are the nominal.
type EnvelopeResult struct {
	FreqHz          []float64
	NominalDB       []float64
	MinDB, MaxDB    []float64
	NominalPhaseDeg []float64
	MinPhaseDeg     []float64
	MaxPhaseDeg     []float64
	Runs, Finished  int
	Failed          int
	Seed            uint64
	Cancelled       bool
	FirstFailure    error
}

// Envelope sweeps H(j2πf) of in → out over freqsHz (Hz, each > 0 or 0 for
// DC when Y(0) is regular) for the nominal circuit and for opt.Runs Monte
// Carlo variants of it, keeping the per-frequency extremes, updated run by
// run in run order (memory independent of the run count; the result does
// not depend on the worker count). A nominal failure is an error; failed
// runs are counted; cancelling ctx keeps the first Finished runs exactly
// (Cancelled), as MonteCarlo does.
func Envelope(ctx context.Context, c *netlist.Circuit, in mna.Input, out mna.Output, freqsHz []float64, opt MonteCarloOptions) (*EnvelopeResult, error) {
	if err := checkRuns("envelope", opt.Runs); err != nil {
		return nil, err
	}
	if len(freqsHz) == 0 {
		return nil, fmt.Errorf("envelope: no frequencies")
	}
	for i, f := range freqsHz {
		if !(f >= 0) || math.IsInf(f, 0) {
			return nil, fmt.Errorf("envelope: frequency %d is %g Hz; want a finite value ≥ 0", i, f)
		}
	}
	n := len(freqsHz)
	res := &EnvelopeResult{FreqHz: append([]float64(nil), freqsHz...), Runs: opt.Runs, Seed: opt.Seed,
		NominalDB: make([]float64, n), NominalPhaseDeg: make([]float64, n)}
	if err := bodeCurve(c, in, out, freqsHz, res.NominalDB, res.NominalPhaseDeg); err != nil {
		return nil, fmt.Errorf("envelope: nominal circuit: %w", err)
	}
	workers := resolveWorkers(opt.Workers, opt.Runs)
	factors := make([][]float64, workers)
	for w := range factors {
		factors[w] = make([]float64, len(c.Variations))
	}
	res.MinDB, res.MaxDB = slices.Clone(res.NominalDB), slices.Clone(res.NominalDB)
	res.MinPhaseDeg, res.MaxPhaseDeg = slices.Clone(res.NominalPhaseDeg), slices.Clone(res.NominalPhaseDeg)
	type curve struct {
		db, ph []float64
		err    error
	}
	finished := streamJobs(ctx, opt.Runs, workers, opt.Progress, func(w, i int) curve {
		f := factors[w]
		drawFactors(c.Variations, opt.Seed, i, f)
		for _, v := range f {
			if !(v > 0) {
				return curve{err: fmt.Errorf("a drawn factor is ≤ 0")}
			}
		}
		vc, err := c.Vary(f)
		if err != nil {
			return curve{err: err}
		}
		cv := curve{db: make([]float64, n), ph: make([]float64, n)}
		if err := bodeCurve(vc, in, out, freqsHz, cv.db, cv.ph); err != nil {
			return curve{err: err}
		}
		return cv
	}, func(i int, cv curve) {
		if cv.err != nil {
			if res.Failed == 0 {
				res.FirstFailure = fmt.Errorf("run %d: %w", i, cv.err)
			}
			res.Failed++
			return
		}
		shift := 360 * math.Round((cv.ph[0]-res.NominalPhaseDeg[0])/360)
		for k := range n {
			p := cv.ph[k] - shift
			res.MinDB[k], res.MaxDB[k] = math.Min(res.MinDB[k], cv.db[k]), math.Max(res.MaxDB[k], cv.db[k])
			res.MinPhaseDeg[k], res.MaxPhaseDeg[k] = math.Min(res.MinPhaseDeg[k], p), math.Max(res.MaxPhaseDeg[k], p)
		}
	})
	res.Finished, res.Cancelled = finished, finished < opt.Runs
	if finished == 0 {
		return nil, fmt.Errorf("envelope: stopped before any run finished: %w", context.Cause(ctx))
	}
	if res.Failed == finished {
		return nil, fmt.Errorf("envelope: all %d runs failed; first: %w", finished, res.FirstFailure)
	}
	return res, nil
}

// bodeCurve fills db and phaseDeg (unwrapped) with the response of c.
func bodeCurve(c *netlist.Circuit, in mna.Input, out mna.Output, freqsHz, db, phaseDeg []float64) error {
	sys, err := mna.Build(c, in, out)
	if err != nil {
		return err
	}
	sw := mna.NewSweeper(sys)
	for k, f := range freqsHz {
		h, _, err := sw.Eval(complex(0, omegaOf(f)))
		if err != nil {
			return err
		}
		db[k] = 20 * math.Log10(cmplx.Abs(h))
		phaseDeg[k] = cmplx.Phase(h) * 180 / math.Pi
	}
	response.UnwrapDeg(phaseDeg)
	return nil
}
