package netlist

// MaxNesting is the deepest nesting an expression may have. Open
// parentheses, unary signs and chained powers each add a level (the parsers
// recurse once per level); deeper input is refused with a positioned error
// instead of exhausting time or stack. No hand-written circuit value comes
// near it.
const MaxNesting = 64

// TooDeep returns the index of the first token at which an expression,
// given as its significant token texts in order, nests deeper than
// MaxNesting, or -1 when it does not. "(" opens a level and ")" closes
// one; "^" and a sign ("+", "-", "−") that follows an operator, "(" or
// "," or starts the expression add a level that lasts until the next
// binary operator at the same parenthesis depth.
func TooDeep(toks []string) int {
	chains := []int{0} // chained signs and powers per open parenthesis
	depth := 0         // open parentheses plus every chain
	prevOperand := false
	for i, t := range toks {
		top := len(chains) - 1
		switch t {
		case "(":
			chains = append(chains, 0)
			depth++
			prevOperand = false
		case ")":
			if top > 0 {
				depth -= chains[top] + 1
				chains = chains[:top]
			}
			prevOperand = true
		case "^":
			chains[top]++
			depth++
			prevOperand = false
		case "+", "-", "−":
			if prevOperand {
				depth -= chains[top]
				chains[top] = 0
			} else {
				chains[top]++
				depth++
			}
			prevOperand = false
		case "*", "/", "·", ",", "=", ":", "±", "+-", "@", "..":
			depth -= chains[top]
			chains[top] = 0
			prevOperand = false
		default:
			prevOperand = true
		}
		if depth > MaxNesting {
			return i
		}
	}
	return -1
}
