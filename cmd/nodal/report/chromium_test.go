package report

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"nodal/cmd/nodal/internal/headless"
)

// probeScript is added to a test copy of the report only (the report
// itself has no script): it writes the rendered size of every inline plot
// into the DOM, which --dump-dom then prints.
const probeScript = `<script>
(function () {
  var out = [];
  document.querySelectorAll('figure > svg').forEach(function (s) {
    var r = s.getBoundingClientRect();
    out.push(Math.round(r.width) + 'x' + Math.round(r.height));
  });
  var p = document.createElement('pre');
  p.id = 'nodal-probe';
  p.textContent = 'plots:' + out.join(',') + ';';
  document.body.appendChild(p);
})();
</script>
`

// dumpDOM loads path in headless Chromium and returns the serialised DOM
// and Chromium's log (stderr), where console messages appear as
// "...:CONSOLE(line)] ..." lines. A launch that fails (the process exits
// with an error or prints no DOM) is retried by headless.Launch, which
// skips the test with the reason when every attempt fails.
func dumpDOM(t *testing.T, path string) (dom, log string) {
	t.Helper()
	return dumpDOMWith(t, headless.ChromiumPath, path)
}

// dumpDOMWith is dumpDOM with the browser binary given.
func dumpDOMWith(t *testing.T, browser, path string) (dom, log string) {
	t.Helper()
	type page struct{ dom, log string }
	p := headless.Launch(t, func() (page, string, error) {
		dom, log, err := runChromium(t, browser, path)
		return page{dom, log}, log, err
	})
	return p.dom, p.log
}

// runChromium is one launch of the headless browser on path.
func runChromium(t *testing.T, browser, path string) (dom, log string, err error) {
	ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
	defer cancel()
	args := append(headless.Flags(t.TempDir()), "--enable-logging=stderr", "--v=0",
		"--window-size=1200,900", "--dump-dom", "file://"+path)
	cmd := exec.CommandContext(ctx, browser, args...)
	var stdout, stderr strings.Builder
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		return "", stderr.String(), err
	}
	if !strings.Contains(stdout.String(), "<html") {
		return "", stderr.String(), fmt.Errorf("no DOM printed")
	}
	return stdout.String(), stderr.String(), nil
}

// consoleLines returns Chromium's log lines that carry page console
// output or uncaught errors.
func consoleLines(log string) []string {
	var out []string
	for _, l := range strings.Split(log, "\n") {
		if strings.Contains(l, ":CONSOLE") || strings.Contains(l, "Uncaught") {
			out = append(out, l)
		}
	}
	return out
}

var probeResult = regexp.MustCompile(`plots:([0-9x,]*);`)

// TestChromiumRendersReport opens the report in headless Chromium and
// checks that the page logs no console message or error and that every
// inline plot is laid out with a non-zero size. A control page that does
// log an error proves the console check can fail.
func TestChromiumRendersReport(t *testing.T) {
	headless.Require(t, headless.ChromiumPath)
	dir := t.TempDir()
	page := render(t, demoData(t))
	probe := strings.Replace(page, "</body>", probeScript+"</body>", 1)
	path := filepath.Join(dir, "report.html")
	if err := os.WriteFile(path, []byte(probe), 0o644); err != nil {
		t.Fatal(err)
	}
	dom, log := dumpDOM(t, path)
	if lines := consoleLines(log); len(lines) > 0 {
		t.Errorf("console output while rendering:\n%s", strings.Join(lines, "\n"))
	}
	m := probeResult.FindStringSubmatch(dom)
	if m == nil {
		t.Fatalf("probe did not run; DOM tail: %.300s", dom[max(0, len(dom)-300):])
	}
	sizes := strings.Split(m[1], ",")
	t.Logf("plot sizes (px): %s", m[1])
	if want := strings.Count(page, "<figure><svg"); len(sizes) != want || want != 5 {
		t.Fatalf("%d plots laid out (%q), %d in the page, want 5", len(sizes), m[1], want)
	}
	for i, s := range sizes {
		wh := strings.Split(s, "x")
		w, _ := strconv.Atoi(wh[0])
		h, _ := strconv.Atoi(wh[1])
		if w <= 0 || h <= 0 {
			t.Errorf("plot %d has size %s", i+1, s)
		}
		if w > 1200 {
			t.Errorf("plot %d is %d px wide, wider than the window", i+1, w)
		}
	}
	if !strings.Contains(dom, "Tone stage low-pass") || !strings.Contains(dom, SafetyNote) {
		t.Error("rendered DOM lacks the title or the safety note")
	}

	// control: the same check must see a page's console error
	bad := filepath.Join(dir, "control.html")
	if err := os.WriteFile(bad, []byte(`<!DOCTYPE html><html><body><script>console.error("nodal control");</script></body></html>`), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, log := dumpDOM(t, bad); len(consoleLines(log)) == 0 {
		t.Errorf("console check did not see the control page's error; log:\n%s", log)
	}
}

// TestDumpDOMRetriesFailedLaunch runs dumpDOMWith on a stand-in browser
// that fails to start once (as Chromium does when it cannot fork) and then
// prints a page: the launch is retried and the page returned.
func TestDumpDOMRetriesFailedLaunch(t *testing.T) {
	dir := t.TempDir()
	count := filepath.Join(dir, "launches")
	fake := filepath.Join(dir, "browser")
	script := "#!/bin/sh\necho x >> " + count + "\n" +
		"if [ $(wc -l < " + count + ") -lt 2 ]; then echo 'Zygote could not fork' >&2; exit 1; fi\n" +
		"echo '<html><body>ok</body></html>'\n"
	if err := os.WriteFile(fake, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	dom, _ := dumpDOMWith(t, fake, "/nowhere.html")
	b, _ := os.ReadFile(count)
	if !strings.Contains(dom, "ok") || strings.Count(string(b), "x") != 2 {
		t.Errorf("dom %q after %d launches; want the page on the second", dom, strings.Count(string(b), "x"))
	}
}
