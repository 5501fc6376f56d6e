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
// Carlo variants of it, keeping the per-frequency extremes. The extremes
// are merged per worker with min and max, so the result does not depend on
// the worker count. A nominal failure is an error; failed runs are
// counted; cancelling ctx keeps the finished runs (Cancelled).
func Envelope(ctx context.Context, c *netlist.Circuit, in mna.Input, out mna.Output, freqsHz []float64, opt MonteCarloOptions) (*EnvelopeResult, error) {
	if opt.Runs <= 0 {
		return nil, fmt.Errorf("envelope: %d runs; want at least 1", opt.Runs)
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
	type band struct {
		lo, hi, plo, phi, db, ph, factors []float64
		failed                            []int
		errs                              []error
	}
	bands := make([]*band, workers)
	for w := range bands {
		b := &band{db: make([]float64, n), ph: make([]float64, n), factors: make([]float64, len(c.Variations))}
		b.lo, b.hi = slices.Clone(res.NominalDB), slices.Clone(res.NominalDB)
		b.plo, b.phi = slices.Clone(res.NominalPhaseDeg), slices.Clone(res.NominalPhaseDeg)
		bands[w] = b
	}
	finished, cancelled := forEachJob(ctx, opt.Runs, workers, opt.Progress, func(w, i int) {
		b := bands[w]
		drawFactors(c.Variations, opt.Seed, i, b.factors)
		err := func() error {
			for _, f := range b.factors {
				if !(f > 0) {
					return fmt.Errorf("a drawn factor is ≤ 0")
				}
			}
			vc, err := c.Vary(b.factors)
			if err != nil {
				return err
			}
			return bodeCurve(vc, in, out, freqsHz, b.db, b.ph)
		}()
		if err != nil {
			b.failed, b.errs = append(b.failed, i), append(b.errs, err)
			return
		}
		shift := 360 * math.Round((b.ph[0]-res.NominalPhaseDeg[0])/360)
		for k := range n {
			p := b.ph[k] - shift
			b.lo[k], b.hi[k] = math.Min(b.lo[k], b.db[k]), math.Max(b.hi[k], b.db[k])
			b.plo[k], b.phi[k] = math.Min(b.plo[k], p), math.Max(b.phi[k], p)
		}
	})
	res.Finished, res.Cancelled = finished, cancelled
	res.MinDB, res.MaxDB = bands[0].lo, bands[0].hi
	res.MinPhaseDeg, res.MaxPhaseDeg = bands[0].plo, bands[0].phi
	first := -1
	for _, b := range bands {
		for k := range n {
			res.MinDB[k], res.MaxDB[k] = math.Min(res.MinDB[k], b.lo[k]), math.Max(res.MaxDB[k], b.hi[k])
			res.MinPhaseDeg[k] = math.Min(res.MinPhaseDeg[k], b.plo[k])
			res.MaxPhaseDeg[k] = math.Max(res.MaxPhaseDeg[k], b.phi[k])
		}
		res.Failed += len(b.failed)
		for j, i := range b.failed {
			if first < 0 || i < first {
				first, res.FirstFailure = i, fmt.Errorf("run %d: %w", i, b.errs[j])
			}
		}
	}
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
