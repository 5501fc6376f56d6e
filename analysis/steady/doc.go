// Package steady owns the steady state of a circuit under a drive signal
// (a DC level plus sinusoids): each term's amplitude and phase through H,
// superposed, and the report of a term that falls on a pole (unbounded).
package steady
