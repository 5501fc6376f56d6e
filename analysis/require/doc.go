// Package require owns requirement verdicts: judging the metrics of the
// nominal circuit, the worst-case corners and a yield Monte Carlo against
// each `require` statement (Judge, Verify), with the Wilson interval of a
// pass proportion.
package require
