package main

import (
	"nodal/analysis"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
)

// autoRange is the default sweep range for sys.
func autoRange(l *loaded, sys *mna.System) (float64, float64) {
	return analysis.DefaultRange(l.circuit)
}

// addBodeMarks marks the −3 dB points and any peak on a trace.
func addBodeMarks(tr *plot.BodeTrace, sys *mna.System, r *analysis.Response) {}
