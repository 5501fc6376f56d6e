// Package loop reads the figures of a loop gain T(s) off its factored
// form: the gain crossovers (|T(jω)| = 1) with the phase margin at each,
// the phase crossovers (arg T(jω) = −180° mod 360°) with the gain margin
// at each. T is Bode's return ratio of one gain element (see
// mna.ReturnRatio: T = −r/t).
//
// The phase is unwrapped from low frequency: it is the sum of the
// continuous angles of the factors (jω − z)/(jω − p), shifted by a
// multiple of 360° so that it lies in (−180°, 180°] at the lowest
// frequency examined (TransferFunction.PhaseDeg, the sum of factor
// angles, plus that shift; magnitudes from EvalFactored). The phase margin is 180° + arg T at a gain
// crossover; the gain margin is −20·log10|T| (dB) at a phase crossover.
// Frequencies are in rad/s inside and Hz where a name says so.
//
// NewLoopGain extracts T around a part of a circuit (transfer.Extract of
// the return ratio); Circuit gives the metric quantities judged on the
// whole circuit (stability, loop figures) to the metric registry. The
// package sits on analysis/transfer and analysis/stability; it never
// prints.
package loop
