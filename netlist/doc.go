// Package netlist owns the circuit language of nodal: its grammar and
// parser (Parse), units, the one SI prefix table and IEC 60062 value codes,
// expressions, blocks and their elaboration into a flat, evaluated and
// validated Circuit (Elaborate, Load), the Vary model of toleranced values,
// the metric registry that `require` statements and every command read, and
// positioned diagnostics (file:line:col with the line and a caret). It
// never prints or touches files.
package netlist
