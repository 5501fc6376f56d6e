package tune

import (
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// fakeBackend stands in for a circuit: its model is the file's first line,
// Analyse echoes x=VALUE (a value "bad" is a request error), Rewrite
// appends the query.
type fakeBackend struct{ first string }

func (f fakeBackend) Model() any { return map[string]string{"first": f.first} }

func (f fakeBackend) Analyse(_ context.Context, q url.Values) (any, error) {
	if q.Get("x") == "bad" {
		return nil, &RequestError{errors.New("x: bad value")}
	}
	return map[string]string{"x": q.Get("x")}, nil
}

func (f fakeBackend) Rewrite(q url.Values) ([]byte, error) {
	return []byte(f.first + " " + q.Encode() + "\n"), nil
}

func fakeLoad(src []byte) (Backend, error) {
	s := string(src)
	if strings.HasPrefix(s, "error") {
		return nil, errors.New("f.nodal:1:1: syntax error\n    error\n    ^")
	}
	first, _, _ := strings.Cut(s, "\n")
	return fakeBackend{first}, nil
}

// serve starts a server on a loopback port for the file and returns its
// address and the file's path.
func serve(t *testing.T, text string) (*Server, string, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "f.nodal")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := New(Config{Path: path, Load: fakeLoad, Poll: 20 * time.Millisecond,
		Save: func(src []byte) error { return os.WriteFile(path, src, 0o644) }})
	if err != nil {
		t.Fatal(err)
	}
	ln, err := Listen(DefaultAddr, false)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- s.Serve(ctx, ln) }()
	t.Cleanup(func() {
		cancel()
		if err := <-done; err != nil {
			t.Errorf("Serve after cancel: %v", err)
		}
	})
	return s, ln.Addr().String(), path
}

func get(t *testing.T, addr, host, path string) (int, string) {
	t.Helper()
	req, err := http.NewRequest("GET", "http://"+addr+path, nil)
	if err != nil {
		t.Fatal(err)
	}
	if host != "" {
		req.Host = host
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

func post(t *testing.T, addr, path, token, origin, body string) (int, string) {
	t.Helper()
	req, err := http.NewRequest("POST", "http://"+addr+path, strings.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	if token != "" {
		req.Header.Set("X-Nodal-Token", token)
	}
	if origin != "" {
		req.Header.Set("Origin", origin)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

// TestListenRefusesNonLoopback: only loopback is served unless the address
// is named on purpose (a wildcard, every interface, included: the command
// then warns); host names never are.
func TestListenRefusesNonLoopback(t *testing.T) {
	cases := []struct {
		addr  string
		named bool
		want  string // "" accepted, else part of the error
		every bool   // accepted on every interface
	}{
		{"127.0.0.1:0", false, "", false},
		{"localhost:0", false, "", false},
		{"127.0.0.1:0", true, "", false},
		{"192.0.2.1:0", false, "not a loopback address; name it with --addr", false},
		{"0.0.0.0:0", false, "every interface; name it with --addr", false},
		{":0", false, "every interface; name it with --addr", false},
		{"0.0.0.0:0", true, "", true},
		{":0", true, "", true},
		{"example.com:0", true, "not a host name", false},
		{"127.0.0.1", false, "want HOST:PORT", false},
	}
	for _, c := range cases {
		ln, err := Listen(c.addr, c.named)
		if ln != nil {
			if IsEveryInterface(ln) != c.every || (!c.every && !IsLoopback(ln)) {
				t.Errorf("%s: listening on %s (every interface %v, want %v)", c.addr, ln.Addr(), IsEveryInterface(ln), c.every)
			}
			ln.Close()
		}
		switch {
		case c.want == "" && err != nil:
			t.Errorf("Listen(%q, %v): %v", c.addr, c.named, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("Listen(%q, %v) = %v, want an error with %q", c.addr, c.named, err, c.want)
		}
	}
}

// TestForeignHostRefused: a request naming another host (a DNS-rebinding
// page) gets 403; the served address and localhost with its port pass.
func TestForeignHostRefused(t *testing.T) {
	_, addr, _ := serve(t, "first line\n")
	_, port, _ := net.SplitHostPort(addr)
	for _, c := range []struct {
		host string
		code int
	}{
		{"", 200},
		{"localhost:" + port, 200},
		{"evil.example:" + port, 403},
		{"evil.example", 403},
		{"127.0.0.1:1", 403},
	} {
		code, body := get(t, addr, c.host, "/api/model")
		if code != c.code {
			t.Errorf("Host %q: status %d (%s), want %d", c.host, code, body, c.code)
		}
	}
	code, page := get(t, addr, "", "/")
	if code != 200 || !strings.Contains(page, `<script src="/tune.js"`) || strings.Contains(page, "@TOKEN@") {
		t.Errorf("page: %d, token filled: %v", code, !strings.Contains(page, "@TOKEN@"))
	}
	// nothing is loaded from elsewhere: every src and href is our own
	for _, m := range regexp.MustCompile(`(?:src|href)="([^"]*)"`).FindAllStringSubmatch(page, -1) {
		if !strings.HasPrefix(m[1], "/") || strings.HasPrefix(m[1], "//") {
			t.Errorf("page loads %q from elsewhere", m[1])
		}
	}
}

// TestBadRequestAnd400: a request error answers 400 with its message, and
// the server goes on answering.
func TestBadRequestAnd400(t *testing.T) {
	_, addr, _ := serve(t, "first line\n")
	code, body := get(t, addr, "", "/api/analyse?x=bad")
	if code != 400 || !strings.Contains(body, "x: bad value") {
		t.Errorf("bad value: %d %s", code, body)
	}
	code, body = get(t, addr, "", "/api/analyse?x=7")
	if code != 200 || !strings.Contains(body, `"x":"7"`) {
		t.Errorf("after a bad request: %d %s", code, body)
	}
}

// TestWritesNeedTokenAndDigest: plan and save need the page's token and
// no foreign Origin; save needs the digest of the plan shown, and a file
// edited in between makes the digest stale.
func TestWritesNeedTokenAndDigest(t *testing.T) {
	s, addr, path := serve(t, "first line\n")
	if code, _ := post(t, addr, "/api/plan", "", "", "x=1"); code != 403 {
		t.Errorf("plan without token: %d, want 403", code)
	}
	if code, _ := post(t, addr, "/api/plan", s.token, "http://evil.example", "x=1"); code != 403 {
		t.Errorf("plan from another origin: %d, want 403", code)
	}
	code, body := post(t, addr, "/api/plan", s.token, "http://"+addr, "?x=1")
	if code != 200 || !strings.Contains(body, `"line":1,"old":"first line","new":"first line x=1"`) {
		t.Fatalf("plan: %d %s", code, body)
	}
	digest := regexp.MustCompile(`"digest":"([0-9a-f]+)"`).FindStringSubmatch(body)[1]
	if code, body := post(t, addr, "/api/save", s.token, "", fmt.Sprintf(`{"query":"x=1","digest":"%s0"}`, digest)); code != 400 || !strings.Contains(body, "changed since the diff") {
		t.Errorf("save with a wrong digest: %d %s", code, body)
	}
	if code, body := post(t, addr, "/api/save", s.token, "", fmt.Sprintf(`{"query":"x=1","digest":"%s"}`, digest)); code != 200 {
		t.Fatalf("save: %d %s", code, body)
	}
	b, _ := os.ReadFile(path)
	if string(b) != "first line x=1\n" {
		t.Errorf("file after save: %q", b)
	}
	// the file changed: the old digest no longer confirms anything
	if code, _ := post(t, addr, "/api/save", s.token, "", fmt.Sprintf(`{"query":"x=1","digest":"%s"}`, digest)); code != 400 {
		t.Errorf("stale digest accepted: %d", code)
	}
	// a file that does not load is never written over with the last good text
	code, body = post(t, addr, "/api/plan", s.token, "", "x=2")
	if code != 200 {
		t.Fatalf("plan: %d %s", code, body)
	}
	digest = regexp.MustCompile(`"digest":"([0-9a-f]+)"`).FindStringSubmatch(body)[1]
	if err := os.WriteFile(path, []byte("error: half-typed edit\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, body = post(t, addr, "/api/save", s.token, "", fmt.Sprintf(`{"query":"x=2","digest":"%s"}`, digest))
	if b, _ := os.ReadFile(path); code != 400 || !strings.Contains(body, "does not load now") || string(b) != "error: half-typed edit\n" {
		t.Errorf("save over a file that does not load: %d %s; file %q", code, body, b)
	}
}

// TestWatchKeepsLastGood: an edit reloads; a text that does not load is
// reported and the last good backend stays; fixing it reloads again.
func TestWatchKeepsLastGood(t *testing.T) {
	_, addr, path := serve(t, "one\n")
	write := func(text string) {
		// a different size, so the change is seen even within one mtime tick
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	wait := func(what string, ok func(body string) bool) string {
		t.Helper()
		deadline := time.Now().Add(3 * time.Second)
		for {
			_, body := get(t, addr, "", "/api/model")
			if ok(body) {
				return body
			}
			if time.Now().After(deadline) {
				t.Fatalf("%s: last model %s", what, body)
			}
			time.Sleep(20 * time.Millisecond)
		}
	}
	write("second version\n")
	wait("reload", func(b string) bool { return strings.Contains(b, `"first":"second version"`) })
	write("error here\n")
	body := wait("load error", func(b string) bool { return strings.Contains(b, "syntax error") })
	if !strings.Contains(body, `"first":"second version"`) || !strings.Contains(body, `1:1: syntax error\n    error\n    ^`) {
		t.Errorf("after a bad edit: %s", body)
	}
	write("third\n")
	wait("fixed", func(b string) bool {
		return strings.Contains(b, `"first":"third"`) && strings.Contains(b, `"load_error":""`)
	})
}

// TestWatchWaitsForAWriteToSettle: an editor that saves in place
// truncates the file before writing it. A stamp seen for the first time is
// loaded only once it holds for one poll, so the empty file between the
// two is neither loaded nor reported as an error.
func TestWatchWaitsForAWriteToSettle(t *testing.T) {
	path := filepath.Join(t.TempDir(), "f.nodal")
	if err := os.WriteFile(path, []byte("one\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	loads := 0
	s, err := New(Config{Path: path, Poll: time.Hour, Load: func(src []byte) (Backend, error) {
		loads++
		if len(src) == 0 {
			return nil, errors.New("f.nodal:1:1: the circuit has no elements")
		}
		return fakeLoad(src)
	}})
	if err != nil {
		t.Fatal(err)
	}
	before := loads
	if err := os.WriteFile(path, nil, 0o644); err != nil { // the truncation
		t.Fatal(err)
	}
	s.reload(false)
	if loads != before || s.loadErr != "" {
		t.Fatalf("a stamp seen once was loaded: %d loads, error %q", loads-before, s.loadErr)
	}
	if err := os.WriteFile(path, []byte("second version\n"), 0o644); err != nil { // the write
		t.Fatal(err)
	}
	s.reload(false) // first sight of the written file: wait
	s.reload(false) // it held for one poll: load
	if b, _ := s.current(); b == nil || b.Model().(map[string]string)["first"] != "second version" || s.loadErr != "" {
		t.Fatalf("after the write settled: model %v, error %q", b, s.loadErr)
	}
}

// TestLineDiff lists the changed lines with their numbers.
func TestLineDiff(t *testing.T) {
	got := LineDiff([]byte("a\nb 1\nc\n"), []byte("a\nb 2\nc\n"))
	if len(got) != 1 || got[0] != (DiffLine{2, "b 1", "b 2"}) {
		t.Errorf("LineDiff = %+v", got)
	}
	if got := LineDiff([]byte("a\n"), []byte("a\nb\n")); len(got) != 1 || got[0].Line != 2 || got[0].New != "b" {
		t.Errorf("LineDiff of a longer text = %+v", got)
	}
}

// TestEveryInterfaceHosts: on every interface (--addr 0.0.0.0:PORT named
// on purpose) a request must still name this machine: localhost,
// 127.0.0.1 or one of its interface addresses with the port pass, another
// host (a DNS-rebinding page) or another port gets 403.
func TestEveryInterfaceHosts(t *testing.T) {
	path := filepath.Join(t.TempDir(), "f.nodal")
	if err := os.WriteFile(path, []byte("first line\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := New(Config{Path: path, Load: fakeLoad, Poll: 20 * time.Millisecond, Save: func([]byte) error { return nil }})
	if err != nil {
		t.Fatal(err)
	}
	ln, err := Listen("0.0.0.0:0", true)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- s.Serve(ctx, ln) }()
	defer func() { cancel(); <-done }()
	_, port, _ := net.SplitHostPort(ln.Addr().String())
	addr := net.JoinHostPort("127.0.0.1", port)
	for _, c := range []struct {
		host string
		code int
	}{
		{"127.0.0.1:" + port, 200},
		{"localhost:" + port, 200},
		{"evil.example:" + port, 403},
		{"0.0.0.0:1", 403},
		{"127.0.0.1:1", 403},
	} {
		if code, body := get(t, addr, c.host, "/api/model"); code != c.code {
			t.Errorf("Host %q: status %d (%s), want %d", c.host, code, body, c.code)
		}
	}
}
