// Package tune serves the page of `nodal tune`: one HTML page, its style
// and its script (embedded, nothing loaded from elsewhere) and a small JSON
// API, on a loopback address unless another address (or every interface)
// is named on purpose, with the Host header checked against the address
// served (on every interface, the machine's own addresses; protection
// against DNS rebinding) and a per-server
// token on every request that changes a file (protection against other
// sites posting to it).
//
// The package knows nothing of circuits: a Backend, built by cmd/nodal
// from the file's text, lists the controls, analyses a query string and
// plans the rewritten file. The server watches the file (polling its
// modification time and size), rebuilds the Backend on every change and
// keeps the last good one when the new text does not load, so the page
// shows the error and goes on with the last good circuit.
package tune
