// Package response owns frequency grids (log and linear, the default
// range from a circuit's poles and zeros) and the frequency sweep: Response,
// H(j2πf) at each frequency with magnitude in dB, unwrapped phase in
// degrees and group delay in seconds, solved directly from the MNA system.
package response
