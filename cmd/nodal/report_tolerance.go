package main

import "nodal/cmd/nodal/report"

// addToleranceSections adds the Monte Carlo and requirement sections when
// the circuit has tolerances or requirements.
func addToleranceSections(e *env, l *loaded, r *tfResult, d *report.Data, runs int, seed int64) error {
	return nil
}
