package tune

import (
	"fmt"
	"net"
	"strings"
)

// DefaultAddr is where the page is served when no address is given: the
// IPv4 loopback, on a free port the system picks.
const DefaultAddr = "127.0.0.1:0"

// Listen opens the page's listening socket on addr (HOST:PORT, port 0 for
// a free one). A loopback host (127.0.0.0/8, ::1 or localhost, which is
// taken as 127.0.0.1 without asking a resolver) is always accepted. Any
// other IP address, and a wildcard (empty host, 0.0.0.0, ::: every
// interface), is accepted only when named is true (the user gave it with
// --addr), since the page is then reachable from the network (the caller
// warns, see IsEveryInterface); a host name is always refused.
func Listen(addr string, named bool) (net.Listener, error) {
	host, port, err := net.SplitHostPort(addr)
	if err != nil {
		return nil, fmt.Errorf("--addr %q: want HOST:PORT such as 127.0.0.1:8040 (port 0 picks a free one): %w", addr, err)
	}
	if strings.EqualFold(host, "localhost") {
		host = "127.0.0.1"
	}
	ip := net.ParseIP(host)
	switch {
	case host == "" || ip != nil && ip.IsUnspecified():
		if !named {
			return nil, fmt.Errorf("refusing to serve on %s, every interface; name it with --addr to serve there on purpose (127.0.0.1 keeps the page on this machine)", addr)
		}
	case ip == nil:
		return nil, fmt.Errorf("--addr %q: give an IP address, not a host name (127.0.0.1 keeps the page on this machine)", addr)
	case !ip.IsLoopback() && !named:
		return nil, fmt.Errorf("refusing to serve on %s: it is not a loopback address; name it with --addr to serve there on purpose", addr)
	}
	ln, err := net.Listen("tcp", net.JoinHostPort(host, port))
	if err != nil {
		return nil, fmt.Errorf("cannot serve on %s: %w", addr, err)
	}
	return ln, nil
}

// IsLoopback reports whether ln listens on a loopback address.
func IsLoopback(ln net.Listener) bool {
	ta, ok := ln.Addr().(*net.TCPAddr)
	return ok && ta.IP.IsLoopback()
}

// IsEveryInterface reports whether ln listens on a wildcard address
// (0.0.0.0 or ::): every interface of the machine.
func IsEveryInterface(ln net.Listener) bool {
	ta, ok := ln.Addr().(*net.TCPAddr)
	return ok && ta.IP.IsUnspecified()
}
