// Package netlist owns the circuit language of nodal: its grammar and
// parser (Parse), units (the number token, SI prefixes and IEC 60062
// value codes come from the text toolkit netlist/syntax), expressions, blocks and their elaboration into a flat, evaluated and
// validated Circuit (Elaborate, Load), the Vary model of toleranced values,
// the metric registry that `require` statements and every command read, and
// positioned diagnostics (file:line:col with the line and a caret). It
// never prints or touches files.
package netlist
