package mna

// NewDenseSweeper is NewSweeper on the dense path whatever the size (for
// the external tests that compare the two paths on testcircuit's
// circuits).
func NewDenseSweeper(sys *System) *Sweeper {
	n := sys.Size()
	o := sys.order()
	return &Sweeper{sys: sys, o: o, f: newLUFactor(o), x: make([]complex128, n), z: make([]complex128, n)}
}
