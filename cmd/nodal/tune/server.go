package tune

import (
	"bytes"
	"context"
	"crypto/rand"
	"crypto/sha256"
	"embed"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"strings"
	"sync"
	"time"
)

//go:embed assets/index.html assets/tune.css assets/tune.js
var assets embed.FS

// Backend is one loaded version of the circuit file: what the page may
// set, the analysis at a set of values and the file rewritten with them.
// cmd/nodal implements it; a Backend is used from several requests at once
// and must not change after it is built.
type Backend interface {
	// Model describes the controls and responses for the page (a value
	// that marshals to JSON).
	Model() any
	// Analyse returns the document of the values in q (the page's query
	// string). A value that does not parse, or a name that is not a
	// control, is a *RequestError. It stops with ctx's error when ctx is
	// cancelled (the page has asked for newer values).
	Analyse(ctx context.Context, q url.Values) (any, error)
	// Rewrite returns the file's text with the values of q written into
	// it, everything else kept; a bad value is a *RequestError.
	Rewrite(q url.Values) ([]byte, error)
}

// RequestError is an error in what a request asked for (a value that does
// not parse, an unknown name): the answer is status 400 with the message,
// and the server goes on serving.
type RequestError struct{ Err error }

// Error returns the wrapped error's message.
func (e *RequestError) Error() string { return e.Err.Error() }

// Unwrap returns the wrapped error.
func (e *RequestError) Unwrap() error { return e.Err }

// Config is what a Server needs.
type Config struct {
	// Path is the circuit file, watched and rewritten.
	Path string
	// Load builds a Backend from the file's text; its error is shown on
	// the page (a diagnostic with line and caret) while the last good
	// Backend stays.
	Load func(src []byte) (Backend, error)
	// Save replaces the file with src, atomically.
	Save func(src []byte) error
	// Poll is how often the file's modification time and size are
	// looked at; zero means 300 ms.
	Poll time.Duration
	// MaxBytes is the largest file read; zero means 16 MiB.
	MaxBytes int64
}

// Server serves the tuning page of one circuit file. Build it with New and
// run it with Serve.
type Server struct {
	cfg   Config
	token string // sent with every request that writes

	mu      sync.Mutex
	backend Backend
	src     []byte // the text backend was built from
	loadErr string // why the file's current text does not load ("" when it does)
	gen     int    // counts loads, good or bad
	stamp   fileStamp
	seen    fileStamp // the stamp the last poll saw: a change is loaded once it holds for one poll
}

// fileStamp is what the watcher compares.
type fileStamp struct {
	mod  time.Time
	size int64
}

// New reads and loads the file once; an error there is returned as is (the
// command fails before serving anything).
func New(cfg Config) (*Server, error) {
	if cfg.Poll <= 0 {
		cfg.Poll = 300 * time.Millisecond
	}
	if cfg.MaxBytes <= 0 {
		cfg.MaxBytes = 16 << 20
	}
	tok := make([]byte, 16)
	if _, err := rand.Read(tok); err != nil {
		return nil, fmt.Errorf("tune: no random token: %w", err)
	}
	s := &Server{cfg: cfg, token: hex.EncodeToString(tok)}
	src, st, err := s.read()
	if err != nil {
		return nil, err
	}
	b, err := cfg.Load(src)
	if err != nil {
		return nil, err
	}
	s.backend, s.src, s.stamp, s.gen = b, src, st, 1
	return s, nil
}

// read returns the file's text and stamp.
func (s *Server) read() ([]byte, fileStamp, error) {
	f, err := os.Open(s.cfg.Path)
	if err != nil {
		return nil, fileStamp{}, fmt.Errorf("cannot read circuit: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fileStamp{}, fmt.Errorf("cannot read circuit: %w", err)
	}
	src, err := io.ReadAll(io.LimitReader(f, s.cfg.MaxBytes+1))
	if err != nil {
		return nil, fileStamp{}, fmt.Errorf("%s: cannot read: %w", s.cfg.Path, err)
	}
	if int64(len(src)) > s.cfg.MaxBytes {
		return nil, fileStamp{}, fmt.Errorf("%s: file is larger than %d bytes", s.cfg.Path, s.cfg.MaxBytes)
	}
	return src, fileStamp{st.ModTime(), st.Size()}, nil
}

// current returns the Backend and the text it was built from.
func (s *Server) current() (Backend, []byte) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.backend, s.src
}

// reload reads the file again when its stamp changed (or force) and
// rebuilds the Backend; a text that does not load keeps the last good one.
func (s *Server) reload(force bool) {
	st, err := os.Stat(s.cfg.Path)
	s.mu.Lock()
	same := err == nil && st.ModTime().Equal(s.stamp.mod) && st.Size() == s.stamp.size
	// An editor that writes in place truncates first: a stamp seen for
	// the first time is read only once it has held for one poll, so a
	// half-written file is never loaded (nor shown as an error).
	settled := err == nil && st.ModTime().Equal(s.seen.mod) && st.Size() == s.seen.size
	if err == nil {
		s.seen = fileStamp{st.ModTime(), st.Size()}
	}
	s.mu.Unlock()
	if !force && (same || !settled) {
		return
	}
	src, stamp, err := s.read()
	s.mu.Lock()
	defer s.mu.Unlock()
	if err != nil {
		if msg := err.Error(); msg != s.loadErr {
			s.loadErr, s.gen = msg, s.gen+1
		}
		return
	}
	s.stamp = stamp
	if bytes.Equal(src, s.src) && s.loadErr == "" {
		return
	}
	b, err := s.cfg.Load(src)
	s.gen++
	if err != nil {
		s.loadErr = err.Error()
		return
	}
	s.backend, s.src, s.loadErr = b, src, ""
}

// watch polls the file until ctx is done.
func (s *Server) watch(ctx context.Context) {
	t := time.NewTicker(s.cfg.Poll)
	defer t.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-t.C:
			s.reload(false)
		}
	}
}

// Serve answers on ln until ctx is cancelled, then shuts down (open
// requests get up to half a second) and returns nil.
func (s *Server) Serve(ctx context.Context, ln net.Listener) error {
	srv := &http.Server{Handler: s.Handler(ln.Addr()), ReadHeaderTimeout: 5 * time.Second,
		BaseContext: func(net.Listener) context.Context { return ctx }}
	wctx, stop := context.WithCancel(ctx)
	defer stop()
	go s.watch(wctx)
	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	select {
	case err := <-errc:
		return fmt.Errorf("tune: %w", err)
	case <-ctx.Done():
	}
	sctx, cancel := context.WithTimeout(context.Background(), 500*time.Millisecond)
	defer cancel()
	if err := srv.Shutdown(sctx); err != nil {
		_ = srv.Close()
	}
	<-errc
	return nil
}

// URL is the address of the page served on addr.
func URL(addr net.Addr) string { return "http://" + addr.String() + "/" }

// Handler is the server's handler for requests arriving at addr: every
// request whose Host header is not that address (or localhost with its
// port; on every interface, one of the machine's addresses, see
// allowedHosts) is refused with 403.
func (s *Server) Handler(addr net.Addr) http.Handler {
	hosts := allowedHosts(addr)
	mux := http.NewServeMux()
	mux.HandleFunc("GET /{$}", s.page)
	mux.HandleFunc("GET /tune.css", asset("assets/tune.css", "text/css; charset=utf-8"))
	mux.HandleFunc("GET /tune.js", asset("assets/tune.js", "text/javascript; charset=utf-8"))
	mux.HandleFunc("GET /api/model", s.model)
	mux.HandleFunc("GET /api/analyse", s.analyse)
	mux.HandleFunc("POST /api/plan", s.writing(hosts, s.plan))
	mux.HandleFunc("POST /api/save", s.writing(hosts, s.save))
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if !hosts[strings.ToLower(r.Host)] {
			http.Error(w, fmt.Sprintf("refused: Host %q is not the address this page is served on (%s)", r.Host, addr), http.StatusForbidden)
			return
		}
		h := w.Header()
		h.Set("Content-Security-Policy", "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self'; connect-src 'self'; form-action 'none'; frame-ancestors 'none'; base-uri 'none'")
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("Cache-Control", "no-store")
		mux.ServeHTTP(w, r)
	})
}

// allowedHosts are the Host header values of requests to addr: the
// address itself, localhost with its port for a loopback address, and for
// a wildcard (every interface) each address of the machine's interfaces
// and localhost with the port, so a request must still name this machine
// by an IP address (a DNS-rebinding page names its own host).
func allowedHosts(addr net.Addr) map[string]bool {
	out := map[string]bool{strings.ToLower(addr.String()): true}
	ta, ok := addr.(*net.TCPAddr)
	if !ok {
		return out
	}
	port := fmt.Sprint(ta.Port)
	if ta.IP.IsLoopback() || ta.IP.IsUnspecified() {
		out[net.JoinHostPort("localhost", port)] = true
	}
	if ta.IP.IsUnspecified() {
		out[net.JoinHostPort("127.0.0.1", port)] = true
		out[net.JoinHostPort("::1", port)] = true
		if as, err := net.InterfaceAddrs(); err == nil {
			for _, a := range as {
				if n, ok := a.(*net.IPNet); ok {
					out[strings.ToLower(net.JoinHostPort(n.IP.String(), port))] = true
				}
			}
		}
	}
	return out
}

// page serves the HTML page with the write token filled in.
func (s *Server) page(w http.ResponseWriter, r *http.Request) {
	b, err := assets.ReadFile("assets/index.html")
	if err != nil {
		http.Error(w, err.Error(), http.StatusInternalServerError)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	_, _ = w.Write(bytes.Replace(b, []byte("@TOKEN@"), []byte(s.token), 1))
}

// asset serves one embedded file.
func asset(name, ctype string) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		b, err := assets.ReadFile(name)
		if err != nil {
			http.Error(w, err.Error(), http.StatusInternalServerError)
			return
		}
		w.Header().Set("Content-Type", ctype)
		_, _ = w.Write(b)
	}
}

// writeJSON answers v as JSON with status code.
func writeJSON(w http.ResponseWriter, code int, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		code, b = http.StatusInternalServerError, []byte(fmt.Sprintf(`{"error":%q}`, "tune: "+err.Error()))
	}
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(code)
	_, _ = w.Write(b)
}

// errorJSON answers {"error": message} with the status err calls for:
// 400 for a *RequestError, 500 otherwise.
func errorJSON(w http.ResponseWriter, err error) {
	code := http.StatusInternalServerError
	var re *RequestError
	if errors.As(err, &re) {
		code = http.StatusBadRequest
	}
	writeJSON(w, code, map[string]string{"error": err.Error()})
}

// modelDoc is the answer of /api/model.
type modelDoc struct {
	Generation int    `json:"generation"`
	File       string `json:"file"`
	LoadError  string `json:"load_error"`
	Model      any    `json:"model"`
}

func (s *Server) model(w http.ResponseWriter, r *http.Request) {
	s.mu.Lock()
	d := modelDoc{Generation: s.gen, File: s.cfg.Path, LoadError: s.loadErr, Model: s.backend.Model()}
	s.mu.Unlock()
	writeJSON(w, http.StatusOK, d)
}

func (s *Server) analyse(w http.ResponseWriter, r *http.Request) {
	b, _ := s.current()
	doc, err := b.Analyse(r.Context(), r.URL.Query())
	if err != nil {
		if r.Context().Err() != nil {
			return // the page asked for newer values; nobody reads this
		}
		errorJSON(w, err)
		return
	}
	writeJSON(w, http.StatusOK, doc)
}

// writing guards a request that changes the file: it must carry the
// page's token and, when the browser says where it comes from, come from
// the page itself.
func (s *Server) writing(hosts map[string]bool, h http.HandlerFunc) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		if o := r.Header.Get("Origin"); o != "" {
			u, err := url.Parse(o)
			if err != nil || u.Scheme != "http" || !hosts[strings.ToLower(u.Host)] {
				http.Error(w, "refused: request from another origin "+o, http.StatusForbidden)
				return
			}
		}
		if r.Header.Get("X-Nodal-Token") != s.token {
			http.Error(w, "refused: the request lacks this page's token", http.StatusForbidden)
			return
		}
		h(w, r)
	}
}

// DiffLine is one changed line of a planned rewrite (numbered from 1).
type DiffLine struct {
	Line int    `json:"line"`
	Old  string `json:"old"`
	New  string `json:"new"`
}

// planDoc is the answer of /api/plan: the changed lines and the digest
// that /api/save must send back to confirm exactly this change.
type planDoc struct {
	Diff   []DiffLine `json:"diff"`
	Digest string     `json:"digest"`
}

// saveRequest is the body of /api/save.
type saveRequest struct {
	Query  string `json:"query"`
	Digest string `json:"digest"`
}

// readQuery reads a request body holding a query string ("R=6.8k&C1=2n",
// with or without the leading "?").
func readQuery(r *http.Request) (string, error) {
	b, err := io.ReadAll(io.LimitReader(r.Body, 1<<20))
	if err != nil {
		return "", err
	}
	return strings.TrimPrefix(strings.TrimSpace(string(b)), "?"), nil
}

// planFor rewrites the current file with query q and returns the old and
// new texts and the digest of the pair.
func (s *Server) planFor(q string) (old, new []byte, digest string, err error) {
	vals, err := url.ParseQuery(q)
	if err != nil {
		return nil, nil, "", &RequestError{fmt.Errorf("query string: %w", err)}
	}
	s.mu.Lock()
	b, src, loadErr := s.backend, s.src, s.loadErr
	s.mu.Unlock()
	if loadErr != "" {
		// the file on disk is not the text of the last good circuit:
		// writing that text would undo the edit
		return nil, nil, "", &RequestError{fmt.Errorf("the file does not load now, so nothing is written over it; fix it first:\n%s", loadErr)}
	}
	out, err := b.Rewrite(vals)
	if err != nil {
		return nil, nil, "", err
	}
	h := sha256.New()
	fmt.Fprintf(h, "%d\n", len(src))
	h.Write(src)
	h.Write(out)
	return src, out, hex.EncodeToString(h.Sum(nil)), nil
}

func (s *Server) plan(w http.ResponseWriter, r *http.Request) {
	q, err := readQuery(r)
	if err != nil {
		errorJSON(w, &RequestError{err})
		return
	}
	old, new, digest, err := s.planFor(q)
	if err != nil {
		errorJSON(w, err)
		return
	}
	writeJSON(w, http.StatusOK, planDoc{Diff: LineDiff(old, new), Digest: digest})
}

func (s *Server) save(w http.ResponseWriter, r *http.Request) {
	var req saveRequest
	if err := json.NewDecoder(io.LimitReader(r.Body, 1<<20)).Decode(&req); err != nil {
		errorJSON(w, &RequestError{fmt.Errorf("save: %w", err)})
		return
	}
	s.reload(true) // an edit since the plan, even within one mtime tick, changes the digest
	_, new, digest, err := s.planFor(strings.TrimPrefix(req.Query, "?"))
	if err != nil {
		errorJSON(w, err)
		return
	}
	if digest != req.Digest {
		errorJSON(w, &RequestError{errors.New("the file or the values changed since the diff was shown: look at the new diff and confirm again")})
		return
	}
	if err := s.cfg.Save(new); err != nil {
		errorJSON(w, err)
		return
	}
	s.reload(true)
	writeJSON(w, http.StatusOK, map[string]any{"saved": s.cfg.Path})
}

// LineDiff lists the lines that differ between old and new, which have
// the same number of lines (a value rewrite never adds or removes one);
// when the counts differ, the lines from the first difference on are
// listed against empty ones.
func LineDiff(old, new []byte) []DiffLine {
	a := strings.Split(string(old), "\n")
	b := strings.Split(string(new), "\n")
	var out []DiffLine
	for i := 0; i < max(len(a), len(b)); i++ {
		var x, y string
		if i < len(a) {
			x = a[i]
		}
		if i < len(b) {
			y = b[i]
		}
		if x != y {
			out = append(out, DiffLine{Line: i + 1, Old: x, New: y})
		}
	}
	return out
}
