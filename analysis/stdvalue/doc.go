// Package stdvalue owns standard values: the IEC 60063 E-series (E6 to
// E192), the nearest standard value on a log scale, and Snap, which rounds a
// circuit's part values to chosen series in its source text.
package stdvalue
