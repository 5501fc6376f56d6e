package reduce

import (
	"context"
	"errors"
	"math"
	"math/cmplx"

	"nodal/analysis/transfer"
	"nodal/mna"
)

// Explore returns an UNVERIFIED reduced H(s) of at most order poles from
// the Krylov space of (G + σC)⁻¹·C started at (G + σC)⁻¹·B, σ = sigmaRad
// (real, rad/s; 0 expands about DC): the moments at σ, whose poles
// approximate those nearest σ. It is for choosing a frequency range to
// reduce over (the poles and zeros that shape the response), never for
// printing: Reduce checks what it returns. A singular G + σC gives a
// *mna.SingularError.
func Explore(ctx context.Context, sys *mna.System, sigmaRad float64, order int) (*transfer.TransferFunction, error) {
	bs := newBasis(sys)
	var exps []*expansion
	s := complex(sigmaRad, 0)
	lu := mna.NewShiftSolver(sys)
	if err := lu.Factor(s); err != nil {
		return nil, err
	}
	for len(bs.v) < order {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		k := len(bs.v)
		if err := extend(sys, bs, &exps, s); err != nil {
			return nil, err
		}
		if len(bs.v) == k {
			break // the space is exhausted: the model is exact
		}
		if len(exps) > 0 {
			s = exps[0].s
		}
	}
	if len(bs.v) == 0 {
		return nil, errors.New("reduce: the input does not reach the unknowns")
	}
	r := bs.reduced()
	poles, err := pencilRoots(r.g, r.c, sigmaRad)
	if err != nil {
		return nil, err
	}
	scale := 1.0
	for _, p := range poles {
		if a := cmplx.Abs(p); a > 0 {
			scale = a
			break
		}
	}
	if sigmaRad > 0 {
		scale = math.Min(scale, sigmaRad)
	}
	return r.transferFunction(sigmaRad, scale, complex(0, scale))
}
