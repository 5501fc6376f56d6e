package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"nodal/analysis/stdvalue"
	"nodal/cmd/nodal/tune"
	"nodal/netlist"
)

// tuneFile is the vibration logger's RC anti-alias filter of the tune
// tests: R = 10 kΩ, C = 10 nF, f−3dB = 1/(2πRC) = 1.5915 kHz (common
// practice), with `require f3db above 1.2kHz`.
const tuneFile = "testdata/tune_logger_rc.nodal"

// rcF3dBHz is 1/(2πRC), the −3 dB frequency of a first-order RC low-pass
// (common practice).
func rcF3dBHz(r, c float64) float64 { return 1 / (2 * math.Pi * r * c) }

// commandWordOf returns the word that names the command whose struct has
// the type of cmd in the command tree (cli), so a test runs it by its type
// whatever it is called.
func commandWordOf(t *testing.T, cmd any) string {
	t.Helper()
	ct := reflect.TypeOf(cmd)
	tree := reflect.TypeOf(cli{})
	for i := 0; i < tree.NumField(); i++ {
		f := tree.Field(i)
		if f.Type != ct {
			continue
		}
		if n := f.Tag.Get("name"); n != "" {
			return n
		}
		return strings.ToLower(f.Name)
	}
	t.Fatalf("no command of type %v in the command tree", ct)
	return ""
}

// tuneLog is a bytes.Buffer safe for a writer and a reader at once.
type tuneLog struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *tuneLog) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *tuneLog) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// tuneServer is `nodal tune` running in-process.
type tuneServer struct {
	url    string // http://127.0.0.1:PORT/
	stderr *tuneLog
	stop   func() int // cancels the run (as Ctrl-C does) and returns its exit status
}

// startTune runs `nodal tune ARGS...` in-process and waits for its URL on
// stderr. The run is stopped when the test ends; it must exit 0.
func startTune(t *testing.T, args ...string) *tuneServer {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	errb := &tuneLog{}
	e := &env{ctx: ctx, temps: &tempFiles{}, stdin: strings.NewReader(""), stdout: io.Discard, stderr: errb}
	code := make(chan int, 1)
	go func() { code <- run(e, append([]string{commandWordOf(t, tuneCmd{})}, args...)) }()
	s := &tuneServer{stderr: errb}
	var once sync.Once
	status := -1
	s.stop = func() int {
		once.Do(func() {
			cancel()
			select {
			case status = <-code:
			case <-time.After(5 * time.Second):
				t.Error("nodal tune did not stop within 5 s of its context being cancelled")
			}
		})
		return status
	}
	t.Cleanup(func() {
		if c := s.stop(); c != exitOK {
			t.Errorf("nodal tune exited %d after cancel, want 0; stderr:\n%s", c, errb.String())
		}
	})
	re := regexp.MustCompile(`http://127\.0\.0\.1:[0-9]+/`)
	deadline := time.Now().Add(5 * time.Second)
	for s.url == "" {
		select {
		case c := <-code:
			t.Fatalf("nodal tune exited %d before serving: %s", c, errb.String())
		default:
		}
		if time.Now().After(deadline) {
			t.Fatalf("no URL on stderr: %q", errb.String())
		}
		s.url = re.FindString(errb.String())
		time.Sleep(10 * time.Millisecond)
	}
	return s
}

// get fetches path from the server and returns the status and body.
func (s *tuneServer) get(t *testing.T, path string) (int, []byte) {
	t.Helper()
	resp, err := http.Get(s.url + strings.TrimPrefix(path, "/"))
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, b
}

// post sends body with the page's token (read from the page).
func (s *tuneServer) post(t *testing.T, path, body string) (int, []byte) {
	t.Helper()
	_, page := s.get(t, "/")
	m := regexp.MustCompile(`name="nodal-token" content="([0-9a-f]+)"`).FindSubmatch(page)
	if m == nil {
		t.Fatal("no token in the page")
	}
	req, _ := http.NewRequest("POST", s.url+strings.TrimPrefix(path, "/"), strings.NewReader(body))
	req.Header.Set("X-Nodal-Token", string(m[1]))
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, b
}

// tuneJSONAt unmarshals b and returns the value under the dotted key path.
func tuneJSONAt(t *testing.T, b []byte, path string) any {
	t.Helper()
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, b)
	}
	if path == "" {
		return v
	}
	for _, k := range strings.Split(path, ".") {
		m, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%s: not an object at %q", path, k)
		}
		v = m[k]
	}
	return v
}

// TestTuneJSONMatchesTransfer: the transfer document of --print and of
// GET /api/analyse for a let set in the query equals the transfer
// command's document with --set; for a part value set in the query, the
// transfer command's document of the file with that value written in;
// and the −3 dB frequency is 1/(2πRC) (common practice).
func TestTuneJSONMatchesTransfer(t *testing.T) {
	tfWord := commandWordOf(t, transferCmd{})
	r := runNodal(t, "", "tune", tuneFile, "--print", "?R=6.8k")
	if r.code != 0 {
		t.Fatalf("tune --print: exit %d: %s", r.code, r.stderr)
	}
	ref := runNodal(t, "", tfWord, tuneFile, "--out", "out", "--set", "R=6.8k", "--format", "json")
	if ref.code != 0 {
		t.Fatalf("%s: exit %d: %s", tfWord, ref.code, ref.stderr)
	}
	got, want := tuneJSONAt(t, []byte(r.stdout), "transfer"), tuneJSONAt(t, []byte(ref.stdout), "")
	if !reflect.DeepEqual(got, want) {
		t.Errorf("tune's transfer document differs from %s --set R=6.8k:\n%v\n%v", tfWord, got, want)
	}
	f3 := tuneJSONAt(t, []byte(r.stdout), "transfer.f3db_hz").([]any)
	if want := rcF3dBHz(6.8e3, 10e-9); len(f3) != 1 || math.Abs(f3[0].(float64)-want) > 1e-9*want {
		t.Errorf("f3db_hz = %v, want [%g] = 1/(2πRC)", f3, want)
	}

	// a part value: against the file with R1's value written as 4.7k
	src, err := os.ReadFile(tuneFile)
	if err != nil {
		t.Fatal(err)
	}
	edited := filepath.Join(t.TempDir(), "r1.nodal")
	if err := os.WriteFile(edited, bytes.Replace(src, []byte("(in, out) R ±1%"), []byte("(in, out) 4.7k ±1%"), 1), 0o644); err != nil {
		t.Fatal(err)
	}
	ref2 := runNodal(t, "", tfWord, edited, "--out", "out", "--format", "json")
	s := startTune(t, tuneFile)
	code, body := s.get(t, "/api/analyse?R1=4k7")
	if code != 200 {
		t.Fatalf("analyse: %d %s", code, body)
	}
	if got, want := tuneJSONAt(t, body, "transfer"), tuneJSONAt(t, []byte(ref2.stdout), ""); !reflect.DeepEqual(got, want) {
		t.Errorf("tune's transfer document for R1=4k7 differs from %s of the file with 4.7k:\n%v\n%v", tfWord, got, want)
	}
	// the endpoint and --print give the same document
	_, body = s.get(t, "/api/analyse?R=6.8k")
	if got, want := tuneJSONAt(t, body, ""), tuneJSONAt(t, []byte(r.stdout), ""); !reflect.DeepEqual(got, want) {
		t.Error("GET /api/analyse?R=6.8k differs from --print ?R=6.8k")
	}
	if q := tuneJSONAt(t, body, "query"); q != "R=6.8k" {
		t.Errorf("query = %v, want R=6.8k", q)
	}
}

// TestTuneVerdictsAndStability: the requirement's verdict follows the
// value (f3db above 1.2 kHz: R = 10k passes, 15k gives 1.061 kHz and
// fails), and an equal-component Sallen-Key stage with gain K is stable
// for K < 3 and has its pole pair at (K − 3 ± √((3 − K)² − 4))/(2RC) in
// the right half-plane for K > 3 (Sallen and Key, 1955).
func TestTuneVerdictsAndStability(t *testing.T) {
	for _, c := range []struct {
		query string
		pass  bool
	}{{"", true}, {"?R=15k", false}, {"?C=15n", false}, {"?R1=8.2k", true}} {
		r := runNodal(t, "", "tune", tuneFile, "--print", c.query+"&")
		if r.code != 0 {
			t.Fatalf("%s: exit %d: %s", c.query, r.code, r.stderr)
		}
		reqs := tuneJSONAt(t, []byte(r.stdout), "requirements").([]any)
		v := reqs[0].(map[string]any)
		if v["pass"] != c.pass || v["line"] != 12.0 {
			t.Errorf("%s: verdict %v", c.query, v)
		}
	}
	const rc = 10e3 * 10e-9
	for _, k := range []float64{2, 2.9, 3.5} {
		r := runNodal(t, "", "tune", "testdata/tune_sallen_key.nodal", "--print", fmt.Sprintf("K=%g", k))
		if r.code != 0 {
			t.Fatalf("K=%g: exit %d: %s", k, r.code, r.stderr)
		}
		// "stability" is a string, as in every other command's JSON.
		st, ok := tuneJSONAt(t, []byte(r.stdout), "stability").(string)
		if want := map[bool]string{true: "stable", false: "unstable"}[k < 3]; !ok || st != want {
			t.Errorf("K=%g: stability %v, want %q", k, tuneJSONAt(t, []byte(r.stdout), "stability"), want)
		}
		if k < 3 {
			continue
		}
		re, im := (k-3)/(2*rc), math.Sqrt(4-(3-k)*(3-k))/(2*rc)
		poles := tuneJSONAt(t, []byte(r.stdout), "unstable_poles").([]any)
		if len(poles) != 2 {
			t.Fatalf("K=%g: unstable poles %v", k, poles)
		}
		for _, p := range poles {
			z := p.(map[string]any)
			if math.Abs(z["re"].(float64)-re) > 1e-6*re || math.Abs(math.Abs(z["im"].(float64))-im) > 1e-6*im {
				t.Errorf("K=%g: pole %v, want %g ± j%g", k, z, re, im)
			}
		}
		if reason, _ := tuneJSONAt(t, []byte(r.stdout), "stability_reason").(string); !strings.Contains(reason, "right half-plane") {
			t.Errorf("K=%g: reason %q", k, reason)
		}
	}
}

// TestTuneBadValues: a value that does not parse, an unknown name or a
// bad response is 400 with the message (file-style, with a caret), and
// the server goes on serving; --print says the same with exit status 2.
func TestTuneBadValues(t *testing.T) {
	s := startTune(t, tuneFile)
	for _, c := range []struct{ query, want string }{
		{"R=4.7q", "R:1:3: bad value: \"4.7q\""},
		{"R1=-1k", "must be positive"},
		{"R1=1uF", "R1:1:4"},
		{"Rx=1k", "Rx is not a let or part value"},
		{"R=1k&R=2k", "given 2 times"},
		{"%40out=nowhere", "no such response"},
	} {
		code, body := s.get(t, "/api/analyse?"+c.query)
		msg, _ := tuneJSONAt(t, body, "error").(string)
		if code != 400 || !strings.Contains(msg, c.want) {
			t.Errorf("%s: %d %s, want 400 with %q", c.query, code, body, c.want)
		}
	}
	code, body := s.get(t, "/api/analyse?R=4.7k")
	if code != 200 {
		t.Fatalf("after bad requests: %d %s", code, body)
	}
	if m, _ := tuneJSONAt(t, body, "error").(string); m != "" {
		t.Errorf("error %q", m)
	}
	code, body = s.get(t, "/api/analyse?%40out=in")
	if code != 200 || tuneJSONAt(t, body, "response") != "in" {
		t.Errorf("@out=in: %d %s", code, body)
	}
	r := runNodal(t, "", "tune", tuneFile, "--print", "?R=4.7q")
	if r.code != exitInput || !strings.Contains(r.stderr, "R=4.7q\n") || !strings.Contains(r.stderr, "^") {
		t.Errorf("--print with a bad value: exit %d, stderr %q", r.code, r.stderr)
	}
}

// TestTuneRefusesAddress: a host name is refused with exit status 2
// before anything is served.
func TestTuneRefusesAddress(t *testing.T) {
	for _, addr := range []string{"example.com:8040", "127.0.0.1"} {
		r := runNodal(t, "", "tune", tuneFile, "--addr", addr)
		if r.code != exitInput || !strings.Contains(r.stderr, "--addr") {
			t.Errorf("--addr %s: exit %d, stderr %q", addr, r.code, r.stderr)
		}
	}
}

// TestTuneSaveMatchesSnap: writing values through the page's save path
// gives the same file as snap's rewriting of the same values (comments
// and layout kept, the let rewritten), and the file read again has them.
func TestTuneSaveMatchesSnap(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "logger.nodal")
	src, err := os.ReadFile(tuneFile)
	if err != nil {
		t.Fatal(err)
	}
	src = bytes.Replace(src, []byte("let R = 10k "), []byte("let R = 9.1k"), 1)
	src = bytes.Replace(src, []byte("let C = 10nF"), []byte("let C = 14nF"), 1)
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	e12, _ := stdvalue.SeriesByName("E12")
	snap, err := stdvalue.Snap(path, src, nil, map[netlist.Kind]stdvalue.Series{netlist.Resistor: e12, netlist.Capacitor: e12})
	if err != nil {
		t.Fatal(err)
	}
	var q []string
	for _, ch := range snap.Changes {
		q = append(q, ch.Part+"="+url.QueryEscape(netlist.FormatLiteral(ch.New, "", 6)))
	}
	if len(q) != 2 {
		t.Fatalf("snap changes %+v", snap.Changes)
	}
	s := startTune(t, path)
	code, body := s.post(t, "/api/plan", strings.Join(q, "&"))
	if code != 200 {
		t.Fatalf("plan: %d %s", code, body)
	}
	diff := tuneJSONAt(t, body, "diff").([]any)
	if len(diff) != 2 {
		t.Errorf("diff %v, want the two let lines", diff)
	}
	digest := tuneJSONAt(t, body, "digest").(string)
	req, _ := json.Marshal(map[string]string{"query": strings.Join(q, "&"), "digest": digest})
	if code, body := s.post(t, "/api/save", string(req)); code != 200 {
		t.Fatalf("save: %d %s", code, body)
	}
	got, _ := os.ReadFile(path)
	if !bytes.Equal(got, snap.Source) {
		t.Errorf("saved file differs from snap's:\n%s\n--- snap:\n%s", got, snap.Source)
	}
	if !bytes.Contains(got, []byte("let R = 10k     # metal film")) || !bytes.Contains(got, []byte("let C = 15nF     # C0G")) {
		t.Errorf("let lines not rewritten in place:\n%s", got)
	}
	c, err := netlist.Load(path, got, nil)
	if err != nil {
		t.Fatal(err)
	}
	r1, _ := c.Part("R1")
	c1, _ := c.Part("C1")
	if r1.Value != 10e3 || math.Abs(c1.Value-15e-9) > 1e-12*15e-9 {
		t.Errorf("re-read: R1 %g, C1 %g", r1.Value, c1.Value)
	}
	// the page reloads: the new values are the nominal ones
	deadline := time.Now().Add(3 * time.Second)
	for {
		_, m := s.get(t, "/api/model")
		if strings.Contains(string(m), `"name":"R","what":"let","unit":"","nominal":10000`) {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("model after save: %s", m)
		}
		time.Sleep(20 * time.Millisecond)
	}
	// a let set directly is written into its line too
	code, body = s.post(t, "/api/plan", "R=6.8k&R1=6.8k")
	if code != 200 || !strings.Contains(string(body), `"new":"let R = 6.8k     # metal film"`) || !strings.Contains(string(body), `"new":"R1:  resistor (in, out) 6.8k ±1%"`) {
		t.Errorf("plan of a let and the part using it: %d %s", code, body)
	}
}

// TestTuneConcurrentRequests: requests for different values at once each
// get the −3 dB frequency of their own value, 1/(2πRC) (common practice):
// the analyses share no mutable state.
func TestTuneConcurrentRequests(t *testing.T) {
	s := startTune(t, tuneFile)
	rs := []float64{1e3, 2.2e3, 4.7e3, 6.8e3, 10e3, 15e3, 33e3, 68e3}
	var wg sync.WaitGroup
	errs := make(chan error, len(rs)*3)
	for round := 0; round < 3; round++ {
		for _, r := range rs {
			wg.Add(1)
			go func(r float64) {
				defer wg.Done()
				resp, err := http.Get(fmt.Sprintf("%sapi/analyse?R1=%g&C=%g", s.url, r, 10e-9))
				if err != nil {
					errs <- err
					return
				}
				defer resp.Body.Close()
				var doc struct {
					Transfer struct {
						F3dBHz []float64 `json:"f3db_hz"`
					} `json:"transfer"`
				}
				if err := json.NewDecoder(resp.Body).Decode(&doc); err != nil {
					errs <- err
					return
				}
				if want := rcF3dBHz(r, 10e-9); len(doc.Transfer.F3dBHz) != 1 || math.Abs(doc.Transfer.F3dBHz[0]-want) > 1e-9*want {
					errs <- fmt.Errorf("R1 = %g: f3db %v, want %g", r, doc.Transfer.F3dBHz, want)
				}
			}(r)
		}
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
}

// TestTuneServingText: every interface (0.0.0.0 named with --addr) and an
// address that is not loopback are served with a warning on standard
// error that the page is reachable from the network; loopback without.
func TestTuneServingText(t *testing.T) {
	for _, c := range []struct {
		addr string
		warn string
	}{
		{"127.0.0.1:0", ""},
		{"0.0.0.0:0", "serving on every interface"},
	} {
		ln, err := tune.Listen(c.addr, true)
		if err != nil {
			t.Fatal(err)
		}
		text := tuneServingText(ln, "f.nodal")
		ln.Close()
		switch {
		case c.warn == "" && strings.Contains(text, "warning"):
			t.Errorf("%s: %q, want no warning", c.addr, text)
		case c.warn != "" && !(strings.Contains(text, "warning: "+c.warn) && strings.Contains(text, "reachable from the network") && strings.Contains(text, "rewrite f.nodal")):
			t.Errorf("%s: %q, want the warning %q", c.addr, text, c.warn)
		}
	}
}
