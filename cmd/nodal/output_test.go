package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// partsArgs writes the RC file's part list to path.
func partsArgs(path string) []string { return []string{"parts", rcFile, "-o", path} }

// leftovers lists the temporary files writeTo leaves in dir (none expected).
func leftovers(t *testing.T, dir string) []string {
	t.Helper()
	m, err := filepath.Glob(filepath.Join(dir, ".*.tmp-*"))
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func TestOutputOntoFIFOWritesInPlace(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	got := make(chan string, 1)
	go func() {
		f, err := os.Open(fifo) // blocks until the command opens it for writing
		if err != nil {
			got <- "open: " + err.Error()
			return
		}
		defer f.Close()
		b, _ := io.ReadAll(f)
		got <- string(b)
	}()
	r := runNodal(t, "", partsArgs(fifo)...)
	if r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	select {
	case s := <-got:
		if !strings.Contains(s, "R1") {
			t.Errorf("the FIFO's reader got %q; want the part list", s)
		}
	case <-time.After(time.Minute): // hang guard only
		t.Fatal("the FIFO's reader got nothing")
	}
	st, err := os.Lstat(fifo)
	if err != nil || st.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the FIFO was replaced: %v %v", st.Mode(), err)
	}
	if l := leftovers(t, dir); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

func TestOutputOntoSymlinkReplacesTarget(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "real")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	target := filepath.Join(sub, "parts.txt")
	if err := os.WriteFile(target, []byte("old"), 0o640); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.txt")
	if err := os.Symlink("real/parts.txt", link); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", partsArgs(link)...)
	if r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	st, err := os.Lstat(link)
	if err != nil || st.Mode()&os.ModeSymlink == 0 {
		t.Fatalf("the link was replaced: %v %v", st.Mode(), err)
	}
	b, err := os.ReadFile(target)
	if err != nil || !strings.Contains(string(b), "R1") {
		t.Errorf("the link's target holds %q (%v); want the part list", b, err)
	}
	if st, _ := os.Stat(target); st.Mode().Perm() != 0o640 {
		t.Errorf("target mode %04o; want 0640 kept", st.Mode().Perm())
	}
	if l := append(leftovers(t, dir), leftovers(t, sub)...); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

func TestOutputRefusals(t *testing.T) {
	dir := t.TempDir()
	ro := filepath.Join(dir, "readonly.txt")
	if err := os.WriteFile(ro, []byte("keep me"), 0o444); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name, path, want string
	}{
		{"read-only file", ro, "read-only (mode 0444)"},
		{"missing folder", filepath.Join(dir, "no-such", "out.txt"), "does not exist"},
		{"a folder", dir, "is a folder"},
		{"the input", rcFile, "input file"},
	}
	for _, tc := range cases {
		r := runNodal(t, "", partsArgs(tc.path)...)
		if r.code != exitInput || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%s: code %d, stderr %q; want exit 2 saying %q", tc.name, r.code, r.stderr, tc.want)
		}
	}
	b, _ := os.ReadFile(ro)
	st, _ := os.Stat(ro)
	if string(b) != "keep me" || st.Mode().Perm() != 0o444 {
		t.Errorf("the read-only file became %q mode %04o", b, st.Mode().Perm())
	}
	if l := leftovers(t, dir); len(l) > 0 {
		t.Errorf("left behind: %v", l)
	}
}

func TestOutputKeepsModeOfRegularFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "parts.txt")
	if err := os.WriteFile(p, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	if r := runNodal(t, "", partsArgs(p)...); r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	st, _ := os.Stat(p)
	if st.Mode().Perm() != 0o600 {
		t.Errorf("mode %04o; want 0600 kept", st.Mode().Perm())
	}
	fresh := filepath.Join(dir, "new.txt")
	if r := runNodal(t, "", partsArgs(fresh)...); r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	if st, _ := os.Stat(fresh); st.Mode().Perm() != 0o644 {
		t.Errorf("new file mode %04o; want 0644", st.Mode().Perm())
	}
}

// TestOutputOntoDeviceKeepsDevice writes onto a private copy of the null
// device (made with mknod, so a regression cannot replace the system's
// /dev/null); it is skipped where device files cannot be made or opened.
func TestOutputOntoDeviceKeepsDevice(t *testing.T) {
	dev := filepath.Join(t.TempDir(), "null")
	if err := syscall.Mknod(dev, syscall.S_IFCHR|0o666, 1<<8|3); err != nil {
		t.Skipf("cannot make a device file here: %v", err)
	}
	if f, err := os.OpenFile(dev, os.O_WRONLY, 0); err != nil {
		t.Skipf("cannot open a device file here (nodev mount?): %v", err)
	} else {
		f.Close()
	}
	if r := runNodal(t, "", partsArgs(dev)...); r.code != 0 {
		t.Fatalf("code %d, stderr %q", r.code, r.stderr)
	}
	st, err := os.Lstat(dev)
	if err != nil || st.Mode()&os.ModeCharDevice == 0 {
		t.Fatalf("%s is no longer a character device: %v %v", dev, st.Mode(), err)
	}
}

func TestReportDefaultFileKeepsForeignFile(t *testing.T) {
	t.Chdir(t.TempDir())
	const theirs = "<html>someone else's page</html>"
	if err := os.WriteFile(defaultReportName, []byte(theirs), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "report")
	if r.code != 0 || !strings.Contains(r.stderr, "writing nodal-report-2.html instead") {
		t.Fatalf("code %d, stderr %q; want the other name said", r.code, r.stderr)
	}
	if b, _ := os.ReadFile(defaultReportName); string(b) != theirs {
		t.Errorf("%s was overwritten", defaultReportName)
	}
	// A second run replaces its own report, not the foreign file, silently.
	r = runNodal(t, "", "report")
	if r.code != 0 || !strings.Contains(r.stderr, "wrote nodal-report-2.html") {
		t.Fatalf("second run: code %d, stderr %q", r.code, r.stderr)
	}
	if _, err := os.Stat("nodal-report-3.html"); err == nil {
		t.Error("a second run made nodal-report-3.html instead of replacing its own report")
	}
	r = runNodal(t, "", "report", "--force")
	b, _ := os.ReadFile(defaultReportName)
	if r.code != 0 || !strings.Contains(string(b), reportMarker) {
		t.Errorf("--force: code %d, stderr %q; the file does not hold the report", r.code, r.stderr)
	}
	// Our own report at the default name is replaced without a word.
	r = runNodal(t, "", "report")
	if r.code != 0 || strings.Contains(r.stderr, "instead") {
		t.Errorf("own report: code %d, stderr %q", r.code, r.stderr)
	}
}

// TestOutputCheckedBeforeWork runs every command that writes files with an
// already cancelled context: a command that checks its output paths first
// fails on the path; one that checks only after the analysis would fail on
// the cancelled work (or write nothing) instead.
func TestOutputCheckedBeforeWork(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "no-such", "out")
	bridge := "testdata/bridge_pass.nodal"
	cases := [][]string{
		{"parts", rcFile, "-o", missing},
		{"equations", rcFile, "-o", missing},
		{"sweep", rcFile, "--out", "out", "-o", missing},
		{"sweep", rcFile, "--out", "out", "--plot", missing + ".svg"},
		{"transfer", rcFile, "--out", "out", "-o", missing},
		{"transfer", rcFile, "--out", "out", "--plot", missing + ".svg"},
		{"check", rcFile, "--out", "out", "--tf", "1/(1+s*R1*C1)", "-o", missing},
		{"drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1k*t)", "-o", missing},
		{"time", rcFile, "--out", "out", "-o", missing},
		{"time", rcFile, "--input", "impulse", "--out", "out", "--plot", missing + ".svg"},
		{"tolerance", bridge, "--out", "out", "--metric", "f3db", "--runs", "100000", "-o", missing},
		{"tolerance", bridge, "--out", "out", "--metric", "f3db", "--runs", "100000", "--plot", missing + ".svg"},
		{"snap", bridge, "--series", "E24", "-o", missing},
		{"report", rcFile, "-o", missing},
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	for _, args := range cases {
		var out, errb bytes.Buffer
		e := &env{ctx: ctx, stdin: strings.NewReader(""), stdout: &out, stderr: &errb}
		code := run(e, args)
		if code != exitInput || !strings.Contains(errb.String(), "does not exist") {
			t.Errorf("%v: code %d, stderr %q; want the missing folder named before any work", args, code, errb.String())
		}
	}
	r := runNodal(t, "", "sweep", rcFile, "--out", "out", "-o", filepath.Join(dir, "a"), "--plot", filepath.Join(dir, "a"))
	if r.code != exitInput || !strings.Contains(r.stderr, "name the same file") {
		t.Errorf("-o and --plot the same: code %d, stderr %q", r.code, r.stderr)
	}
}

// TestOutputDevStdoutIsStandardOutput: -o /dev/stdout writes through the
// command's standard output, never reopening what is behind it.
func TestOutputDevStdoutIsStandardOutput(t *testing.T) {
	for _, p := range []string{"/dev/stdout", "/dev/fd/1", "/proc/self/fd/1"} {
		r := runNodal(t, "", partsArgs(p)...)
		if r.code != 0 || !strings.Contains(r.stdout, "R1") {
			t.Errorf("-o %s: code %d, stdout %q, stderr %q", p, r.code, r.stdout, r.stderr)
		}
	}
}

// TestWriteJSONMatchesIndent: the streaming indentation gives the bytes
// of encoding/json's own indenting encoder (the reference), on nesting,
// empty containers, escapes and HTML-escaped characters.
func TestWriteJSONMatchesIndent(t *testing.T) {
	cases := []any{
		map[string]any{"a": []any{}, "b": map[string]any{}, "c": []any{1.5, nil, "x,y:{z}"}, "d": `q"\"[`},
		[]any{map[string]any{"k": []any{[]any{}, []any{1}}}, "<&>", 1e-300, true},
		"plain",
		[]int{},
	}
	for _, v := range cases {
		var want, got bytes.Buffer
		enc := json.NewEncoder(&want)
		enc.SetIndent("", "  ")
		if err := enc.Encode(v); err != nil {
			t.Fatal(err)
		}
		if err := writeJSON(&got, v); err != nil {
			t.Fatal(err)
		}
		if got.String() != want.String() {
			t.Errorf("got\n%s\nwant\n%s", got.String(), want.String())
		}
	}
}

// TestWriteJSONNoNegativeZero: a float that is -0 is written as 0, in an
// array, an object and at the top level; other negative numbers, and
// "-0" inside a string, are kept.
func TestWriteJSONNoNegativeZero(t *testing.T) {
	negZero := math.Copysign(0, -1)
	cases := []struct {
		v    any
		want string
	}{
		{[]float64{negZero, -0.5, -1e-300, 0}, "[\n  0,\n  -0.5,\n  -1e-300,\n  0\n]\n"},
		{map[string]any{"group_delay_s": negZero, "s": "-0"}, "{\n  \"group_delay_s\": 0,\n  \"s\": \"-0\"\n}\n"},
		{negZero, "0\n"},
		{[]float64{-10, -0.0625}, "[\n  -10,\n  -0.0625\n]\n"},
	}
	for _, tc := range cases {
		var got bytes.Buffer
		if err := writeJSON(&got, tc.v); err != nil {
			t.Fatal(err)
		}
		if got.String() != tc.want {
			t.Errorf("writeJSON(%v) = %q, want %q", tc.v, got.String(), tc.want)
		}
	}
}
