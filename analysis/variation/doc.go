// Package variation owns tolerance runs over a circuit's toleranced values
// (netlist.Variation): seeded Monte Carlo draws and their statistics, worst
// case by corners, sensitivity by central differences, the Bode envelope,
// and the MetricEvaluator that measures metrics on each varied circuit.
package variation
