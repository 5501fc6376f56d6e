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
	ws := NewWorkspaces(c, workers)
	sweepers := newRestampedSweepers(c, in, out, workers)
	res.MinDB, res.MaxDB = slices.Clone(res.NominalDB), slices.Clone(res.NominalDB)
	res.MinPhaseDeg, res.MaxPhaseDeg = slices.Clone(res.NominalPhaseDeg), slices.Clone(res.NominalPhaseDeg)
	type curve struct {
		db, ph []float64
		err    error
	}
	finished := streamJobs(ctx, opt.Runs, workers, opt.Progress, func(w, i int) curve {
		ws.Draw(w, opt.Seed, i)
		vc, err := ws.Vary(w)
		if err != nil {
			return curve{err: err}
		}
		cv := curve{db: make([]float64, n), ph: make([]float64, n)}
		if sw := sweepers.restamp(w, vc); sw != nil {
			err = sweepCurve(sw, freqsHz, cv.db, cv.ph)
		} else {
			err = bodeCurve(vc, in, out, freqsHz, cv.db, cv.ph)
		}
		if err != nil {
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

// restampedSweepers are the per-worker Sweepers of an envelope: each
// worker's own mna.Restamper of the nominal system, so a run writes its
// values into the held pattern instead of building its system. nil when
// the probe cannot be restamped (every run is then built).
type restampedSweepers struct {
	r  []*mna.Restamper
	sw []*mna.Sweeper
}

func newRestampedSweepers(c *netlist.Circuit, in mna.Input, out mna.Output, workers int) *restampedSweepers {
	tmpl, err := mna.NewRestamper(c, in, out)
	if err != nil {
		return nil
	}
	s := &restampedSweepers{r: make([]*mna.Restamper, workers), sw: make([]*mna.Sweeper, workers)}
	for w := range s.r {
		s.r[w] = tmpl.Clone()
		s.sw[w] = mna.NewSweeper(s.r[w].System())
	}
	return s
}

// restamp writes vc's values into worker w's system and returns its
// Sweeper, or nil when vc must be built instead (no restamper, or vc's
// stamps leave the pattern: Build then names what is wrong).
func (s *restampedSweepers) restamp(w int, vc *netlist.Circuit) *mna.Sweeper {
	if s == nil || s.r[w].Restamp(vc) != nil {
		return nil
	}
	return s.sw[w]
}

// bodeCurve fills db and phaseDeg (unwrapped) with the response of c.
func bodeCurve(c *netlist.Circuit, in mna.Input, out mna.Output, freqsHz, db, phaseDeg []float64) error {
	sys, err := mna.Build(c, in, out)
	if err != nil {
		return err
	}
	return sweepCurve(mna.NewSweeper(sys), freqsHz, db, phaseDeg)
}

// sweepCurve fills db and phaseDeg (unwrapped) with the response of sw's
// system.
func sweepCurve(sw *mna.Sweeper, freqsHz, db, phaseDeg []float64) error {
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
