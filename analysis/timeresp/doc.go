// Package timeresp owns time responses: the step and impulse response of a
// transfer function by partial fractions (modes of each pole group, repeated
// poles included), sampled on a time grid, with their metrics (rise time,
// overshoot, settling time, final value) and the reason when one does not
// exist (an unstable or undamped response). Times in seconds.
package timeresp
