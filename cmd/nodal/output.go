package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
)

// Output files. Every file a command writes goes through writeTo, and every
// command checks its output paths with checkOutput before any analysis runs,
// so a mistyped folder or the input file named as output fails at once.
//
//   - "", "-", /dev/stdout, /dev/fd/1 and /proc/self/fd/1 are standard
//     output, written through the open descriptor.
//   - An existing target that is not a regular file (a character device
//     such as /dev/null, a FIFO, a socket) is opened and written in place:
//     never renamed over, never replaced.
//   - A symbolic link is followed to the file it names, and that file is
//     replaced atomically in its own folder; the link stays a link.
//   - A regular file is written atomically: into a temporary file
//     ".NAME.tmp-*" in the same folder, then renamed over the target, so a
//     failed or interrupted run never leaves a half-written file. The
//     replacement keeps the target's permission bits (new files get 0644).
//   - A target that is read-only (no write bit) or that the user may not
//     write, a folder that does not exist or may not be written, a folder
//     as target and any of the command's input files are refused with a
//     message before anything is written.
//   - The temporary file is removed on every error and when the run is
//     interrupted: SIGINT, SIGTERM or SIGHUP cancel e.ctx and writes then
//     fail (a command that writes partial results on purpose, as
//     tolerance does, writes with an uncancelled context); a second signal
//     exits at once after removing the temporary files listed in e.temps.

// outputTarget is a checked output path.
type outputTarget struct {
	path    string      // as the user gave it, for messages
	real    string      // the file that receives the output, links followed
	special bool        // exists and is not a regular file: written in place
	perm    fs.FileMode // permission bits of the replacement file
}

// maxLinkHops bounds the symbolic links followed for one output path, as
// the kernel does (40 on Linux).
const maxLinkHops = 40

// checkOutput checks that path can receive a command's output without
// touching any of the protect files (the inputs) and returns where the
// output goes. It writes nothing. Standard output (see isStdout) gives nil
// and no error.
func checkOutput(path string, protect []string) (*outputTarget, error) {
	if isStdout(path) {
		return nil, nil
	}
	real, err := followLinks(path)
	if err != nil {
		return nil, err
	}
	if err := refuseInput(path, real, protect); err != nil {
		return nil, err
	}
	t := &outputTarget{path: path, real: real, perm: 0o644}
	st, err := os.Stat(real)
	switch {
	case err == nil && st.IsDir():
		return nil, fmt.Errorf("cannot write %s: it is a folder; give a file name", path)
	case err == nil && !st.Mode().IsRegular():
		t.special = true
		return t, nil
	case err == nil:
		t.perm = st.Mode().Perm()
		if t.perm&0o222 == 0 {
			return nil, fmt.Errorf("cannot write %s: the file is read-only (mode %04o); make it writable (chmod u+w) or choose another file", path, t.perm)
		}
		if err := syscall.Access(real, wOK); err != nil {
			return nil, fmt.Errorf("cannot write %s: you may not write this file (%w); choose another file", path, err)
		}
	case !errors.Is(err, fs.ErrNotExist):
		return nil, fmt.Errorf("cannot write %s: %w", path, err)
	}
	dir := filepath.Dir(real)
	dst, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, fmt.Errorf("cannot write %s: the folder %s does not exist", path, dir)
	case err != nil:
		return nil, fmt.Errorf("cannot write %s: %w", path, err)
	case !dst.IsDir():
		return nil, fmt.Errorf("cannot write %s: %s is not a folder", path, dir)
	}
	if err := syscall.Access(dir, wOK|xOK); err != nil {
		return nil, fmt.Errorf("cannot write %s: the folder %s is not writable (%w)", path, dir, err)
	}
	return t, nil
}

// access(2) modes.
const (
	wOK = 0x2
	xOK = 0x1
)

// checkOutputs checks a command's output paths before any work: each
// against the inputs, and no two naming the same file.
func checkOutputs(inputs []string, outputs ...string) error {
	var seen []*outputTarget
	for _, o := range outputs {
		t, err := checkOutput(o, inputs)
		if err != nil {
			return err
		}
		if t == nil {
			continue
		}
		for _, s := range seen {
			if sameFile(s.real, t.real) {
				return fmt.Errorf("%s and %s name the same file: give each output its own", s.path, t.path)
			}
		}
		seen = append(seen, t)
	}
	return nil
}

// sameFile reports whether a and b are one path or one existing file.
func sameFile(a, b string) bool {
	absA, _ := filepath.Abs(a)
	absB, _ := filepath.Abs(b)
	if absA == absB {
		return true
	}
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	return errA == nil && errB == nil && os.SameFile(sa, sb)
}

// isStdout reports whether path means standard output: "", "-" or one of
// the names of file descriptor 1 (/dev/stdout, /dev/fd/1,
// /proc/self/fd/1). Those are written through the open descriptor, so
// `-o /dev/stdout >> log` appends as the shell set it up instead of
// reopening (and replacing or overwriting) the file behind it.
func isStdout(path string) bool {
	if path == "" || path == "-" {
		return true
	}
	switch filepath.Clean(path) {
	case "/dev/stdout", "/dev/fd/1", "/proc/self/fd/1":
		return true
	}
	return false
}

// followLinks returns the file path names once every symbolic link in its
// last element is followed (a dangling link gives the path it points at).
// An existing path that is not a link is returned unchanged, so magic links
// such as /dev/stdout → /proc/self/fd/1 → pipe:[…] are left to the kernel.
func followLinks(path string) (string, error) {
	p := path
	for range maxLinkHops {
		st, err := os.Lstat(p)
		if err != nil || st.Mode()&fs.ModeSymlink == 0 {
			return p, nil
		}
		if fst, err := os.Stat(p); err == nil && !fst.Mode().IsRegular() {
			return p, nil // a device, FIFO or socket behind the link: open the link
		}
		dst, err := os.Readlink(p)
		if err != nil {
			return "", fmt.Errorf("cannot write %s: %w", path, err)
		}
		if !filepath.IsAbs(dst) {
			dst = filepath.Join(filepath.Dir(p), dst)
		}
		p = dst
	}
	return "", fmt.Errorf("cannot write %s: more than %d symbolic links to follow", path, maxLinkHops)
}

// writeTo sends what fill writes to path, or to stdout when path is "" or
// "-", by the rules at the top of this file. It refuses to write over any
// of the protect files (the inputs).
func writeTo(e *env, path string, protect []string, fill func(w io.Writer) error) error {
	t, err := checkOutput(path, protect)
	if err != nil {
		return err
	}
	if t == nil {
		bw := bufio.NewWriter(e.stdout)
		if err := fill(ctxWriter{e.ctx, bw}); err != nil {
			return err
		}
		return bw.Flush()
	}
	if t.special {
		return writeInPlace(e.ctx, t, fill)
	}
	return writeReplace(e.ctx, e.temps, t, fill)
}

// writeInPlace writes to a device, FIFO or socket without replacing it.
func writeInPlace(ctx context.Context, t *outputTarget, fill func(w io.Writer) error) error {
	f, err := os.OpenFile(t.real, os.O_WRONLY, 0)
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	bw := bufio.NewWriter(f)
	err = fill(ctxWriter{ctx, bw})
	if err == nil {
		err = bw.Flush()
	}
	if cerr := f.Close(); err == nil && cerr != nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	return nil
}

// writeReplace writes a temporary file beside t.real and renames it over
// t.real; the temporary file is removed on every failure.
func writeReplace(ctx context.Context, temps *tempFiles, t *outputTarget, fill func(w io.Writer) error) error {
	tmp, err := os.CreateTemp(filepath.Dir(t.real), "."+filepath.Base(t.real)+".tmp-*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	tmpName := tmp.Name()
	temps.add(tmpName)
	ok := false
	defer func() {
		if !ok {
			tmp.Close()
			os.Remove(tmpName)
		}
		temps.done(tmpName)
	}()
	bw := bufio.NewWriter(tmp)
	if err := fill(ctxWriter{ctx, bw}); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	if err := os.Chmod(tmpName, t.perm); err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, errOutputInterrupted)
	}
	if err := os.Rename(tmpName, t.real); err != nil {
		return fmt.Errorf("cannot write %s: %w", t.path, err)
	}
	ok = true
	return nil
}

// tempFiles lists the temporary output files being written, so that a
// forced exit (a second signal) can remove them. A nil *tempFiles keeps no
// list (tests that run commands in-process).
type tempFiles struct {
	mu    sync.Mutex
	names map[string]bool
}

func (t *tempFiles) add(name string) {
	if t == nil {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.names == nil {
		t.names = map[string]bool{}
	}
	t.names[name] = true
}

func (t *tempFiles) done(name string) {
	if t == nil {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	delete(t.names, name)
}

// removeAll deletes every listed file; called just before a forced exit.
func (t *tempFiles) removeAll() {
	if t == nil {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	for n := range t.names {
		os.Remove(n)
	}
	t.names = nil
}

// keepWriting returns a copy of e whose context is never cancelled, for a
// command that writes what an interrupted run finished on purpose (a
// second signal still exits at once and removes the temporary file).
func (e *env) keepWriting() *env {
	k := *e
	k.ctx = context.WithoutCancel(e.ctx)
	return &k
}

// errOutputInterrupted is returned by writes and tables once the run is
// interrupted: exit status 2 with a note that the output is incomplete.
var errOutputInterrupted = fmt.Errorf("output stopped: %w", errInterrupted)

// ctxWriter fails every write once ctx is done, so an interrupted run
// stops writing and its temporary file is removed. It is the writer every
// fill function gets; writerContext recovers ctx from it, so long
// formatting (a table of a million rows) can stop early too.
type ctxWriter struct {
	ctx context.Context
	w   io.Writer
}

// writerContext returns the context of a writer writeTo handed out, or
// context.Background() for any other writer.
func writerContext(w io.Writer) context.Context {
	if cw, ok := w.(ctxWriter); ok {
		return cw.ctx
	}
	return context.Background()
}

func (c ctxWriter) Write(p []byte) (int, error) {
	if c.ctx.Err() != nil {
		return 0, errOutputInterrupted
	}
	return c.w.Write(p)
}

// refuseInput returns an error when path (or real, the file it leads to)
// names the same file as one of the inputs.
func refuseInput(path, real string, inputs []string) error {
	for _, in := range inputs {
		if in == "" || in == "-" {
			continue
		}
		if sameFile(in, path) || sameFile(in, real) {
			return fmt.Errorf("refusing to overwrite the input file %s", in)
		}
	}
	return nil
}

// writeJSON writes v as indented JSON with a trailing newline, in one
// encoding pass: the compact encoding is indented on its way to w (the
// same bytes as json.Encoder.SetIndent("", "  "), without its second
// buffer and pass over the document).
func writeJSON(w io.Writer, v any) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	iw := &indentWriter{w: bw}
	if err := json.NewEncoder(iw).Encode(v); err != nil {
		return err
	}
	return bw.Flush()
}

// indentWriter indents compact JSON as it streams through: a newline and
// two spaces per level after an opening bracket and after each comma, a
// space after each colon, strings copied verbatim; an empty {} or [] stays
// as it is. A negative zero is written as 0.
type indentWriter struct {
	w       *bufio.Writer
	depth   int
	inStr   bool
	escape  bool
	pending bool // an opening bracket waits for its first member
	minus   bool // a '-' outside a string is held until the next byte
	negZero bool // "-0" is held: a negative zero if a delimiter follows
}

func (iw *indentWriter) newline() {
	iw.w.WriteByte('\n')
	for i := 0; i < iw.depth; i++ {
		iw.w.WriteString("  ")
	}
}

func (iw *indentWriter) Write(p []byte) (int, error) {
	for _, c := range p {
		if iw.inStr {
			iw.w.WriteByte(c)
			switch {
			case iw.escape:
				iw.escape = false
			case c == '\\':
				iw.escape = true
			case c == '"':
				iw.inStr = false
			}
			continue
		}
		if iw.pending {
			iw.pending = false
			if c == '}' || c == ']' {
				iw.depth--
				iw.w.WriteByte(c)
				continue
			}
			iw.newline()
		}
		// JSON never carries a negative zero: the encoder writes -0.0 as
		// "-0", which is rewritten to "0" (any other number starting with
		// "-0" goes on with '.' or a digit).
		switch {
		case iw.negZero:
			iw.negZero = false
			if c == ',' || c == '}' || c == ']' || c == '\n' {
				iw.w.WriteByte('0')
			} else {
				iw.w.WriteString("-0")
			}
		case iw.minus:
			iw.minus = false
			if c == '0' {
				iw.negZero = true
				continue
			}
			iw.w.WriteByte('-')
		case c == '-':
			iw.minus = true
			continue
		}
		switch c {
		case '{', '[':
			iw.w.WriteByte(c)
			iw.depth++
			iw.pending = true
		case '}', ']':
			iw.depth--
			iw.newline()
			iw.w.WriteByte(c)
		case ',':
			iw.w.WriteByte(c)
			iw.newline()
		case ':':
			iw.w.WriteString(": ")
		case '"':
			iw.inStr = true
			iw.w.WriteByte(c)
		default:
			iw.w.WriteByte(c)
		}
	}
	return len(p), nil
}

// formatExtensions maps an output file's extension to the format it
// implies.
var formatExtensions = map[string]string{
	".json": "json", ".csv": "csv", ".html": "html", ".htm": "html", ".txt": "text",
}

// chooseFormat returns the output format of a command that writes one of
// formats (the first is the default): the --format value given, checked
// against formats; else the one implied by the extension of the -o file
// (x.json, x.csv, x.html); else the default. An extension that implies a
// format the command does not write is refused rather than ignored, so a
// file named x.csv never holds a table. A text report is "text"; for the
// commands whose text is a table, ".txt" means "table".
func chooseFormat(given, path string, formats ...string) (string, error) {
	has := func(f string) bool {
		for _, g := range formats {
			if g == f {
				return true
			}
		}
		return false
	}
	if given != "" {
		if !has(given) {
			return "", fmt.Errorf("--format %s: give %s", given, orList(formats))
		}
		return given, nil
	}
	if isStdout(path) {
		return formats[0], nil
	}
	ext := strings.ToLower(filepath.Ext(path))
	f, ok := formatExtensions[ext]
	if f == "text" && !has("text") {
		f = "table"
	}
	switch {
	case !ok:
		return formats[0], nil
	case has(f):
		return f, nil
	}
	return "", fmt.Errorf("-o %s: this command writes %s, not %s; give --format or another file name", path, orList(formats), f)
}

// orList writes "a", "a or b", "a, b or c".
func orList(items []string) string {
	if len(items) <= 1 {
		return strings.Join(items, "")
	}
	return strings.Join(items[:len(items)-1], ", ") + " or " + items[len(items)-1]
}

// startOutput is the first step of every command that prints: it settles
// *format (chooseFormat, from the flag or the extension of outputs[0],
// the -o file) and checks every output path against the inputs
// (checkOutputs), before any analysis runs.
func startOutput(format *string, inputs, outputs []string, formats ...string) error {
	f, err := chooseFormat(*format, outputs[0], formats...)
	if err != nil {
		return err
	}
	*format = f
	return checkOutputs(inputs, outputs...)
}
